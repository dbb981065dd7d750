// The report page of a `moonwright tides` result: the fates in plain words, the a(t) figure, the
// fates table and the spin-axis precession numbers. Layout of the input: docs/tides.md.
#pragma once

#include "engine/result_file.hpp"
#include "engine/tides_report.hpp"
#include "tools/report/report_page.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace moonwright::report {

/// One spin axis as stored (rad/s, rad).
struct stored_spin_axis {
    std::string planet;
    double alpha_rad_s = 0, alpha_no_moons_rad_s = 0, rate_rad_s = 0, rate_no_moons_rad_s = 0;
    double obliquity_rad = 0;
};

/// A stored tides result. The fates and precession numbers are the stored ones; `rerun` is the
/// report computed again from /design/text with the stored seed, model, span and sample count
/// (for the a(t) figure, which needs the moons' limits that the file does not hold).
struct stored_tides {
    std::string path, design_text, version, options, system, model, span_from, notes;
    std::uint64_t seed = 0;
    double span_s = 0;
    std::vector<tidal_fate_event> fates;
    std::vector<stored_spin_axis> spin_axes;
    std::optional<tides_report> rerun;
    std::string rerun_problem; ///< why the design could not be evolved again (empty: it was)
};

/// Reads a tides result and evolves its design again for the figure. Throws input_error naming
/// the file and the missing or malformed part (HDF5 read failures become input_error too); a
/// design that no longer evolves is reported on the page, not thrown.
[[nodiscard]] stored_tides read_tides_result(const result_file& f);

/// Builds the page (figure rendered as PNG with PLplot). Throws io_error when the figure cannot
/// be drawn.
[[nodiscard]] report_page build_tides_page(const stored_tides& t);

} // namespace moonwright::report
