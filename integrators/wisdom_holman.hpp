// The Wisdom–Holman map (Wisdom & Holman 1991, AJ 102, 1528) in hierarchical Jacobi
// coordinates (Beust 2003): Kepler drifts of every Jacobi orbit by the universal-variable
// solver, kicks from everything that is not Keplerian, kick–drift–kick, with an optional
// symplectic corrector (Wisdom, Holman & Touma 1996, Fields Inst. Commun. 10, 217).
#pragma once

#include "engine/force_variations.hpp"
#include "engine/forces.hpp"
#include "integrators/integrator.hpp"
#include "integrators/megno_accumulator.hpp"

#include <cstddef>
#include <memory>
#include <string_view>
#include <vector>

namespace moonwright {

struct wh_options {
    double step = 0.0; ///< [s]; 0 = automatic (wh_automatic_step)
    /// Automatic step: at most this fraction of the shortest Jacobi orbital period
    /// (1/20: common practice, no source).
    double period_fraction = 0.05;
    /// Automatic step: at most this fraction of the fastest pericentre passage time
    /// 2 pi sqrt(q^3 / (GM (1 + e))), the period of the circular orbit with the pericentre
    /// speed at q (the step must resolve the pericentre: Wisdom 2015, AJ 150, 127, from
    /// memory; the fraction 1/20 is common practice, no source).
    double pericentre_fraction = 0.05;
    /// Symplectic corrector order: 0 (off), 3, 5 or 7. Order p removes the error terms of
    /// first order in the perturbation through dt^(p-1), leaving O(eps dt^(p+1)) + O(eps^2 dt^2).
    int corrector_order = 0;
    /// The modified kick (after Wisdom, Holman & Touma 1996): every kick uses the interaction
    /// B - dt^2/24 sum_k |grad_k B|^2 / m_k' instead of B, which cancels the corrected map's
    /// O(eps^2 dt^2) error term +dt^2/24 {{A,B},B}; with a corrector of order p the error
    /// becomes O(eps dt^(p+1)) + O(eps^2 dt^4). Needs a corrector and position-dependent forces
    /// only. Costs one variation of the interaction per step (the force Jacobian applied to
    /// the kick's own acceleration), about as much again as the plain step.
    bool modified_kick = false;
};

/// The automatic step [s] for a parent-relative state: the smallest over Jacobi orbits of
/// period_fraction * period (bound orbits) and pericentre_fraction * pericentre passage time.
double wh_automatic_step(const jacobi_tree& tree, const double* rel_q, const double* rel_v,
                         double period_fraction, double pericentre_fraction);

/// The corrector coefficients b_i of Z(a_i, b_i), a_i = i * alpha (i = 1..k, k = (p - 1) / 2),
/// solved here from the first-order kernel (x/2) coth(x/2) of the kick–drift–kick map (Wisdom,
/// Holman & Touma 1996); the literature's tables use another alpha, any alpha is valid.
std::vector<double> wh_corrector_coefficients(int order, double alpha);

class wisdom_holman final : public integrator {
  public:
    /// Starts from the model's state (x_, v_, t_). Throws input_error for a bad option.
    wisdom_holman(const nbody_system& sys, std::vector<extra_force> extra = {},
                  wh_options options = {});
    wisdom_holman(const wisdom_holman&) = delete;
    wisdom_holman& operator=(const wisdom_holman&) = delete;

    [[nodiscard]] std::string_view name() const noexcept override { return "wh"; }
    [[nodiscard]] double time() const noexcept override { return t_; }
    [[nodiscard]] std::size_t steps() const noexcept override { return steps_; }
    [[nodiscard]] double step_size() const noexcept { return dt_; }
    /// One step of dt (kicks of consecutive steps are merged until the state is read).
    void step();
    /// Takes n whole steps of dt (no shortened step, so the map stays symplectic).
    void advance(std::size_t n);
    /// Fixed steps up to t_end; the last step is shortened to land on t_end exactly.
    void integrate(double t_end) override;
    void relative_state(std::vector<double>& q, std::vector<double>& v) override;
    void set_relative_state(double t, const std::vector<double>& q,
                            const std::vector<double>& v) override;
    [[nodiscard]] const force_model& forces() const noexcept override { return model_; }

