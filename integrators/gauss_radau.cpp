// 15th-order Gauss–Radau integrator with adaptive steps (Everhart 1985) and compensated
// summation, for close encounters, captures and reference solutions.
//
// Method (Everhart 1985, "An efficient integrator that uses Gauss-Radau spacings", in
// Dynamics of Comets, IAU Coll. 83, 185): over a step of length dt the acceleration is
// expanded in the fraction h = tau / dt in [0, 1] as
//     F(h) = F0 + b1 h + b2 h^2 + ... + b7 h^7,
// or, equivalently, in Newton form on the Gauss–Radau spacings h_0 = 0, h_1 .. h_7,
//     F(h) = F0 + g1 h + g2 h (h - h1) + ... + g7 h (h - h1) ... (h - h6).
// Integrating twice gives the positions and velocities at any h (see predict_at); the g are
// divided differences of F at the spacings, refined by predictor–corrector sweeps until the
// change of b7 stops shrinking. The local error is O(dt^16), the global error O(dt^15).
//
// Step control: the global criterion of Rein & Spiegel (2015, MNRAS 446, 1424, Sect. 3.3):
// err = max_i |b7_i| / max_i |F_i|, dt_new = dt (epsilon / err)^(1/7); a step whose dt_new is
// below a quarter of dt is rejected and retried, and dt grows at most fourfold per step.
// Predictor–corrector convergence follows the same paper (Sect. 3.2): iterate until the change
// of b7 falls below 1e-16 of the acceleration scale or stops decreasing, at most 12 sweeps.
// Compensated (Kahan 1965) summation of the position and velocity updates follows Sect. 3.4 of
// Rein & Spiegel (2015): it is what turns the energy error into a random walk (Brouwer 1937).
//
// Forces that are not smooth (the edge of a gas envelope, a force switched on at a distance)
// are our addition: the force at each step's end, which the next step needs anyway, must
// continue the expansion (the nodes stop at h_7 = 0.9775, so a jump after the last node would
// pass unseen), and a step that starts inside a rejected one whose error measure hardly fell
// with the step length is taken as a jump and accepted once |b7| dt, the velocity error it can
// make, is below epsilon times the largest speed (see step()).
#include "integrators/gauss_radau.hpp"

#include "engine/error.hpp"
#include "integrators/initial_step.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>
#include <stdexcept>
#include <utility>

namespace moonwright {

namespace {

constexpr int stages = 7; // b1 .. b7

/// Gauss–Radau spacings on [0, 1] (Everhart 1985, Table; digits from memory, checked in the
/// tests as roots of P7 + P8 mapped to [0, 1], the Radau polynomial with a fixed end at 0).
constexpr std::array<double, 8> radau_h = {0.0,
                                           0.0562625605369221464656521910318,
                                           0.180240691736892364987579942780,
                                           0.352624717113169637373907769648,
                                           0.547153626330555383001448554766,
                                           0.734210177215410531523210605558,
                                           0.885320946839095768090359771030,
                                           0.977520613561287501891174488626};

/// Coefficient tables derived once from the spacings (long double for the products).
struct radau_tables {
    /// c[n][k]: coefficient of h^k in P_n(h) = h (h - h1) ... (h - h_{n-1}); b_k = sum_n c g_n.
    std::array<std::array<double, 8>, 8> c{};
    /// d[k][n]: h^k = sum_n d[k][n] P_n(h); g_n = sum_k d[k][n] b_k.
    std::array<std::array<double, 8>, 8> d{};
    /// rr[n][j] = 1 / (h_n - h_j), j < n, for the divided differences.
    std::array<std::array<double, 8>, 8> rr{};
    /// binom[j][k] = j choose k, to re-expand the b about the end of a step.
    std::array<std::array<double, 8>, 8> binom{};

