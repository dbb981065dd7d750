// One interface for every integrator of an N-body model, and a registry that makes them by
// name ("wh" now; "radau", "bs", "rkf78" are wired by the merge of the adaptive integrators).
#pragma once

#include "engine/forces.hpp"
#include "engine/nbody_system.hpp"

#include <cstddef>
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace moonwright {

/// Options shared by all integrators; each uses the fields that apply to it.
struct integrator_options {
    double step = 0.0;                 ///< fixed step [s] (wh) or first step (adaptive); 0 = auto
    double period_fraction = 0.05;     ///< wh auto step: fraction of the shortest period
    double pericentre_fraction = 0.05; ///< wh auto step: fraction of the fastest pericentre passage
    int corrector_order = 0;           ///< wh symplectic corrector: 0 (off), 3, 5 or 7
    double tolerance = 1e-12;          ///< adaptive integrators: relative accuracy per step
};

/// An integrator advancing one model. State accessors use parent-relative coordinates (each
/// body relative to its parent, the root inertial: the forces.hpp convention), 3 n doubles.
class integrator {
  public:
    virtual ~integrator() = default;
    /// The registry name ("wh", ...).
    [[nodiscard]] virtual std::string_view name() const noexcept = 0;
    /// Current time [s].
    [[nodiscard]] virtual double time() const noexcept = 0;
    /// Steps taken so far.
    [[nodiscard]] virtual std::size_t steps() const noexcept = 0;
    /// Advances to exactly t_end [s] (t_end >= time()).
    virtual void integrate(double t_end) = 0;
    /// The current parent-relative state (positions [m], velocities [m/s]).
    virtual void relative_state(std::vector<double>& q, std::vector<double>& v) = 0;
    /// Replaces the state (time [s], parent-relative positions and velocities).
    virtual void set_relative_state(double t, const std::vector<double>& q,
                                    const std::vector<double>& v) = 0;
    /// The force model (to evaluate energies and elements on the state).
    [[nodiscard]] virtual const force_model& forces() const noexcept = 0;
};

/// Makes an integrator for a model (starting from the model's state x_, v_, t_).
using integrator_factory = std::function<std::unique_ptr<integrator>(
    const nbody_system&, std::vector<extra_force>, const integrator_options&)>;

/// Adds or replaces a named factory. Hook for the adaptive integrators: once
/// integrators/gauss_radau.hpp and odeint_steppers.hpp are implemented, wrap them in a class
/// deriving from `integrator` that integrates relative_system(...) (engine/forces.hpp) and
/// register it as "radau", "bs" and "rkf78" in integrator.cpp's built-in table.
void register_integrator(const std::string& name, integrator_factory factory);
/// Names of the registered integrators, sorted.
std::vector<std::string> integrator_names();
/// Makes the integrator registered under `name`; throws input_error listing the known names
/// when there is none.
std::unique_ptr<integrator> make_integrator(const std::string& name, const nbody_system& sys,
                                            std::vector<extra_force> extra = {},
                                            const integrator_options& options = {});

} // namespace moonwright