    /// Starts the tangent map (Mikkola & Innanen 1999) on the mapping variables (Jacobi
    /// coordinates, before the symplectic corrector) from a deviation drawn from seed.
    bool enable_megno(std::uint64_t seed) override;
    [[nodiscard]] megno_reading megno() const override;
    /// The tangent vector in Jacobi coordinates (3 n each; empty when MEGNO is off).
    [[nodiscard]] const std::vector<double>& tangent_positions() const noexcept { return drj_; }
    [[nodiscard]] const std::vector<double>& tangent_velocities() const noexcept { return dvj_; }
    /// Replaces the tangent vector (Jacobi coordinates, 3 n each) and restarts the MEGNO sums
    /// at time(); MEGNO must be enabled. For tests and for chosen deviations.
    void set_tangent(const std::vector<double>& dr, const std::vector<double>& dv);
    /// The state in Jacobi mapping variables (positions, velocities; 3 n each), velocities
    /// lagging half a kick while a merged kick is pending.
    [[nodiscard]] const std::vector<double>& jacobi_positions() const noexcept { return rj_; }
    [[nodiscard]] const std::vector<double>& jacobi_velocities() const noexcept { return vj_; }
    /// Replaces the Jacobi mapping variables without any corrector or kick (for tests).
    void set_jacobi_state(const std::vector<double>& rj, const std::vector<double>& vj);
    /// Applies a pending merged half kick, so that jacobi_velocities() belong to time(); the
    /// next step() then kicks by half a step again. This moves the map off the trajectory of
    /// advance() by round-off; reading the state needs no synchronize() (observe()).
    void synchronize();
    /// Reads the map without moving it: makes the interaction at the current positions for the
    /// pending kick (the force evaluation the next step() makes anyway, which then finds it
    /// made) and returns the parent-relative positions [m] (3 per body) of the mapping
    /// variables at time(): the real positions when the corrector is off. A map read this way
    /// (or by relative_state(), which uses it) stays bitwise on the trajectory advance() takes.
    /// Valid until the map moves.
    [[nodiscard]] const std::vector<double>& observe();
    /// After observe(): the Jacobi velocities of the mapping variables at time() into out
    /// (3 n): jacobi_velocities() plus the pending half kick, bitwise what synchronize() would
    /// make them, without applying it.
    void synchronized_jacobi_velocities(double* out) const;
    /// After observe(): the pending half kick itself, for readers that form synchronized
    /// velocities one at a time: jacobi_velocities()[j] + step * acceleration[j] (3 n), bitwise
    /// as synchronized_jacobi_velocities(). acceleration is null when none is pending.
    struct half_kick {
        double step;
        const double* acceleration;
    };
    [[nodiscard]] half_kick pending_half_kick() const noexcept {
        if (!pending_half_kick_ || no_interaction_) return {0.0, nullptr};
        return {0.5 * dt_, options_.modified_kick ? mod_acc_.data() : acc_jac_.data()};
    }
    [[nodiscard]] std::vector<double> save_checkpoint() const override;
    void load_checkpoint(const std::vector<double>& data) override;

  private:
    void kick(double* r, double* v, double h, double t, bool tangent = false);
    /// Forces at Jacobi positions r (velocities v when they matter) at time t: fills rel_q_
    /// (rel_v_) and the Jacobi accelerations acc_jac_.
    void jacobi_accelerations(const double* r, const double* v, double t);
    /// Turns acc_jac_ (from jacobi_accelerations at r) into the interaction of every Jacobi
    /// orbit in place: the Keplerian part of each orbit removed.
    void form_interaction(const double* r);
    void drift(double* r, double* v, double h, bool tangent = false);
    void tangent_kick(double h, double t);
    /// The Jacobian of the Jacobi interaction accelerations at Jacobi positions rj (rel_q: the
    /// same in parent-relative form) applied to the Jacobi deviation dj; result in out (3 n).
    void interaction_variation(double t, const double* rel_q, const double* rj, const double* dj,
                               double* out);
    /// Adds the Jacobian of the removed Keplerian term G M r / r^3 of every Jacobi orbit at rj,
    /// G M [delta r / r^3 - 3 r (r . delta r) / r^5], applied to the deviation dj, to out.
    void add_kepler_variation(const double* rj, const double* dj, double* out) const;
    /// (da/dq) a of the interaction at Jacobi positions rj (3 n, into out), from scratch: the
    /// modified kick's extra acceleration over dt^2/12, for its tangent map.
    void modified_term(double t, const double* rj, double* out);
    /// The modified kick's share of the tangent kick: dvj_ += h dt^2/12 d[(da/dq) a]/dq drj_,
    /// by a central difference along drj_.
    void modified_tangent_kick(double h, double t);
    /// Fills mod_acc_ with the modified kick's interaction accelerations at rj_ (after kick()
    /// filled acc_jac_ and rel_q_ there).
    void modified_acceleration(double t);
    void start_tangent();
    [[noreturn]] void kepler_failure(std::size_t k) const;
    void apply_corrector(double* r, double* v, double sign);

    force_model model_;
    const jacobi_tree& tree_;
    wh_options options_;
    double dt_ = 0, t_ = 0;
    double t_carry_ = 0; ///< compensation of the summed time t_ (Kahan)
    std::size_t steps_ = 0;
    bool pending_half_kick_ = false; ///< velocities lag by half a kick (merged kicks)
    bool merge_kicks_ = true;
    bool no_interaction_ = false;  ///< two point masses: every kick is exactly zero
    std::vector<double> orbit_gm_; ///< kepler_gm of Jacobi orbits 1..n-1, for the batched drift
    std::vector<double> rj_, vj_;  ///< Jacobi state (mapping variables)
    std::vector<double> rel_q_, rel_v_, acc_, acc_jac_; ///< scratch, no allocation per step
    /// acc_jac_ and rel_q_ hold the interaction at the current rj_ and time kick_cache_t_:
    /// reading the state (observe()) and the next kick then share one force evaluation.
    /// Cleared whenever rj_ moves or the scratch is reused.
    bool kick_cache_valid_ = false;
    double kick_cache_t_ = 0;
    std::vector<double> corrector_a_, corrector_b_;
    /// Modified kick: the interaction acceleration a - dt^2/12 (da/dq) a at rj_ (valid with
    /// the kick cache), and scratch for its variation.
    std::vector<double> mod_acc_, mod_dq_, mod_da_, mod_da_jac_;
    double mod_acc_dt_ = 0; ///< the step mod_acc_ was made for (0: stale)
    /// Scratch of modified_term and modified_tangent_kick (MEGNO with the modified kick).
    std::vector<double> mt_q_, mt_rel_q_, mt_acc_, mt_acc_jac_, mt_aint_, mt_plus_, mt_minus_;
    // MEGNO (allocated by enable_megno only, so the map does no extra work without it).
    bool megno_on_ = false;
    std::unique_ptr<force_variations> variations_;
    megno_scales scales_;
    megno_accumulator megno_;
    std::vector<double> drj_, dvj_;                         ///< tangent vector (Jacobi)
    std::vector<double> drel_q_, drel_v_, dacc_, dacc_jac_; ///< tangent scratch
};

} // namespace moonwright
