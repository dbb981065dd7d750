// A second-order system q'' = f(t, q, q') over n 3-vectors: what the adaptive integrators
// advance. The coordinates are the model's choice (e.g. moons relative to their parent).
#pragma once

#include <cstddef>
#include <functional>

namespace moonwright {

struct second_order_system {
    std::size_t n = 0; ///< number of 3-vectors; q, v and a each hold 3 n doubles
    /// Fills a[0 .. 3n) with the accelerations at time t for positions q and velocities v.
    std::function<void(double t, const double* q, const double* v, double* a)> acceleration;
    bool velocity_dependent = false; ///< true when acceleration reads v (tides, drag)
};

} // namespace moonwright
