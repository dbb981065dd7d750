// The MPI back end of `moonwright survey` (moonwright-mpi): rank 0 reads designs, hands out
// tasks one at a time to ranks that ask (dynamic load balancing) and is the single writer.
#pragma once

#include "engine/survey_runner.hpp"

#include <optional>

namespace moonwright::cli {

/// Runs the survey over MPI ranks when the process was started with more than one rank, and
/// returns the exit code; returns nothing (the caller runs threads) with one rank or without
/// MPI support in this build.
std::optional<int> run_survey_mpi(const survey_request& request, bool quiet);

} // namespace moonwright::cli
