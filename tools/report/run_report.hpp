// The report page of a `moonwright run` result: verdict, design with derived quantities and
// check findings, figures of the run (elements, closest approaches, orbits, MEGNO, energy
// error), the event table and the run metadata. Layout of the input: docs/results.md.
#pragma once

#include "engine/result_file.hpp"
#include "tools/report/report_page.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace moonwright::report {

/// One body of /bodies (SI).
struct run_body {
    std::string name, kind;
    int parent = -1;
    double mass_kg = 0, radius_m = 0, density_kg_m3 = 0;
};

/// One row of /pairs: closest approach of a sibling pair (mutual_hill_m > 0) or of a body to its
/// parent (mutual_hill_m == 0).
struct run_pair {
    int a = -1, b = -1;
    std::string name_a, name_b;
    double min_distance_m = 0, t_s = 0, mutual_hill_m = 0;
};

/// One row of /events.
struct run_event_row {
    double t_s = 0;
    std::string kind;
    int body = -1, other = -1;
    std::string body_name, other_name;
    double distance_m = 0, threshold_m = 0;
    std::string detail;
};

/// Everything the run page shows, read from a result file (SI units throughout).
struct run_result {
    std::string path; ///< the file it was read from (for the footer)
    std::string design_text, design_format, design_source;
    std::vector<run_body> bodies;
    std::size_t samples = 0; ///< K rows of every series
    std::vector<double> t_s; ///< K sample times [s]
    /// K x n, row-major (one column per body): a [m], e [1], i [rad], node/peri [rad] and the
    /// envelopes since the previous sample.
    std::vector<double> a, e, i, node, peri, a_min, a_max, e_min, e_max, i_min, i_max;
    std::vector<double> energy_error, megno, mean_megno; ///< K values each
    std::vector<run_pair> pairs;
    std::vector<run_event_row> events;
    // /run attributes.
    std::string command, version, integrator, reference_body;
    double step_s = 0, span_s = 0, simulated_s = 0, wall_time_s = 0, reference_period_s = 0;
    double close_approach_hill = 1, escape_hill = 3, energy_failure = 1e-2;
    std::uint64_t seed = 1;
    bool megno_on = false, finished = false, continue_after_event = false;
    // /verdict attributes (absent in an unfinished run's checkpoint file).
    std::optional<std::string> verdict;
    std::string headline;
    std::vector<std::string> reasons;
    double max_energy_error = 0;
    std::optional<double> verdict_mean_megno, lyapunov_time_s;

    /// Element value of body `body` at sample `k` from one of the K x n arrays.
    [[nodiscard]] double at(const std::vector<double>& series, std::size_t k,
                            std::size_t body) const {
        return series[k * bodies.size() + body];
    }
};

/// Reads a run result. Throws input_error naming the file and the missing or malformed part
/// when the file is not a complete run result (HDF5 read failures become input_error too).
[[nodiscard]] run_result read_run_result(const result_file& f);

/// Builds the page (figures rendered as PNG with PLplot). The design stored in the result is
/// checked again (parse, resolve with the stored seed, run_check) for the derived quantities
/// and findings; a design that no longer loads is reported on the page, not thrown.
/// Throws io_error when a figure cannot be drawn.
[[nodiscard]] report_page build_run_page(const run_result& r);

} // namespace moonwright::report
