// Controlled Boost.Odeint steppers (Bulirsch–Stoer, Runge–Kutta–Fehlberg 7(8)) on the same
// second-order systems as the Gauss–Radau integrator.
#pragma once

#include "integrators/second_order_system.hpp"

#include <cstddef>
#include <memory>
#include <vector>

namespace moonwright {

enum class odeint_method { bulirsch_stoer, rkf78 };

struct odeint_options {
    double abs_tolerance = 1e-12; ///< absolute error per step, in the units of q and v
    double rel_tolerance = 1e-12; ///< relative error per step (dimensionless)
    double initial_step = 0.0;    ///< [s]; 0 = estimate from the system
    /// rkf78 only: > 0 turns the step control off and takes steps of this size [s] (the
    /// 8th-order solution is propagated); for convergence tests. Must be 0 for bulirsch_stoer.
    double fixed_step = 0.0;
};

/// Integrates q'' = f(t, q, v) as the first-order system y = (q, v), y' = (v, f), with a
/// Boost.Odeint stepper. Odeint stays inside odeint_steppers.cpp (slow to compile).
class odeint_integrator {
  public:
    /// Throws std::invalid_argument for an empty system or fixed_step with bulirsch_stoer.
    odeint_integrator(second_order_system system, odeint_method method,
                      odeint_options options = {});
    ~odeint_integrator();
    odeint_integrator(odeint_integrator&&) noexcept;
    odeint_integrator& operator=(odeint_integrator&&) noexcept;
    odeint_integrator(const odeint_integrator&) = delete;
    odeint_integrator& operator=(const odeint_integrator&) = delete;

    /// Advances to exactly t_end; returns the number of accepted steps. Throws
    /// numerical_error when odeint gives up (too many rejections) or the state goes non-finite.
    std::size_t integrate(double& t, std::vector<double>& q, std::vector<double>& v, double t_end);
    /// The step odeint proposed last [s] (the next integrate call starts with it).
    [[nodiscard]] double next_step() const noexcept;
    /// Calls of system.acceleration so far.
    [[nodiscard]] std::size_t evaluations() const noexcept;

  private:
    struct impl;
    std::unique_ptr<impl> impl_;
};

} // namespace moonwright
