// The report page of a `moonwright capture` result: capture and keep probabilities with their
// Wilson intervals, a histogram of capture durations, a scatter of final a-e, the outcome counts
// and the run metadata. Layout of the input: docs/capture.md.
#pragma once

#include "engine/result_file.hpp"
#include "tools/report/report_page.hpp"

#include <cstdint>
#include <string>
#include <vector>

namespace moonwright::report {

/// What the capture page shows, read from a result file (SI unless said).
struct stored_capture {
    std::string path, version, design_name, planet, mechanism, integrator, interval;
    std::string intruder, pair, envelope; ///< the specs as given
    std::uint64_t seed = 1;
    std::int64_t trials_requested = 0, trials = 0, captured = 0, kept = 0;
    double capture_p = 0, capture_lo = 0, capture_hi = 0;
    double keep_p = 0, keep_lo = 0, keep_hi = 0;
    std::int64_t impacts = 0, moon_collisions = 0, pair_splits = 0, exchanges = 0;
    std::int64_t kept_prograde = 0, kept_retrograde = 0, moons_hit = 0, moons_unbound = 0;
    double span_s = 0, hill_radius_m = 0, planet_radius_m = 0, planet_period_s = 0;
    double wall_time_s = 0;
    bool finished = false;
    std::vector<double> durations_s;           ///< every capture episode's duration [s]
    std::vector<double> final_a_rh, final_e;   ///< kept members' final a [RH] and e
    std::vector<double> final_inclination_deg; ///< their inclination to the planet's orbit [deg]
};

/// Reads a capture result. Throws input_error naming the file and the missing or malformed part
/// (HDF5 read failures become input_error too).
[[nodiscard]] stored_capture read_capture_result(const result_file& f);

/// Builds the page (figures rendered as PNG with PLplot). Throws io_error when a figure cannot
/// be drawn.
[[nodiscard]] report_page build_capture_page(const stored_capture& c);

} // namespace moonwright::report