    radau_tables() {
        std::array<std::array<long double, 9>, 8> p{}; // p[n][k]: coefficients of P_n
        p[0][0] = 1.0L;
        for (int n = 1; n <= stages; ++n) {
            const long double hn = radau_h[static_cast<std::size_t>(n - 1)];
            for (int k = 0; k <= n; ++k) {
                long double v = (k > 0 ? p[n - 1][k - 1] : 0.0L) - hn * p[n - 1][k];
                p[n][k] = v;
            }
        }
        for (int n = 1; n <= stages; ++n)
            for (int k = 1; k <= n; ++k) c[n][k] = static_cast<double>(p[n][k]);
        for (int k = 1; k <= stages; ++k) {
            std::array<long double, 9> rest{};
            rest[k] = 1.0L;
            for (int n = k; n >= 1; --n) {
                const long double coef = rest[n]; // P_n is monic of degree n
                d[k][n] = static_cast<double>(coef);
                for (int j = 0; j <= n; ++j) rest[j] -= coef * p[n][j];
            }
        }
        for (int n = 1; n <= stages; ++n)
            for (int j = 0; j < n; ++j)
                rr[n][j] = static_cast<double>(1.0L / (static_cast<long double>(radau_h[n]) -
                                                       static_cast<long double>(radau_h[j])));
        for (int j = 0; j <= stages; ++j) {
            binom[j][0] = 1.0;
            for (int k = 1; k <= j; ++k)
                binom[j][k] = binom[j - 1][k - 1] + (k <= j - 1 ? binom[j - 1][k] : 0.0);
        }
    }
};

const radau_tables& tables() {
    static const radau_tables t;
    return t;
}

/// Below this change of b7 relative to the acceleration scale the predictor–corrector sweeps
/// have converged to round-off (Rein & Spiegel 2015, Sect. 3.2).
constexpr double pc_tolerance = 1e-16;
constexpr int max_sweeps = 12;
/// A step whose proposed successor is below this fraction is redone; steps grow at most by
/// its inverse (Rein & Spiegel 2015, Sect. 3.3).
constexpr double safety = 0.25;
/// The error measure at which a step is rejected, in units of epsilon: (1 / safety)^7.
constexpr double rejection_level = 4.0 * 4.0 * 4.0 * 4.0 * 4.0 * 4.0 * 4.0;
static_assert(rejection_level * safety * safety * safety * safety * safety * safety * safety ==
              1.0);

/// max(m, x) ignoring a NaN x, like std::fmax, but inlined (fmax is a library call here).
inline double larger(double m, double x) {
    return x > m ? x : m;
}

double max_abs(const double* x, std::size_t count) {
    double m = 0.0;
    for (std::size_t i = 0; i < count; ++i) m = larger(m, std::fabs(x[i]));
    return m;
}

} // namespace

const std::array<double, 8>& gauss_radau::spacings() noexcept {
    return radau_h;
}

gauss_radau::gauss_radau(second_order_system system, gauss_radau_options options)
    : system_(std::move(system)), options_(options), m_(3 * system_.n) {
    if (system_.n == 0) throw std::invalid_argument("gauss_radau: the system has no vectors");
    if (!system_.acceleration)
        throw std::invalid_argument("gauss_radau: the system has no acceleration function");
    if (!options_.adaptive && !(options_.initial_step != 0.0))
        throw std::invalid_argument("gauss_radau: fixed steps need options.initial_step != 0");
    (void)tables();
    for (auto* vec : {&q0_, &v0_, &a0_, &a_end_, &cq_, &cv_, &qp_, &vp_, &ap_, &b_save_, &q1_, &v1_,
                      &cq1_, &cv1_, &last_q_, &last_v_})
        vec->assign(m_, 0.0);
    for (auto* vec : {&b_, &g_, &e_, &bd_}) vec->assign(stages * m_, 0.0);
    dt_next_ = options_.initial_step;
}

double gauss_radau::next_step() const noexcept {
    return dt_next_;
}

void gauss_radau::set_next_step(double dt) noexcept {
    // The predicted b are polynomial coefficients in units of the next step, so a new step
    // length only rescales them: b_k -> b_k (dt / dt_old)^k, exactly. A step more than 1/safety
    // times longer would stretch an expansion fitted over a short step far beyond where it
    // holds (integrate() restores the natural step after a short landing step, up to 1e12
    // times longer): its b_7 can grow by 1e80, the corrector sweeps then start from nonsense
    // and the step is rejected with a meaningless error. Such predictions are forgotten.
    if (have_b_ && dt_next_ != 0.0 && dt != 0.0 && std::fabs(dt / dt_next_) > 1.0 / safety) {
        forget_predictions();
    } else if (have_b_ && dt_next_ != 0.0 && dt != 0.0) {
        const double ratio = dt / dt_next_;
        double f = 1.0;
        for (int k = 0; k < stages; ++k) {
            f *= ratio;
            for (std::size_t i = 0; i < m_; ++i) {
                b_[k * m_ + i] *= f;
                e_[k * m_ + i] *= f;
            }
        }
        const auto& tb = tables();
        for (int n = 1; n <= stages; ++n)
            for (std::size_t i = 0; i < m_; ++i) {
                double s = 0.0;
                for (int k = n; k <= stages; ++k) s += tb.d[k][n] * b_[(k - 1) * m_ + i];
                g_[(n - 1) * m_ + i] = s;
            }
    }
    dt_next_ = dt;
}

void gauss_radau::forget_predictions() noexcept {
    for (auto* vec : {&b_, &g_, &e_, &bd_}) std::fill(vec->begin(), vec->end(), 0.0);
    have_b_ = false;
}

void gauss_radau::reset() noexcept {
    forget_predictions();
    std::fill(cq_.begin(), cq_.end(), 0.0);
    std::fill(cv_.begin(), cv_.end(), 0.0);
    kink_err_ = 0.0;
    have_a_end_ = false;
    have_state_ = false;
}

void gauss_radau::check_finite(const double* x, std::size_t count, const char* what,
                               double t) const {
    for (std::size_t i = 0; i < count; ++i)
        if (!std::isfinite(x[i])) {
            std::ostringstream msg;
            msg << "Gauss-Radau: non-finite " << what << " (component " << i << ") at t = " << t
                << " s";
            throw numerical_error(msg.str());
        }
}

double gauss_radau::end_mismatch(double t_end) {
    system_.acceleration(t_end, q1_.data(), v1_.data(), a_end_.data());
    ++stats_.evaluations;
    have_a_end_ = true;
    t_a_end_ = t_end;
    double miss = 0.0, amax = 0.0;
    for (std::size_t i = 0; i < m_; ++i) {
        double f = a0_[i]; // F(1) = F0 + b1 + ... + b7
        for (int k = 0; k < stages; ++k) f += b_[static_cast<std::size_t>(k) * m_ + i];
        miss = larger(miss, std::fabs(a_end_[i] - f));
        amax = larger(amax, std::fabs(a_end_[i]));
    }
    amax = larger(amax, amax_);
    amax_ = amax;
    if (!std::isfinite(miss)) return 0.0; // a non-finite end is reported by the next step
    return amax > 0.0 ? miss / amax : miss;
}

double gauss_radau::attempt(double t, double dt) {
    const auto& tb = tables();
    const std::size_t m = m_;
    const bool vdep = system_.velocity_dependent;
    const double* b = b_.data();
    double* bw = b_.data();
    double* g = g_.data();
    double amax = max_abs(a0_.data(), m);
    double pc_last = std::numeric_limits<double>::infinity();
    double* b7 = bw + (stages - 1) * m;
    int sweep = 0;
    for (;;) {
        ++sweep;
        std::copy(b7, b7 + m, b_save_.begin());
        for (int n = 1; n <= stages; ++n) {
            const double h = radau_h[static_cast<std::size_t>(n)];
            const double hdt = h * dt;
            // Positions and velocities at h from the current b (twice-integrated expansion).
            for (std::size_t i = 0; i < m; ++i) {
                const double f0 = a0_[i];
                const double b1 = b[i], b2 = b[m + i], b3 = b[2 * m + i], b4 = b[3 * m + i],
                             b5 = b[4 * m + i], b6 = b[5 * m + i], b7i = b[6 * m + i];
                const double sq =
                    f0 / 2.0 +
                    h * (b1 / 6.0 +
                         h * (b2 / 12.0 +
                              h * (b3 / 20.0 +
                                   h * (b4 / 30.0 +
                                        h * (b5 / 42.0 + h * (b6 / 56.0 + h * b7i / 72.0))))));
                qp_[i] = q0_[i] + ((hdt * (v0_[i] + hdt * sq)) - cq_[i]);
                if (vdep) {
                    const double sv =
                        f0 +
                        h * (b1 / 2.0 +
                             h * (b2 / 3.0 +
                                  h * (b3 / 4.0 +
                                       h * (b4 / 5.0 +
                                            h * (b5 / 6.0 + h * (b6 / 7.0 + h * b7i / 8.0))))));
                    vp_[i] = v0_[i] + (hdt * sv - cv_[i]);
                }
            }
            system_.acceleration(t + hdt, qp_.data(), vdep ? vp_.data() : v0_.data(), ap_.data());
            ++stats_.evaluations;
            // New divided difference g_n, and the change it makes to b_1 .. b_n.
            const auto& rr = tb.rr[static_cast<std::size_t>(n)];
            const auto& cn = tb.c[static_cast<std::size_t>(n)];
            double* gn = g + (n - 1) * m;
            for (std::size_t i = 0; i < m; ++i) {
                amax = larger(amax, std::fabs(ap_[i]));
                double tmp = (ap_[i] - a0_[i]) * rr[0];
                for (int j = 1; j < n; ++j) tmp = (tmp - g[(j - 1) * m + i]) * rr[j];
                const double dg = tmp - gn[i];
                gn[i] = tmp;
                for (int k = 1; k <= n; ++k) bw[(k - 1) * m + i] += cn[k] * dg;
            }
        }
        double change = 0.0;
        for (std::size_t i = 0; i < m; ++i) change = larger(change, std::fabs(b7[i] - b_save_[i]));
        const double pc = amax > 0.0 ? change / amax : change;
        if (!std::isfinite(pc)) check_finite(ap_.data(), m, "acceleration", t);
        if (pc < pc_tolerance) break;
        if (sweep > 2 && pc >= pc_last) break; // round-off floor reached
        if (sweep >= max_sweeps) {
            ++stats_.not_converged;
            break;
        }
        pc_last = pc;
    }
    stats_.iterations += static_cast<std::size_t>(sweep);
    check_finite(b7, m, "expansion coefficient b7", t);

    // End of step (h = 1), with compensated sums: the increments are far smaller than q and v,
    // and plain addition would lose their low bits every step (Rein & Spiegel 2015, Sect. 3.4).
    const double dt2 = dt * dt;
    for (std::size_t i = 0; i < m; ++i) {
        const double f0 = a0_[i];
        const double b1 = b[i], b2 = b[m + i], b3 = b[2 * m + i], b4 = b[3 * m + i],
                     b5 = b[4 * m + i], b6 = b[5 * m + i], b7i = b[6 * m + i];
        // Exact divisions, not rounded reciprocals: multiplying by 1/6 etc. biased the rounding
        // and the energy error grew as t^0.9 instead of sqrt(t) (Brouwer's law; tried).
        const double dq = dt * v0_[i] + dt2 * (f0 / 2.0 + b1 / 6.0 + b2 / 12.0 + b3 / 20.0 +
                                               b4 / 30.0 + b5 / 42.0 + b6 / 56.0 + b7i / 72.0);
        const double dv =
            dt * (f0 + b1 / 2.0 + b2 / 3.0 + b3 / 4.0 + b4 / 5.0 + b5 / 6.0 + b6 / 7.0 + b7i / 8.0);
        double y = dq - cq_[i];
        double s = q0_[i] + y;
        cq1_[i] = (s - q0_[i]) - y;
        q1_[i] = s;
        y = dv - cv_[i];
        s = v0_[i] + y;
        cv1_[i] = (s - v0_[i]) - y;
        v1_[i] = s;
    }
    const double bmax = max_abs(b7, m);
    amax_ = amax;
    return amax > 0.0 ? bmax / amax : bmax;
}

void gauss_radau::predict_b(double ratio) noexcept {
    // Re-expand F(h) about the end of the accepted step in units of the next step:
    // h_old = 1 + ratio h_new gives e_k = ratio^k sum_{j>=k} C(j,k) b_j (Everhart 1985, Eq. 10
    // idea), then add the error of the previous prediction, bd = b - e_old (Everhart 1985).
    const auto& tb = tables();
    const std::size_t m = m_;
    for (std::size_t i = 0; i < m; ++i) {
        double f = 1.0;
        for (int k = 1; k <= stages; ++k) {
            f *= ratio;
            double s = 0.0;
            for (int j = k; j <= stages; ++j) s += tb.binom[j][k] * b_[(j - 1) * m + i];
            const double ek = f * s;
            const double bk = b_[(k - 1) * m + i];
            bd_[(k - 1) * m + i] = have_b_ ? bk - e_[(k - 1) * m + i] : 0.0;
            // write e after using the old one for bd; b is read only at j >= k below so hold ek
            e_[(k - 1) * m + i] = ek;
        }
        for (int k = 1; k <= stages; ++k)
            b_[(k - 1) * m + i] = e_[(k - 1) * m + i] + bd_[(k - 1) * m + i];
        for (int n = 1; n <= stages; ++n) {
            double s = 0.0;
            for (int k = n; k <= stages; ++k) s += tb.d[k][n] * b_[(k - 1) * m + i];
            g_[(n - 1) * m + i] = s;
        }
    }
    have_b_ = true;
}

double gauss_radau::step(double& t, std::vector<double>& q, std::vector<double>& v) {
    if (q.size() != m_ || v.size() != m_)
        throw std::invalid_argument("gauss_radau::step: q and v must hold 3 n doubles each");
    if (have_state_ && (!std::equal(q.begin(), q.end(), last_q_.begin()) ||
                        !std::equal(v.begin(), v.end(), last_v_.begin())))
        reset(); // the caller changed the state: old predictions and compensation are void
    std::copy(q.begin(), q.end(), q0_.begin());
    std::copy(v.begin(), v.end(), v0_.begin());
    check_finite(q0_.data(), m_, "position", t);
    check_finite(v0_.data(), m_, "velocity", t);
    if (have_a_end_ && t_a_end_ == t) {
        a0_.swap(a_end_); // the last step's check already evaluated the force here
    } else {
        system_.acceleration(t, q0_.data(), v0_.data(), a0_.data());
        ++stats_.evaluations;
    }
    have_a_end_ = false;
    check_finite(a0_.data(), m_, "acceleration", t);

    if (dt_next_ == 0.0)
        dt_next_ = estimate_initial_step(system_.n, q0_.data(), v0_.data(), a0_.data());
    double dt = dt_next_;
    bool across_kink = false;
    for (;;) {
        if (t + dt == t) {
            std::ostringstream msg;
            msg << "Gauss-Radau: step " << dt << " s vanishes against t = " << t << " s";
            throw numerical_error(msg.str());
        }
        double err = attempt(t, dt);
        if (!options_.adaptive) break;
        // The Radau nodes stop short of the step's end (h_7 = 0.9775): a jump in the force
        // between the last node and the end would pass the test unseen. The force at the end
        // (needed by the next step anyway) must continue the expansion; a miss beyond the level
        // that rejects a step counts as that step's error measure.
        const double miss = end_mismatch(t + dt);
        if (miss > options_.epsilon * rejection_level) err = larger(err, miss);
        double dt_new = 0.0;
        if (err > 0.0) {
            dt_new = dt * std::pow(options_.epsilon / err, 1.0 / 7.0);
        } else {
            dt_new = dt / safety; // polynomial acceleration: b7 vanishes, grow at the limit
        }
        if (!std::isfinite(dt_new)) {
            std::ostringstream msg;
            msg << "Gauss-Radau: step control failed (error measure " << err << ") at t = " << t
                << " s";
            throw numerical_error(msg.str());
        }
        if (std::fabs(dt_new) < safety * std::fabs(dt) && kink_err_ > 0.0 &&
            (kink_t_end_ - t) * dt > 0.0 && err > kink_err_ * std::pow(dt / kink_dt_, 3) &&
            err * amax_ * std::fabs(dt) <= options_.epsilon * max_abs(v0_.data(), m_)) {
            // The force is not smooth here (a jump or kink, e.g. the edge of a gas envelope):
            // this attempt starts inside an earlier rejected one (kink_*) and its error measure
            // hardly fell with the step, where a smooth force's falls as dt^7. No step across
            // the jump would pass the test, and the steps would shrink towards it without end
            // (each retry lands just short of it). The step is accepted once it is so short
            // that the velocity error it can make, about |b7| dt, is below epsilon times the
            // largest speed; the predictions are then forgotten (they describe the jump).
            across_kink = true;
            break;
        }
        if (std::fabs(dt_new) < safety * std::fabs(dt)) {
            // Rejected: retry from the same start. The b just found describe F over this step;
            // rescaled to the shorter step they are the best first guess (control flow, no
            // exception).
            ++stats_.rejected;
            if (std::fabs(dt_new) < options_.min_step) {
                std::ostringstream msg;
                msg << "Gauss-Radau: step " << std::fabs(dt_new) << " s below min_step "
                    << options_.min_step << " s at t = " << t << " s";
                throw numerical_error(msg.str());
            }
            kink_err_ = err;
            kink_dt_ = dt;
            kink_t_end_ = t + dt;
            const bool had = have_b_;
            have_b_ = true;
            dt_next_ = dt;
            set_next_step(dt_new);
            have_b_ = had;
            dt = dt_new;
            continue;
        }
        if (std::fabs(dt_new) > std::fabs(dt) / safety) dt_new = dt / safety;
        dt_next_ = dt_new;
        break;
    }
    if (!options_.adaptive) dt_next_ = dt;
    if (across_kink) dt_next_ = dt / safety; // smooth again: grow at the limit

    std::copy(q1_.begin(), q1_.end(), q.begin());
    std::copy(v1_.begin(), v1_.end(), v.begin());
    check_finite(q.data(), m_, "position", t + dt);
    check_finite(v.data(), m_, "velocity", t + dt);
    cq_.swap(cq1_);
    cv_.swap(cv1_);
    std::copy(q.begin(), q.end(), last_q_.begin());
    std::copy(v.begin(), v.end(), last_v_.begin());
    have_state_ = true;
    t += dt;
    ++stats_.steps;
    if (across_kink || (kink_t_end_ - t) * dt <= 0.0) kink_err_ = 0.0; // passed it
    if (across_kink) {
        forget_predictions();
    } else {
        predict_b(dt_next_ / dt);
    }
    return dt;
}

std::size_t gauss_radau::integrate(double& t, std::vector<double>& q, std::vector<double>& v,
                                   double t_end) {
    std::size_t count = 0;
    if (t == t_end) return 0;
    const double direction = t_end > t ? 1.0 : -1.0;
    if (dt_next_ * direction < 0.0) set_next_step(-dt_next_);
    while (t != t_end) {
        const double remaining = t_end - t;
        if (dt_next_ == 0.0 || std::fabs(dt_next_) >= std::fabs(remaining)) {
            // Shorten the last step to land exactly on t_end, then restore the natural step.
            const double natural = dt_next_;
            if (dt_next_ == 0.0) {
                // unknown yet: let step() estimate it, clipped below
                std::copy(q.begin(), q.end(), q0_.begin());
                std::copy(v.begin(), v.end(), v0_.begin());
                system_.acceleration(t, q0_.data(), v0_.data(), a0_.data());
                ++stats_.evaluations;
                check_finite(a0_.data(), m_, "acceleration", t);
                const double est = direction * estimate_initial_step(system_.n, q0_.data(),
                                                                     v0_.data(), a0_.data());
                if (std::fabs(est) < std::fabs(remaining)) {
                    set_next_step(est);
                    continue;
                }
            }
            set_next_step(remaining);
            const double taken = step(t, q, v);
            ++count;
            if (natural != 0.0 && std::fabs(natural) > std::fabs(dt_next_)) set_next_step(natural);
            if (taken == remaining) {
                t = t_end; // t_start + remaining may miss t_end by an ulp
                if (observer_) observer_(t, q.data(), v.data());
                break;
            }
            // a rejection shortened the step: go on from where it ended
            if (observer_) observer_(t, q.data(), v.data());
            continue;
        }
        step(t, q, v);
        ++count;
        if (observer_) observer_(t, q.data(), v.data());
    }
    return count;
}

void gauss_radau::scale_components(std::size_t first, std::size_t count, double factor) noexcept {
    have_a_end_ = false;
    for (auto* vec : {&cq_, &cv_, &last_q_, &last_v_})
        for (std::size_t i = first; i < first + count; ++i) (*vec)[i] *= factor;
    for (auto* vec : {&b_, &g_, &e_, &bd_})
        for (int k = 0; k < stages; ++k)
            for (std::size_t i = first; i < first + count; ++i)
                (*vec)[static_cast<std::size_t>(k) * m_ + i] *= factor;
}

std::size_t gauss_radau::saved_size(std::size_t m) noexcept {
    return 11 + 4 * stages * m + 4 * m;
}

void gauss_radau::save_state(std::vector<double>& out) const {
    out.push_back(dt_next_);
    out.push_back(have_b_ ? 1.0 : 0.0);
    out.push_back(have_state_ ? 1.0 : 0.0);
    out.push_back(kink_err_);
    out.push_back(kink_dt_);
    out.push_back(kink_t_end_);
    for (std::size_t c : {stats_.steps, stats_.rejected, stats_.evaluations, stats_.iterations,
                          stats_.not_converged})
        out.push_back(static_cast<double>(c));
    for (const auto* vec : {&b_, &g_, &e_, &bd_, &cq_, &cv_, &last_q_, &last_v_})
        out.insert(out.end(), vec->begin(), vec->end());
}

bool gauss_radau::load_state(const std::vector<double>& data, std::size_t& pos) {
    const std::size_t need = saved_size(m_);
    if (pos > data.size() || data.size() - pos < need) return false;
    const double* p = data.data() + pos;
    dt_next_ = p[0];
    have_b_ = p[1] != 0.0;
    have_state_ = p[2] != 0.0;
    kink_err_ = p[3];
    kink_dt_ = p[4];
    kink_t_end_ = p[5];
    stats_.steps = static_cast<std::size_t>(p[6]);
    stats_.rejected = static_cast<std::size_t>(p[7]);
    stats_.evaluations = static_cast<std::size_t>(p[8]);
    stats_.iterations = static_cast<std::size_t>(p[9]);
    stats_.not_converged = static_cast<std::size_t>(p[10]);
    p += 11;
    for (auto* vec : {&b_, &g_, &e_, &bd_, &cq_, &cv_, &last_q_, &last_v_}) {
        std::copy(p, p + static_cast<std::ptrdiff_t>(vec->size()), vec->begin());
        p += vec->size();
    }
    pos += need;
    return true;
}

} // namespace moonwright
