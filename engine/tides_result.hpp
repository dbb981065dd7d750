// Writes a tides report to an HDF5 result file: the design text, the run's attributes, the time
// series, the fates and the spin-axis numbers (layout: docs/tides.md).
#pragma once

#include "engine/tides_report.hpp"

#include <cstdint>
#include <string>

namespace moonwright {

/// What the run was, for the /run group.
struct tides_run_info {
    std::string design_text;  ///< the original design file (design::source_text)
    std::string version;      ///< moonwright version, e.g. "0.1.0"
    std::uint64_t seed = 0;   ///< the seed the design was resolved with
    std::string command_line; ///< the options in words ("--span 2Gyr --model q"), may be empty
};

/// Writes the report to `path` through `path.partial`, renamed when complete, so a failure
/// leaves no file (the partial one is removed). Throws io_error when it cannot write.
/// Every dataset carries `units` and `description`.
void write_tides_file(const std::string& path, const tides_report& r, const tides_run_info& info);

} // namespace moonwright
