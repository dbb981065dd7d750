// The report page of a `moonwright map` result: the empirical edge against the published limit
// (or the surviving fraction), the survival and MEGNO figures, the axes, the design and the run
// metadata. Layout of the input: docs/map.md.
#pragma once

#include "engine/result_file.hpp"
#include "engine/stability_map.hpp"
#include "tools/report/report_page.hpp"

#include <cstdint>
#include <string>

namespace moonwright::report {

/// A stored map with what the page needs besides the grids.
struct stored_map {
    std::string path; ///< the file it was read from (for the footer)
    map_result result;
    std::string design_text, design_name, version, integrator;
    std::uint64_t seed = 1;
    std::int64_t jobs = 1;
    double orbits = 0;
    std::string event_legend; ///< /map/first_event@legend ("-1 none, 0 close_approach, ...")
    /// Bodies of the stored design, resolved again with the stored seed: "name (kind)".
    std::vector<std::string> bodies;
};

/// Reads a map result. The axes are parsed again from their stored specifications against the
/// stored design, and the analytic references (map_references_for) are rebuilt from it; the
/// stored reference values replace the rebuilt ones where present. Throws input_error naming
/// the file and the missing or malformed part (HDF5 read failures become input_error too).
[[nodiscard]] stored_map read_map_result(const result_file& f);

/// Builds the page (figures rendered as PNG with PLplot). Throws io_error when a figure cannot
/// be drawn.
[[nodiscard]] report_page build_map_page(const stored_map& m);

} // namespace moonwright::report
