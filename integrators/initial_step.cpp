// A first step for an adaptive integrator, estimated from the state and its accelerations.
#include "integrators/initial_step.hpp"

#include <cmath>
#include <limits>

namespace moonwright {

double estimate_initial_step(std::size_t n, const double* q, const double* v, const double* a) {
    double shortest = std::numeric_limits<double>::infinity();
    const auto norm = [](const double* x) {
        return std::sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);
    };
    for (std::size_t i = 0; i < n; ++i) {
        const double an = norm(a + 3 * i);
        if (!(an > 0.0) || !std::isfinite(an)) continue;
        const double qn = norm(q + 3 * i);
        const double vn = norm(v + 3 * i);
        if (qn > 0.0) shortest = std::fmin(shortest, std::sqrt(qn / an));
        if (vn > 0.0) shortest = std::fmin(shortest, vn / an);
    }
    if (!std::isfinite(shortest)) return 1.0;
    return 0.01 * shortest;
}

} // namespace moonwright
