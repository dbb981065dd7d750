// Controlled Boost.Odeint steppers (Bulirsch–Stoer, Runge–Kutta–Fehlberg 7(8)) on the same
// second-order systems as the Gauss–Radau integrator.
#pragma once

#include "integrators/second_order_system.hpp"

#include <cstddef>
#include <vector>

namespace moonwright {

enum class odeint_method { bulirsch_stoer, rkf78 };

struct odeint_options {
    double abs_tolerance = 1e-12;
    double rel_tolerance = 1e-12;
    double initial_step = 0.0; ///< [s]; 0 = estimate from the system
};

class odeint_integrator {
public:
    odeint_integrator(second_order_system system, odeint_method method, odeint_options options = {});
    /// Advances to exactly t_end; returns the number of accepted steps.
    std::size_t integrate(double& t, std::vector<double>& q, std::vector<double>& v, double t_end);
    // (implementation-defined private state)
};

} // namespace moonwright
