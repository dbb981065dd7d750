// One interface for every integrator of an N-body model, and a registry that makes them by
// name: "wh" (Wisdom–Holman map), "radau" (Gauss–Radau), "bs" (Bulirsch–Stoer), "rkf78".
#pragma once

#include "engine/forces.hpp"
#include "engine/nbody_system.hpp"

#include <cmath>
#include <cstddef>
#include <cstdint>
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
    bool modified_kick = false;        ///< wh: the modified kick (wh_options::modified_kick)
    double tolerance = 1e-12;          ///< bs, rkf78: relative accuracy per step
    double radau_epsilon = 1e-9;       ///< radau: step-control parameter (1e-9: machine precision)
};

/// MEGNO (Cincotta & Simó 2000) read off the tangent equations: Y(t) and its running mean.
struct megno_reading {
    double y = std::nan("");      ///< Y(t)
    double mean_y = std::nan(""); ///< <Y>(t), the time average of Y since enable_megno
    double log_growth = 0;        ///< ln(|delta(t)| / |delta(0)|), for the Lyapunov exponent
    double t0 = 0;                ///< time [s] at which the tangent equations started
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

    /// Starts the tangent (variational) equations for MEGNO from a deviation vector drawn from
    /// `seed`, advanced by this integrator's own scheme (for the Wisdom–Holman map its tangent
    /// map, Mikkola & Innanen 1999). Returns false when this integrator cannot.
    virtual bool enable_megno(std::uint64_t seed) {
        (void)seed;
        return false;
    }
    /// The MEGNO reading at time(); NaN fields when MEGNO is not enabled.
    [[nodiscard]] virtual megno_reading megno() const { return {}; }

    /// Everything needed to continue exactly (bitwise) as if never stopped: state, pending
    /// half-kicks, predictor values, compensated-sum residues, step sizes, counters, tangent
    /// vectors and MEGNO sums. Opaque to callers; restore with load_checkpoint on an
    /// integrator made with the same name, model and options. The base class has none: it
    /// throws numerical_error, so a run without checkpoint support says so instead of
    /// resuming inexactly.
    [[nodiscard]] virtual std::vector<double> save_checkpoint() const;
    /// Restores what save_checkpoint wrote; throws input_error when it does not fit.
    virtual void load_checkpoint(const std::vector<double>& data);
};

/// Makes an integrator for a model (starting from the model's state x_, v_, t_).
using integrator_factory = std::function<std::unique_ptr<integrator>(
    const nbody_system&, std::vector<extra_force>, const integrator_options&)>;

/// Adds or replaces a named factory (the built-in ones are in integrator.cpp).
void register_integrator(const std::string& name, integrator_factory factory);
/// Names of the registered integrators, sorted.
std::vector<std::string> integrator_names();
/// Makes the integrator registered under `name`; throws input_error listing the known names
/// when there is none.
std::unique_ptr<integrator> make_integrator(const std::string& name, const nbody_system& sys,
                                            std::vector<extra_force> extra = {},
                                            const integrator_options& options = {});

} // namespace moonwright
