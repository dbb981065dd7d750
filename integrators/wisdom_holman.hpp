// The Wisdom–Holman map (Wisdom & Holman 1991, AJ 102, 1528) in hierarchical Jacobi
// coordinates (Beust 2003): Kepler drifts of every Jacobi orbit by the universal-variable
// solver, kicks from everything that is not Keplerian, kick–drift–kick, with an optional
// symplectic corrector (Wisdom, Holman & Touma 1996, Fields Inst. Commun. 10, 217).
#pragma once

#include "engine/forces.hpp"
#include "integrators/integrator.hpp"

#include <cstddef>
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

  private:
    void kick(double* r, double* v, double h, double t);
    void drift(double* r, double* v, double h);
    void synchronize();
    void apply_corrector(double* r, double* v, double sign);

    force_model model_;
    const jacobi_tree& tree_;
    wh_options options_;
    double dt_ = 0, t_ = 0;
    std::size_t steps_ = 0;
    bool pending_half_kick_ = false; ///< velocities lag by half a kick (merged kicks)
    bool merge_kicks_ = true;
    std::vector<double> rj_, vj_;                       ///< Jacobi state (mapping variables)
    std::vector<double> rel_q_, rel_v_, acc_, acc_jac_; ///< scratch, no allocation per step
    std::vector<double> corrector_a_, corrector_b_;
};

} // namespace moonwright
