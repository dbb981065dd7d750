// The HDF5 layout of a run's results (documented in docs/results.md): the design, the bodies,
// sampled elements with envelopes, conservation errors, MEGNO, closest approaches, events,
// the verdict and run metadata; plus the checkpoint a killed run resumes from.
#pragma once

#include "engine/design.hpp"
#include "engine/run_driver.hpp"
#include "engine/run_outcome.hpp"

#include <string>
#include <vector>

namespace moonwright {

/// Facts about the run that are not in the driver.
struct run_metadata {
    std::string version = "0.1.0";
    std::uint64_t seed = 1;    ///< seed used to resolve the design (drawn angles) and MEGNO
    double wall_time_s = 0;    ///< wall-clock time spent so far
    std::string design_format; ///< "toml" or "json"
};

/// Writes the whole result file atomically: a temporary file next to `path` renamed over it,
/// so `path` is always either absent, the previous complete file, or the new complete file.
/// With `with_checkpoint` the file also holds /checkpoint for `moonwright run --resume`.
/// Throws io_error when it cannot write.
void write_run_file(const std::string& path, const design& d, const run_driver& run,
                    const run_metadata& meta, const verdict* final_verdict, bool with_checkpoint);

/// What a result file with a checkpoint holds to rebuild its run.
struct run_resume_data {
    design design_;
    run_options options_;
    run_metadata meta_;
    std::vector<double> checkpoint_;
    std::vector<run_sample> samples_;
    std::vector<run_event> events_;
};
/// Reads a result file written with a checkpoint. Throws input_error when the file has none.
run_resume_data read_run_resume(const std::string& path);

} // namespace moonwright
