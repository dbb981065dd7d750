// The `moonwright` build without MPI: surveys always run on threads.
#include "tools/survey_mpi.hpp"

namespace moonwright::cli {

std::optional<int> run_survey_mpi(const survey_request&, bool) {
    return std::nullopt;
}

} // namespace moonwright::cli
