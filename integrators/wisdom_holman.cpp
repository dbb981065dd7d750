// The Wisdom–Holman map in hierarchical Jacobi coordinates.
#include "integrators/wisdom_holman.hpp"

#include "engine/constants.hpp"
#include "engine/error.hpp"
#include "engine/kepler_solver.hpp"
#include "engine/kepler_variation.hpp"
#include "integrators/checkpoint_data.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <limits>
#include <string>

namespace moonwright {

double wh_automatic_step(const jacobi_tree& tree, const double* rel_q, const double* rel_v,
                         double period_fraction, double pericentre_fraction) {
    const std::size_t n = tree.size();
    std::vector<double> rj(3 * n), vj(3 * n);
    tree.relative_to_jacobi(rel_q, rj.data());
    tree.relative_to_jacobi(rel_v, vj.data());
    double dt = std::numeric_limits<double>::infinity();
    for (std::size_t k = 1; k < n; ++k) {
        const double* r = &rj[3 * k];
        const double* v = &vj[3 * k];
        const double gm = tree.kepler_gm(k);
        const double rn = std::sqrt(r[0] * r[0] + r[1] * r[1] + r[2] * r[2]);
        const double v2 = v[0] * v[0] + v[1] * v[1] + v[2] * v[2];
        const double hx = r[1] * v[2] - r[2] * v[1], hy = r[2] * v[0] - r[0] * v[2],
                     hz = r[0] * v[1] - r[1] * v[0];
        const double p = (hx * hx + hy * hy + hz * hz) / gm; // semi-latus rectum
        const double inv_a = 2 / rn - v2 / gm;
        const double e = std::sqrt(std::max(0.0, 1 - p * inv_a));
        const double q = p / (1 + e);
        if (inv_a > 0) {
            const double a = 1 / inv_a;
            dt = std::min(dt, period_fraction * constants::two_pi * std::sqrt(a * a * a / gm));
        }
        dt = std::min(dt, pericentre_fraction * constants::two_pi *
                              std::sqrt(q * q * q / (gm * (1 + e))));
    }
    return dt;
}

std::vector<double> wh_corrector_coefficients(int order, double alpha) {
    if (order == 0) return {};
    const int k = (order - 1) / 2;
    // Kick–drift–kick to first order in the perturbation B has the effective interaction
    // (x/2) coth(x/2) B, x = dt L_A; (x/2)coth(x/2) - 1 = sum_m B_2m x^2m / (2m)! with the
    // Bernoulli numbers (1/12, -1/720, 1/30240, -1/1209600). The corrector generator must be
    // sum_m gamma_m dt x^(2m-1) B with these gamma; Z(a, b) contributes 2 b sinh(a x) B, so
    // sum_i 2 b_i a_i^(2m-1) / (2m-1)! = gamma_m for m = 1..k (Wisdom, Holman & Touma 1996).
    const double gamma[4] = {1.0 / 12, -1.0 / 720, 1.0 / 30240, -1.0 / 1209600};
    std::vector<double> m(static_cast<std::size_t>(k * (k + 1)));
    auto at = [&](int row, int col) -> double& {
        return m[static_cast<std::size_t>(row * (k + 1) + col)];
    };
    for (int row = 0; row < k; ++row) {
        const int p = 2 * row + 1;
        double fact = 1;
        for (int j = 2; j <= p; ++j) fact *= j;
        for (int col = 0; col < k; ++col) at(row, col) = 2 * std::pow((col + 1) * alpha, p) / fact;
        at(row, k) = gamma[row];
    }
    // Gaussian elimination with partial pivoting on the k x k system.
    for (int c = 0; c < k; ++c) {
        int piv = c;
        for (int r = c + 1; r < k; ++r) {
            if (std::abs(at(r, c)) > std::abs(at(piv, c))) piv = r;
        }
        for (int j = 0; j <= k; ++j) std::swap(at(c, j), at(piv, j));
        for (int r = 0; r < k; ++r) {
            if (r == c) continue;
            const double f = at(r, c) / at(c, c);
            for (int j = c; j <= k; ++j) at(r, j) -= f * at(c, j);
        }
    }
    std::vector<double> b(static_cast<std::size_t>(k));
    for (int r = 0; r < k; ++r) b[static_cast<std::size_t>(r)] = at(r, k) / at(r, r);
    return b;
}

namespace {
/// alpha of the corrector's a_i = i alpha (our choice; see wh_corrector_coefficients).
constexpr double corrector_alpha = 0.5;
/// Orientation of the corrector generator relative to the operator order used here.
constexpr double corrector_sign = 1.0;

/// The interaction acceleration of one Jacobi orbit (Wisdom & Holman 1991, in Beust's 2003 tree
/// form): its Jacobi acceleration ak [m/s^2] minus the Keplerian part -gm r / r^3 of its orbit
/// (gm = G (M_in + m_k) [m^3/s^2], r [m]), into out.
inline void interaction_of(double gm, const double* r, const double* ak, double* out) {
    const double x = r[0], y = r[1], z = r[2];
    const double r2 = x * x + y * y + z * z;
    const double f = gm / (r2 * std::sqrt(r2));
    out[0] = ak[0] + f * x, out[1] = ak[1] + f * y, out[2] = ak[2] + f * z;
}

/// v[j] += h a[j] for j < m, two at a time in a GCC vector extension (the same multiply and
/// add in each lane as one at a time: the same bits). The compiler left the plain loop
/// scalar, at 7 instructions a value, and the run applies a kept interaction every step.
inline void add_scaled(double* v, double h, const double* a, std::size_t m) {
    using pair = double __attribute__((vector_size(16)));
    std::size_t j = 0;
    for (; j + 2 <= m; j += 2) {
        pair vj, aj;
        std::memcpy(&vj, v + j, sizeof vj);
        std::memcpy(&aj, a + j, sizeof aj);
        vj = vj + h * aj;
        std::memcpy(v + j, &vj, sizeof vj);
    }
    for (; j < m; ++j) v[j] += h * a[j];
}
} // namespace

wisdom_holman::wisdom_holman(const nbody_system& sys, std::vector<extra_force> extra,
                             wh_options options)
    : model_(sys, std::move(extra)), tree_(model_.tree()), options_(options), t_(sys.t_) {
    const std::size_t n = sys.size();
    const int co = options_.corrector_order;
    if (co != 0 && co != 3 && co != 5 && co != 7) {
        throw input_error(source_location{"<options>", 0, 0}, "corrector_order", std::to_string(co),
                          "0 (off), 3, 5 or 7");
    }
    if (!(options_.step >= 0) || !(options_.period_fraction > 0) ||
        !(options_.pericentre_fraction > 0)) {
        throw input_error(source_location{"<options>", 0, 0}, "step", std::to_string(options_.step),
                          "a step >= 0 (0 = automatic) and positive step fractions");
    }
    merge_kicks_ = !model_.velocity_dependent();
    if (options_.modified_kick && co == 0) {
        throw input_error(source_location{"<options>", 0, 0}, "modified_kick", "true",
                          "a symplectic corrector (order 3, 5 or 7) with the modified kick: its "
                          "coefficient belongs to the corrected map");
    }
    if (options_.modified_kick && model_.velocity_dependent()) {
        throw input_error(source_location{"<options>", 0, 0}, "modified_kick", "true",
                          "false with velocity-dependent forces (the modified kick needs an "
                          "interaction that depends on positions only)");
    }
    rj_.assign(3 * n, 0.0);
    vj_.assign(3 * n, 0.0);
    rel_q_.assign(3 * n, 0.0);
    rel_v_.assign(3 * n, 0.0);
    acc_.assign(3 * n, 0.0);
    acc_jac_.assign(3 * n, 0.0);
    for (std::size_t k = 1; k < n; ++k) orbit_gm_.push_back(tree_.kepler_gm(k));
    if (options_.modified_kick) {
        for (auto* vec : {&mod_acc_, &mod_dq_, &mod_da_, &mod_da_jac_}) vec->assign(3 * n, 0.0);
        if (!variations_) variations_ = std::make_unique<force_variations>(model_);
    }
    // Two point masses: the interaction Hamiltonian is zero, so the kick is skipped rather than
    // computed as a cancellation of the full and Keplerian accelerations (that round-off was
    // half the energy error of the two-body e = 0.9 test).
    no_interaction_ = n == 2 && !model_.has_extra_forces() && !model_.has_zonal_terms();
    if (co != 0) {
        corrector_b_ = wh_corrector_coefficients(co, corrector_alpha);
        for (std::size_t i = 0; i < corrector_b_.size(); ++i) {
            corrector_a_.push_back(static_cast<double>(i + 1) * corrector_alpha);
        }
    }
    std::vector<double> q(3 * n), v(3 * n);
    tree_.inertial_to_relative(sys.x_.data(), q.data());
    tree_.inertial_to_relative(sys.v_.data(), v.data());
    dt_ = options_.step > 0 ? options_.step
                            : wh_automatic_step(tree_, q.data(), v.data(), options_.period_fraction,
                                                options_.pericentre_fraction);
    if (!(dt_ > 0) || !std::isfinite(dt_)) {
        throw numerical_error("wisdom_holman: no finite step (a system of one body?)");
    }
    set_relative_state(sys.t_, q, v);
}

void wisdom_holman::jacobi_accelerations(const double* r, const double* v, double t) {
    tree_.jacobi_to_relative(r, rel_q_.data());
    if (model_.velocity_dependent()) tree_.jacobi_to_relative(v, rel_v_.data());
    model_.relative_accelerations(t, rel_q_.data(), rel_v_.data(), acc_.data());
    tree_.relative_to_jacobi(acc_.data(), acc_jac_.data());
}

void wisdom_holman::form_interaction(const double* r) {
    double* a = acc_jac_.data();
    const double* gm = orbit_gm_.data();
    for (std::size_t k = 1; k < tree_.size(); ++k)
        interaction_of(gm[k - 1], r + 3 * k, a + 3 * k, a + 3 * k);
}

void wisdom_holman::kick(double* r, double* v, double h, double t, bool tangent) {
    const std::size_t n = tree_.size();
    if (no_interaction_) return; // its tangent kick is zero too
    const bool on_state = r == rj_.data() && !model_.velocity_dependent();
    const bool modified = on_state && options_.modified_kick;
    bool applied = false; // v already kicked (in the loop that forms the interaction)
    if (!(on_state && kick_cache_valid_ && kick_cache_t_ == t)) {
        jacobi_accelerations(r, v, t);
        // The interaction of every Jacobi orbit. A half kick on the state keeps it in acc_jac_:
        // the closing half kick of synchronize() and the next step's opening half share it.
        // A merged kick (a drift follows at once) and kicks off the state only apply it.
        // The plain kick is applied in the same loop (tangent_kick reads no v).
        const bool keep = modified || (on_state && h != dt_);
        double* a = acc_jac_.data();
        const double* gm = orbit_gm_.data();
        if (keep) { // form it in place; the kick below applies it
            form_interaction(r);
        } else { // apply it at once
            for (std::size_t j = 0; j < 3; ++j) v[j] += h * a[j];
            for (std::size_t k = 1; k < n; ++k) {
                double ak[3];
                interaction_of(gm[k - 1], r + 3 * k, a + 3 * k, ak);
                double* vk = v + 3 * k;
                vk[0] += h * ak[0];
                vk[1] += h * ak[1];
                vk[2] += h * ak[2];
            }
            applied = true;
        }
        kick_cache_valid_ = on_state && keep;
        kick_cache_t_ = t;
        mod_acc_dt_ = 0; // mod_acc_ belongs to the old positions
    }
    if (tangent) tangent_kick(h, t); // the Jacobian at the kick's input (rel_q_, rel_v_)
    const double* a = acc_jac_.data();
    if (modified) {
        // Recomputed when the positions or the step (a shortened last step) changed.
        if (mod_acc_dt_ != dt_) modified_acceleration(t);
        if (tangent) modified_tangent_kick(h, t);
        a = mod_acc_.data();
    }
    if (!applied) add_scaled(v, h, a, 3 * n);
}

void wisdom_holman::interaction_variation(double t, const double* rel_q, const double* rj,
                                          const double* dj, double* out) {
    // The force Jacobian carried through the (linear) coordinate transforms, plus that of the
    // removed Keplerian term G M r / r^3: G M [delta r / r^3 - 3 r (r . delta r) / r^5].
    tree_.jacobi_to_relative(dj, mod_dq_.data());
    variations_->relative(t, rel_q, nullptr, mod_dq_.data(), nullptr, mod_da_.data());
    tree_.relative_to_jacobi(mod_da_.data(), out);
    for (std::size_t j = 0; j < 3; ++j) out[j] = 0.0; // the barycentre decouples
    add_kepler_variation(rj, dj, out);
}

void wisdom_holman::add_kepler_variation(const double* rj, const double* dj, double* out) const {
    const std::size_t n = tree_.size();
    for (std::size_t k = 1; k < n; ++k) {
        const double* rk = rj + 3 * k;
        const double* dk = dj + 3 * k;
        const double r2 = rk[0] * rk[0] + rk[1] * rk[1] + rk[2] * rk[2];
        const double inv3 = orbit_gm_[k - 1] / (r2 * std::sqrt(r2));
        const double proj = 3.0 * (rk[0] * dk[0] + rk[1] * dk[1] + rk[2] * dk[2]) / r2;
        for (std::size_t j = 0; j < 3; ++j) out[3 * k + j] += inv3 * (dk[j] - proj * rk[j]);
    }
}

void wisdom_holman::modified_acceleration(double t) {
    // Kick–drift–kick of H = A + B has the modified Hamiltonian
    //   A + B - dt^2/12 {{A,B},A} - dt^2/24 {{A,B},B} + O(dt^4)
    // (symmetric Baker–Campbell–Hausdorff formula, e.g. Yoshida 1993, Celest. Mech. 56, 27;
    // the signs checked on the harmonic oscillator, whose kick–drift–kick map conserves
    // p^2 + (1 - dt^2/4) q^2 exactly). The corrector removes the eps term by the conjugacy
    // exp(L_chi), chi = -dt^2/12 {A,B}, which also adds {B, chi} = +dt^2/12 {{A,B},B}: the
    // corrected map is left with +dt^2/24 {{A,B},B}: the kick must cancel the eps^2 term of
    // the corrected map, not the kernel's own. With B depending on positions only,
    // {{A,B},B} = sum_k |grad_k B|^2 / m_k' (Jacobi masses m_k'), so kicking with
    //   B~ = B - dt^2/24 sum_k |grad_k B|^2 / m_k'
    // cancels it. Its acceleration: with a = -grad B / m' and (da/dq) = -Hess B / m',
    // grad_j (sum_k m_k' |a_k|^2) = 2 m_j' ((da/dq) a)_j, so a~ = a + dt^2/12 (da/dq) a:
    // the interaction's variation along a itself. (Measured on the reference moon system:
    // the moons' a error falls as dt^4 with this sign, and doubles with the other.)
    const std::size_t n = tree_.size();
    const double* acc = acc_jac_.data(); // the interaction (see kick())
    double* a = mod_acc_.data();
    for (std::size_t j = 0; j < 3 * n; ++j) a[j] = acc[j];
    interaction_variation(t, rel_q_.data(), rj_.data(), acc, mod_da_jac_.data());
    mod_acc_dt_ = dt_;
    const double c = dt_ * dt_ / 12.0;
    for (std::size_t j = 3; j < 3 * n; ++j) a[j] += c * mod_da_jac_[j];
}

void wisdom_holman::modified_term(double t, const double* rj, double* out) {
    const std::size_t n = tree_.size();
    tree_.jacobi_to_relative(rj, mt_rel_q_.data());
    model_.relative_accelerations(t, mt_rel_q_.data(), nullptr, mt_acc_.data());
    tree_.relative_to_jacobi(mt_acc_.data(), mt_acc_jac_.data());
    double* a = mt_aint_.data();
    for (std::size_t j = 0; j < 3; ++j) a[j] = 0.0; // the barycentre decouples
    for (std::size_t k = 1; k < n; ++k)
        interaction_of(orbit_gm_[k - 1], rj + 3 * k, &mt_acc_jac_[3 * k], a + 3 * k);
    interaction_variation(t, mt_rel_q_.data(), rj, a, out);
}

void wisdom_holman::modified_tangent_kick(double h, double t) {
    // The modified kick adds dt^2/12 (da/dq) a, whose Jacobian needs second derivatives of the
    // forces: a central difference of (da/dq) a along the deviation instead, with a step of
    // 1e-6 of the smallest ratio of a body's Jacobi distance to its deviation (the term is
    // itself O((n dt)^2) of the kick, so the difference's O(step^2) error is far below
    // round-off of the whole).
    const std::size_t n = tree_.size();
    double ratio = std::numeric_limits<double>::infinity();
    for (std::size_t k = 1; k < n; ++k) {
        const double* rk = &rj_[3 * k];
        const double* dk = &drj_[3 * k];
        const double dn = std::sqrt(dk[0] * dk[0] + dk[1] * dk[1] + dk[2] * dk[2]);
        if (dn > 0)
            ratio = std::min(ratio, std::sqrt(rk[0] * rk[0] + rk[1] * rk[1] + rk[2] * rk[2]) / dn);
    }
    if (!std::isfinite(ratio)) return; // no deviation in positions
    const double e = 1e-6 * ratio;
    for (std::size_t j = 0; j < 3 * n; ++j) mt_q_[j] = rj_[j] + e * drj_[j];
    modified_term(t, mt_q_.data(), mt_plus_.data());
    for (std::size_t j = 0; j < 3 * n; ++j) mt_q_[j] = rj_[j] - e * drj_[j];
    modified_term(t, mt_q_.data(), mt_minus_.data());
    const double c = h * dt_ * dt_ / 12.0 / (2.0 * e);
    for (std::size_t j = 3; j < 3 * n; ++j) dvj_[j] += c * (mt_plus_[j] - mt_minus_[j]);
}

void wisdom_holman::tangent_kick(double h, double t) {
    // Variational kick (Mikkola & Innanen 1999): delta v += h (d a_int / d r) delta r, the
    // Jacobian of the interaction accelerations in Jacobi coordinates: the force Jacobian
    // carried through the (linear) coordinate transforms, plus that of the removed Keplerian
    // term G M r / r^3, i.e. G M [delta r / r^3 - 3 r (r . delta r) / r^5]. The barycentre's
    // deviation is kept zero (it decouples).
    const std::size_t n = tree_.size();
    const bool vdep = model_.velocity_dependent();
    tree_.jacobi_to_relative(drj_.data(), drel_q_.data());
    if (vdep) tree_.jacobi_to_relative(dvj_.data(), drel_v_.data());
    variations_->relative(t, rel_q_.data(), rel_v_.data(), drel_q_.data(),
                          vdep ? drel_v_.data() : nullptr, dacc_.data());
    tree_.relative_to_jacobi(dacc_.data(), dacc_jac_.data());
    add_kepler_variation(rj_.data(), drj_.data(), dacc_jac_.data());
    add_scaled(dvj_.data() + 3, h, dacc_jac_.data() + 3, 3 * n - 3);
}

void wisdom_holman::drift(double* r, double* v, double h, bool tangent) {
    const std::size_t n = tree_.size();
    if (r == rj_.data()) kick_cache_valid_ = false;
    for (std::size_t j = 0; j < 3; ++j) r[j] += h * v[j]; // the barycentre moves uniformly
    if (!tangent) {
        // Every Jacobi orbit together, across SIMD lanes.
        const std::size_t bad = kepler_drift_many(n - 1, orbit_gm_.data(), r + 3, v + 3, h);
        if (bad != n - 1) kepler_failure(bad + 1);
        return;
    }
    for (std::size_t k = 1; k < n; ++k) {
        if (!kepler_drift_variation(tree_.kepler_gm(k), r + 3 * k, v + 3 * k, &drj_[3 * k],
                                    &dvj_[3 * k], h))
            kepler_failure(k);
    }
}

void wisdom_holman::kepler_failure(std::size_t k) const {
    throw numerical_error("wisdom_holman: Kepler solver failed for body '" +
                          model_.system().bodies_[k].name_ + "' at t = " + std::to_string(t_) +
                          " s");
}

void wisdom_holman::step() {
    // Kick–drift–kick; the closing half kick is merged into the next step's opening one.
    const double first = (pending_half_kick_ && merge_kicks_) ? dt_ : 0.5 * dt_;
    if (pending_half_kick_ && !merge_kicks_) synchronize();
    kick(rj_.data(), vj_.data(), first, t_, megno_on_);
    drift(rj_.data(), vj_.data(), dt_, megno_on_);
    // Compensated (Kahan 1965) sum of the time: plain t += dt loses up to half an ulp of t per
    // step, about 2 ms after 1.3 million steps of the reference moon system.
    const double y = dt_ - t_carry_;
    const double t_next = t_ + y;
    t_carry_ = (t_next - t_) - y;
    t_ = t_next;
    ++steps_;
    pending_half_kick_ = true;
    if (!merge_kicks_) synchronize();
    if (megno_on_) {
        // MEGNO is sampled after every drift, on the mapping variables.
        const int e =
            megno_.update(t_, megno_norm(scales_, tree_.size(), drj_.data(), dvj_.data()));
        if (e != 0) {
            for (double& x : drj_) x = std::ldexp(x, e);
            for (double& x : dvj_) x = std::ldexp(x, e);
        }
    }
}

void wisdom_holman::synchronize() {
    if (!pending_half_kick_) return;
    kick(rj_.data(), vj_.data(), 0.5 * dt_, t_, megno_on_);
    pending_half_kick_ = false;
}

const std::vector<double>& wisdom_holman::observe() {
    // A valid kick cache holds rel_q_ = jacobi_to_relative(rj_) and the interaction at rj_.
    if (!(kick_cache_valid_ && kick_cache_t_ == t_)) {
        if (pending_half_kick_ && !no_interaction_) {
            // The evaluation the next kick makes: it finds the cache and only applies it.
            jacobi_accelerations(rj_.data(), vj_.data(), t_);
            form_interaction(rj_.data());
            kick_cache_valid_ = true;
            kick_cache_t_ = t_;
            mod_acc_dt_ = 0;
        } else {
            tree_.jacobi_to_relative(rj_.data(), rel_q_.data());
        }
    }
    if (pending_half_kick_ && !no_interaction_ && options_.modified_kick && mod_acc_dt_ != dt_)
        modified_acceleration(t_);
    return rel_q_;
}

void wisdom_holman::synchronized_jacobi_velocities(double* out) const {
    const std::size_t m = vj_.size();
    const half_kick k = pending_half_kick();
    if (!k.acceleration) {
        for (std::size_t j = 0; j < m; ++j) out[j] = vj_[j];
        return;
    }
    // What synchronize()'s half kick would add (the same operations, so bitwise equal).
    for (std::size_t j = 0; j < m; ++j) out[j] = vj_[j] + k.step * k.acceleration[j];
}

void wisdom_holman::advance(std::size_t n) {
    for (std::size_t k = 0; k < n; ++k) step();
}

void wisdom_holman::integrate(double t_end) {
    const double full = dt_;
    // Whole steps while they fit (a relative tolerance keeps round-off from adding a sliver).
    while (t_ + full <= t_end + 1e-12 * std::abs(full)) step();
    const double rest = t_end - t_;
    if (rest > 1e-9 * full) {
        synchronize();
        dt_ = rest;
        step();
        synchronize();
        dt_ = full;
    }
}

void wisdom_holman::apply_corrector(double* r, double* v, double sign) {
    // C = prod_i Z(a_i, b_i), Z(a, b) = X(a, b) X(-a, -b), X(a, b) = drift(-a dt) kick(b dt)
    // drift(a dt) (Wisdom, Holman & Touma 1996). sign = +1 applies C (mapping -> real
    // variables); sign = -1 applies its exact inverse, prod over reversed i of Z(-a_i, b_i).
    const std::size_t k = corrector_a_.size();
    for (std::size_t m = 0; m < k; ++m) {
        const std::size_t i = sign > 0 ? m : k - 1 - m;
        const double a = (sign > 0 ? 1.0 : -1.0) * corrector_a_[i] * dt_;
        const double b = corrector_sign * corrector_b_[i] * dt_;
        drift(r, v, -a);
        kick(r, v, b, t_);
        drift(r, v, 2 * a);
        kick(r, v, -b, t_);
        drift(r, v, -a);
    }
}

void wisdom_holman::relative_state(std::vector<double>& q, std::vector<double>& v) {
    // Read without moving the map (observe()), so reading never changes the trajectory.
    const std::vector<double>& rel = observe();
    const std::size_t n = tree_.size();
    q.resize(3 * n);
    v.resize(3 * n);
    std::vector<double> w(3 * n);
    synchronized_jacobi_velocities(w.data());
    if (corrector_a_.empty()) {
        std::copy(rel.begin(), rel.end(), q.begin());
        tree_.jacobi_to_relative(w.data(), v.data());
        return;
    }
    std::vector<double> r = rj_;
    apply_corrector(r.data(), w.data(), +1.0);
    tree_.jacobi_to_relative(r.data(), q.data());
    tree_.jacobi_to_relative(w.data(), v.data());
}

void wisdom_holman::set_relative_state(double t, const std::vector<double>& q,
                                       const std::vector<double>& v) {
    kick_cache_valid_ = false;
    const std::size_t n = tree_.size();
    if (q.size() != 3 * n || v.size() != 3 * n) {
        throw numerical_error("wisdom_holman: state needs 3 doubles per body");
    }
    t_ = t;
    t_carry_ = 0;
    tree_.relative_to_jacobi(q.data(), rj_.data());
    tree_.relative_to_jacobi(v.data(), vj_.data());
    pending_half_kick_ = false;
    if (!corrector_a_.empty()) apply_corrector(rj_.data(), vj_.data(), -1.0);
}

void wisdom_holman::start_tangent() {
    const std::size_t n = tree_.size();
    if (!variations_) variations_ = std::make_unique<force_variations>(model_);
    for (auto* vec : {&drj_, &dvj_, &drel_q_, &drel_v_, &dacc_, &dacc_jac_})
        vec->assign(3 * n, 0.0);
    if (options_.modified_kick) {
        for (auto* vec :
             {&mt_q_, &mt_rel_q_, &mt_acc_, &mt_acc_jac_, &mt_aint_, &mt_plus_, &mt_minus_})
            vec->assign(3 * n, 0.0);
    }
    megno_on_ = true;
}

bool wisdom_holman::enable_megno(std::uint64_t seed) {
    start_tangent();
    const std::size_t n = tree_.size();
    scales_ = megno_scales_of(n, rj_.data(), vj_.data());
    megno_initial_deviation(seed, scales_, n, drj_.data(), dvj_.data());
    megno_.start(t_, megno_norm(scales_, n, drj_.data(), dvj_.data()));
    return true;
}

megno_reading wisdom_holman::megno() const {
    if (!megno_on_) return {};
    return megno_.reading();
}

void wisdom_holman::set_tangent(const std::vector<double>& dr, const std::vector<double>& dv) {
    const std::size_t n = tree_.size();
    if (!megno_on_) throw numerical_error("wisdom_holman::set_tangent: MEGNO is not enabled");
    if (dr.size() != 3 * n || dv.size() != 3 * n)
        throw numerical_error("wisdom_holman::set_tangent: 3 doubles per body");
    drj_ = dr;
    dvj_ = dv;
    for (std::size_t j = 0; j < 3; ++j) drj_[j] = dvj_[j] = 0.0;
    megno_.start(t_, megno_norm(scales_, n, drj_.data(), dvj_.data()));
}

void wisdom_holman::set_jacobi_state(const std::vector<double>& rj, const std::vector<double>& vj) {
    kick_cache_valid_ = false;
    if (rj.size() != rj_.size() || vj.size() != vj_.size())
        throw numerical_error("wisdom_holman::set_jacobi_state: 3 doubles per body");
    rj_ = rj;
    vj_ = vj;
    pending_half_kick_ = false;
}

std::vector<double> wisdom_holman::save_checkpoint() const {
    checkpoint_writer w(checkpoint_kind::wisdom_holman, tree_.size());
    w.put_count(static_cast<std::size_t>(options_.corrector_order));
    w.put(t_);
    w.put(t_carry_);
    w.put(dt_);
    w.put_count(steps_);
    w.put_flag(pending_half_kick_);
    w.put_vector(rj_);
    w.put_vector(vj_);
    w.put_flag(megno_on_);
    if (megno_on_) {
        save_megno_scales(scales_, w);
        w.put_vector(drj_);
        w.put_vector(dvj_);
        megno_.save(w);
    }
    return w.finish();
}

void wisdom_holman::load_checkpoint(const std::vector<double>& data) {
    kick_cache_valid_ = false;
    const std::size_t n = tree_.size();
    checkpoint_reader r(data, checkpoint_kind::wisdom_holman, n);
    const std::size_t order = r.get_count("corrector_order");
    if (order != static_cast<std::size_t>(options_.corrector_order)) {
        throw input_error(source_location{"<checkpoint>", 0, 0}, "checkpoint.corrector_order",
                          std::to_string(order), std::to_string(options_.corrector_order));
    }
    const double t = r.get("t");
    const double t_carry = r.get("t_carry");
    const double dt = r.get("dt");
    const std::size_t steps = r.get_count("steps");
    const bool pending = r.get_flag("pending_half_kick");
    std::vector<double> rj, vj, dr, dv;
    r.get_vector("rj", rj, 3 * n);
    r.get_vector("vj", vj, 3 * n);
    const bool on = r.get_flag("megno");
    megno_scales sc;
    megno_accumulator acc;
    if (on) {
        sc = load_megno_scales(r, n);
        r.get_vector("megno.dr", dr, 3 * n);
        r.get_vector("megno.dv", dv, 3 * n);
        acc.load(r);
    }
    r.finish();
    t_ = t;
    t_carry_ = t_carry;
    dt_ = dt;
    steps_ = steps;
    pending_half_kick_ = pending;
    rj_ = std::move(rj);
    vj_ = std::move(vj);
    if (on) {
        start_tangent();
        scales_ = sc;
        drj_ = std::move(dr);
        dvj_ = std::move(dv);
        megno_ = acc;
    } else {
        megno_on_ = false;
    }
}

} // namespace moonwright
