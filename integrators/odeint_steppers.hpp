// Controlled Boost.Odeint steppers (Bulirsch–Stoer, Runge–Kutta–Fehlberg 7(8)) on the same
// second-order systems as the Gauss–Radau integrator.
#pragma once

#include "integrators/second_order_system.hpp"

#include <cstddef>
#include <functional>
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
    /// Called by integrate() after every accepted step with the time [s] and the state (3 n
    /// each); the observer may change the state (e.g. rescale a tangent vector): neither
    /// stepper keeps state values between steps.
    void set_step_observer(std::function<void(double t, double* q, double* v)> observer);
    /// Appends what the next integrate call reads: the proposed step and the evaluation count.
    /// Bulirsch–Stoer's order and step-history state is reset at the start of every integrate
    /// call (it was in practice anyway: odeint resets it whenever the step passed differs from
    /// the one it proposed, as after a shortened last step), so a resumed run is bitwise equal.
    void save_state(std::vector<double>& out) const;
    /// Restores save_state's values from data[pos ...), advancing pos; false when too short.
    bool load_state(const std::vector<double>& data, std::size_t& pos);

  private:
    struct impl;
    std::unique_ptr<impl> impl_;
};

} // namespace moonwright
