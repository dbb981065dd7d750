// A first step for an adaptive integrator, estimated from the state and its accelerations.
#pragma once

#include <cstddef>

namespace moonwright {

/// A first step [s] for a second-order system of n 3-vectors with positions q [m],
/// velocities v [m/s] and accelerations a [m/s^2]: 1% of the shortest of the per-vector time
/// scales sqrt(|q_i|/|a_i|) and |v_i|/|a_i| (common practice, no source; the adaptive control
/// then grows or shrinks it). Returns 1 s when every vector has zero acceleration.
double estimate_initial_step(std::size_t n, const double* q, const double* v, const double* a);

} // namespace moonwright
