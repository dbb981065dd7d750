// Writing a capture experiment to HDF5: the per-trial record table, the summary attributes and
// the figure-ready arrays (capture durations, final a-e) under /run, /capture and /figures.
#pragma once

#include "engine/capture_experiment.hpp"

#include <string>

namespace moonwright {

/// What the file records about how the experiment was asked for.
struct capture_file_meta {
    std::string version = "0.1.0";
    std::string intruder_text, pair_text, envelope_text; ///< the specs as given
    double wall_time_s = 0;
};

/// Writes the whole result (truncating `path`); the layout is in docs/capture.md. Throws
/// io_error when the file cannot be written.
void write_capture_file(const std::string& path, const design& d, const capture_options& o,
                        const capture_result& r, const capture_file_meta& meta);

} // namespace moonwright
