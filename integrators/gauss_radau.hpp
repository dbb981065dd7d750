// 15th-order Gauss–Radau integrator with adaptive steps (Everhart 1985) and compensated
// summation, for close encounters, captures and reference solutions.
#pragma once

#include "integrators/second_order_system.hpp"

#include <cstddef>
#include <vector>

namespace moonwright {

struct gauss_radau_options {
    double epsilon = 1e-9;       ///< step-control accuracy parameter (dimensionless)
    double initial_step = 0.0;   ///< first step [s]; 0 = estimate from the system
    double min_step = 0.0;       ///< smallest step [s] before giving up (numerical_error)
};

class gauss_radau {
public:
    gauss_radau(second_order_system system, gauss_radau_options options = {});
    /// Takes one adaptive step from t (q, v hold 3n doubles each); returns the step taken [s].
    double step(double& t, std::vector<double>& q, std::vector<double>& v);
    /// Advances to exactly t_end (the last step is shortened); returns the number of steps.
    std::size_t integrate(double& t, std::vector<double>& q, std::vector<double>& v, double t_end);
    [[nodiscard]] double next_step() const noexcept;
    void set_next_step(double dt) noexcept;
    // (implementation-defined private state)
};

} // namespace moonwright
