// Universal-variable Kepler solver (Danby 1988; Wisdom & Hernandez 2015).
#include "engine/kepler_solver.hpp"

#include "engine/constants.hpp"
#include "engine/simd_clones.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <utility>

namespace moonwright {

namespace {

/// Stumpff functions in the working precision T.
template <typename T>
struct stumpff_of {
    T c0, c1, c2, c3;
};

template <typename T>
stumpff_of<T> stumpff_in(T z) noexcept {
    stumpff_of<T> c{T(1), T(1), T(0.5), T(1) / 6};
    if (!std::isfinite(z)) {
        const T nan = std::numeric_limits<T>::quiet_NaN();
        return {nan, nan, nan, nan};
    }
    if (std::abs(z) <= T(1)) {
        // Series c_k(z) = sum_j (-z)^j / (2j + k)! to j = 9 (the next term is below 1e-19 for
        // |z| <= 1), nested (Danby 1988, Sec. 6.9). No doubling: Danby's quarter-and-double
        // scheme multiplies the relative error of c0 by about 4 per doubling, which made the
        // Kepler drift lose ~500 ulp of energy per long step.
        // 1 / ((2j+1)(2j+2)) and 1 / ((2j+2)(2j+3)), j = 1..9; six terms reach round-off for
        // |z| <= 0.1 (the next is below 1e-17 of the sum).
        static constexpr double inv2[10] = {0,         1.0 / 12,  1.0 / 30,  1.0 / 56,  1.0 / 90,
                                            1.0 / 132, 1.0 / 182, 1.0 / 240, 1.0 / 306, 1.0 / 380};
        static constexpr double inv3[10] = {0,         1.0 / 20,  1.0 / 42,  1.0 / 72,  1.0 / 110,
                                            1.0 / 156, 1.0 / 210, 1.0 / 272, 1.0 / 342, 1.0 / 420};
        // Written out (not a loop) so the compiler keeps it branch-free.
        T p2 = 1, p3 = 1;
        if (std::abs(z) > T(0.1)) {
            p2 = 1 - z * T(inv2[9]) * (1 - z * T(inv2[8]) * (1 - z * T(inv2[7])));
            p3 = 1 - z * T(inv3[9]) * (1 - z * T(inv3[8]) * (1 - z * T(inv3[7])));
        }
        p2 = 1 - z * T(inv2[6]) * p2;
        p3 = 1 - z * T(inv3[6]) * p3;
        p2 = 1 - z * T(inv2[5]) * p2;
        p3 = 1 - z * T(inv3[5]) * p3;
        p2 = 1 - z * T(inv2[4]) * p2;
        p3 = 1 - z * T(inv3[4]) * p3;
        p2 = 1 - z * T(inv2[3]) * p2;
        p3 = 1 - z * T(inv3[3]) * p3;
        p2 = 1 - z * T(inv2[2]) * p2;
        p3 = 1 - z * T(inv3[2]) * p3;
        p2 = 1 - z * T(inv2[1]) * p2;
        p3 = 1 - z * T(inv3[1]) * p3;
        c.c2 = p2 / 2;
        c.c3 = p3 / 6;
        c.c1 = 1 - z * c.c3;
        c.c0 = 1 - z * c.c2;
        return c;
    }
    // Closed forms (Danby 1988, Sec. 6.9), written without cancellation where it matters:
    // c2 = 2 sin^2(x/2) / x^2 (resp. 2 sinh^2(x/2) / x^2); c3 = (x - sin x) / x^3 loses at most
    // a factor 6.3 at x = 1 and only enters the time equation.
    const T x = std::sqrt(std::abs(z));
    if (z > 0) {
        const T sh = std::sin(T(0.5) * x);
        const T sx = std::sin(x);
        c.c0 = std::cos(x);
        c.c1 = sx / x;
        c.c2 = 2 * sh * sh / z;
        c.c3 = (x - sx) / (x * z);
    } else {
        const T sh = std::sinh(T(0.5) * x);
        const T sx = std::sinh(x);
        c.c0 = std::cosh(x);
        c.c1 = sx / x;
        c.c2 = -2 * sh * sh / z;
        c.c3 = -(sx - x) / (x * z);
    }
    return c;
}

} // namespace

stumpff_values stumpff(double z) noexcept {
    const stumpff_of<double> c = stumpff_in(z);
    return {c.c0, c.c1, c.c2, c.c3};
}

namespace {

struct g_functions {
    double g0, g1, g2, g3;
};

inline g_functions g_of(double beta, double s) noexcept {
    const stumpff_values c = stumpff(beta * s * s);
    return {c.c0, s * c.c1, s * s * c.c2, s * s * s * c.c3};
}

} // namespace

kepler_result kepler_drift(double gm, double* r, double* v, double dt) noexcept {
    kepler_result res;
    if (dt == 0.0) {
        res.converged = true;
        return res;
    }
    // Time reversal: propagate the reversed velocity forward.
    const bool backward = dt < 0;
    double vv[3] = {v[0], v[1], v[2]};
    if (backward) {
        vv[0] = -vv[0];
        vv[1] = -vv[1];
        vv[2] = -vv[2];
        dt = -dt;
    }
    const double r0 = std::sqrt(r[0] * r[0] + r[1] * r[1] + r[2] * r[2]);
    const double v2 = vv[0] * vv[0] + vv[1] * vv[1] + vv[2] * vv[2];
    const double eta0 = r[0] * vv[0] + r[1] * vv[1] + r[2] * vv[2];
    const double beta = 2 * gm / r0 - v2; // gm / a (Danby's alpha)
    if (!(r0 > 0) || !std::isfinite(beta) || !(gm > 0) || !std::isfinite(dt)) return res;

    // A short step (dt v < r0 / 2): s = integral of dt / r, Taylor-expanded to third
    // order in dt with r' = eta0 / r0 and r'' = (v^2 - r'^2) / r0 - gm / r0^2 (the radial
    // equation of motion; Danby 1988, Sec. 6.9, start values). Its error is O(dt^4), so the
    // root finder converges in one or two steps; this avoids the atan2, sin and fmod of the
    // eccentric-anomaly start on the Wisdom–Holman map's short steps.
    const bool short_step = dt * dt * v2 < 0.25 * r0 * r0;
    const double rdot = eta0 / r0;
    const double rddot = (v2 - rdot * rdot) / r0 - gm / (r0 * r0);
    const double taylor_guess =
        dt / r0 *
        (1 - 0.5 * rdot * dt / r0 + dt * dt / 6 * (2 * rdot * rdot / (r0 * r0) - rddot / r0));
    double lo = 0, hi = std::numeric_limits<double>::infinity();
    double s = dt / r0; // first-order guess
    if (beta > 0) {
        const double sqrt_beta = std::sqrt(beta);
        const double period = constants::two_pi * gm / (beta * sqrt_beta);
        if (dt >= period) dt = std::fmod(dt, period);
        if (dt == 0.0) {
            res.converged = true;
            return res;
        }
        hi = constants::two_pi / sqrt_beta; // one full period in s
        if (short_step) {
            s = taylor_guess;
        } else {
            // Guess from the eccentric anomaly (Danby's 0.85 e start for Kepler's equation).
            const double ecos = 1 - r0 * beta / gm;
            const double esin = eta0 * sqrt_beta / gm;
            const double e = std::sqrt(ecos * ecos + esin * esin);
            const double e0 = std::atan2(esin, ecos);
            const double n = beta * sqrt_beta / gm;
            const double m1 = e0 - esin + n * dt;
            const double sm = std::sin(m1);
            double de = m1 + 0.85 * e * (sm > 0 ? 1 : (sm < 0 ? -1 : 0)) - e0;
            de = std::fmod(de, constants::two_pi);
            if (de < 0) de += constants::two_pi;
            s = de / sqrt_beta;
        }
        if (!(s > lo && s < hi)) s = 0.5 * hi;
    }

    auto kepler_eq = [&](double x, g_functions& g) {
        g = g_of(beta, x);
        return r0 * g.g1 + eta0 * g.g2 + gm * g.g3 - dt;
    };

    g_functions g{};
    if (!std::isfinite(hi)) {
        // Unbound orbit. Guess from the asymptotic growth gm G3 ~ gm e^x / (2 (-beta)^1.5),
        // x = sqrt(-beta) s, then double or halve to a bracket [lo, hi] with hi = 2 lo.
        if (beta < 0) {
            const double k = std::sqrt(-beta);
            const double x = std::log(std::max(2.0, 2 * dt * (-beta) * k / gm));
            s = std::min(dt / r0, x / k);
        }
        if (short_step || !(s > 0)) s = taylor_guess;
        if (!(s > 0)) s = dt / r0;
        const double s_first = s;
        double f = kepler_eq(s, g);
        if (f < 0) {
            for (int k = 0; k < 2100 && f < 0; ++k) {
                lo = s;
                s *= 2;
                f = kepler_eq(s, g);
            }
            hi = s; // f >= 0 or non-finite: past the root
        } else {
            for (int k = 0; k < 2100 && !(f < 0); ++k) {
                hi = s;
                s *= 0.5;
                f = kepler_eq(s, g);
            }
            lo = s;
        }
        if (!std::isfinite(hi) || !(hi > lo)) return res;
        s = (s_first >= lo && s_first <= hi) ? s_first : 0.5 * (lo + hi);
    }

    double f = 0, fp = 1;
    double ds_prev = std::numeric_limits<double>::infinity();
    bool done = false;
    for (int it = 0; it < kepler_max_iterations; ++it) {
        res.iterations = it + 1;
        f = kepler_eq(s, g);
        fp = r0 * g.g0 + eta0 * g.g1 + gm * g.g2; // dt/ds = r
        if (!std::isfinite(f) || !std::isfinite(fp)) {
            hi = s; // overflow lies beyond the root
            s = 0.5 * (lo + hi);
            continue;
        }
        if (f == 0.0) {
            done = true;
            break;
        }
        if (f < 0)
            lo = s;
        else
            hi = s;
        const double fpp = eta0 * g.g0 + (gm - beta * r0) * g.g1;
        // Laguerre–Conway step with n = 5 (Conway 1986).
        const double disc = std::sqrt(std::abs(16 * fp * fp - 20 * f * fpp));
        const double denom = fp + (fp >= 0 ? disc : -disc);
        double s_new = (denom != 0.0) ? s - 5 * f / denom : 0.5 * (lo + hi);
        // Bisect when the step leaves the bracket or does not shrink (an exponential Kepler
        // function approached from the far side creeps with constant steps).
        if (!(s_new > lo && s_new < hi) || std::abs(s_new - s) > 0.5 * ds_prev) {
            s_new = 0.5 * (lo + hi);
        }
        const double ds = s_new - s;
        ds_prev = std::abs(ds);
        if (std::abs(ds) <= 4 * std::numeric_limits<double>::epsilon() * std::abs(s) ||
            s_new == lo || s_new == hi) {
            done = true;
            break;
        }
        s = s_new;
    }
    res.s = s;
    if (!done) return res;
    res.converged = true;

    // f and g in increments (f - 1), g, f', (g' - 1) (Wisdom & Hernandez 2015, MNRAS 453,
    // 3015); g = r0 G1 + eta0 G2 avoids the cancellation of dt - gm G3 (Danby 1988, 6.10).
    // The G-functions at the root and the state update are evaluated in long double and
    // rounded once: in double their rounding was the larger part of the two-body e = 0.9
    // energy error over 1e5 orbits (4.0e-12 with the kick off). This path serves long steps
    // only; the Wisdom–Holman map's short steps go through kepler_drift_many.
    using ld = long double;
    // r0, eta0 and beta are recomputed in long double too: the orbit that f and g follow is
    // the one of beta, so its double rounding would move the energy.
    const ld gml = gm, sl = s;
    ld rsq = 0, eta0l = 0, v2l = 0;
    for (int k = 0; k < 3; ++k) {
        const ld rk = r[k], vk = vv[k];
        rsq += rk * rk;
        eta0l += rk * vk;
        v2l += vk * vk;
    }
    const ld r0l = std::sqrt(rsq);
    const ld betal = 2 * gml / r0l - v2l;
    const stumpff_of<ld> c = stumpff_in<ld>(betal * sl * sl);
    const ld g0 = c.c0, g1 = sl * c.c1, g2 = sl * sl * c.c2;
    const ld rr = r0l * g0 + eta0l * g1 + gml * g2; // r at the new point
    const ld fm1 = -gml * g2 / r0l;                 // f - 1
    const ld gg = r0l * g1 + eta0l * g2;            // g
    const ld fdot = -gml * g1 / (rr * r0l);         // f'
    const ld gdm1 = -gml * g2 / rr;                 // g' - 1
    for (int k = 0; k < 3; ++k) {
        const ld rk = r[k], vk = vv[k];
        const auto rn = static_cast<double>(rk + (fm1 * rk + gg * vk));
        const auto vn = static_cast<double>(vk + (fdot * rk + gdm1 * vk));
        r[k] = rn;
        v[k] = backward ? -vn : vn;
    }
    return res;
}

namespace {

// kepler_drift_many is compiled twice on x86-64 with GCC, for AVX2 (four lanes per register)
// and the baseline (two), and the loader picks one (engine/simd_clones.hpp). The lane code is
// inlined so it is compiled for the chosen target.

/// Terms of the Stumpff series in kepler_drift_many: ten for |z| <= 1 (the next term is
/// below 1e-19), seven for |z| <= 0.2 (the next is about 1e-18 of the sum).
constexpr std::size_t long_series = 10, short_series = 7;
constexpr double short_series_z = 0.2;

/// Horner coefficients (-1)^j / (2j + k)! of the Stumpff series c_k, k = 2, 3 (Danby 1988,
/// Sec. 6.9).
constexpr double stumpff_coefficient(int k, int j) {
    double f = 1;
    for (int m = 2; m <= 2 * j + k; ++m) f *= m;
    return (j % 2 == 0 ? 1.0 : -1.0) / f;
}
template <int K, std::size_t... J>
constexpr std::array<double, sizeof...(J)> stumpff_table(std::index_sequence<J...>) {
    return {stumpff_coefficient(K, static_cast<int>(J))...};
}
constexpr auto c2_series = stumpff_table<2>(std::make_index_sequence<long_series>{});
constexpr auto c3_series = stumpff_table<3>(std::make_index_sequence<long_series>{});

/// sum_{j < J} a_j z^j by Horner's rule, unrolled.
template <std::size_t J>
inline double horner(const std::array<double, long_series>& a, double z) noexcept {
    double p = a[J - 1];
    [&]<std::size_t... I>(std::index_sequence<I...>) {
        ((p = a[J - 2 - I] + z * p), ...);
    }
    (std::make_index_sequence<J - 1>{});
    return p;
}

/// A lane is accepted when its last Halley step is below this fraction of s: Halley's
/// method converges cubically with a constant C s^2 below ~1 on a short step, so s is then at
/// the root to 1e-21 (common practice, no source, for the margin).
constexpr double halley_accept = 1e-7;

/// One group's lanes (structure of arrays).
template <std::size_t L>
struct lane_block {
    double r0[L], inv_r0[L], eta0[L], beta[L], mu[L], s[L];
    double g0[L], g1[L], g2[L], fp[L], last[L];
};

/// G-functions G_k = s^k c_k(beta s^2) by the Stumpff series with J terms, then a Halley
/// step on the universal Kepler equation F(s) = r0 G1 + eta0 G2 + gm G3 - dt, with F' = r0 G0
/// + eta0 G1 + gm G2 = r and F'' = eta0 G0 + (gm - beta r0) G1 (Danby 1988, Secs. 6.6 and
/// 6.9). From the fifth-order start one step usually suffices; a second (and third) pass runs
/// for the whole group when some lane's step exceeded halley_accept. `last` keeps each
/// lane's last step d. The G-functions at the root s + d then follow from those at s by
/// Taylor's formula with G_k' = G_(k-1), G_0' = -beta G_1 (Danby 1988, Sec. 6.9): the caller
/// accepts only |d| <= halley_accept s, where the next term is below 1e-21 of G_k, so no
/// further series evaluation is needed.
template <std::size_t L, std::size_t J>
MOONWRIGHT_LANES_INLINE void solve_lanes(lane_block<L>& q, double h) noexcept {
    for (int pass = 0; pass < 3; ++pass) {
        for (std::size_t l = 0; l < L; ++l) {
            const double z = q.beta[l] * q.s[l] * q.s[l];
            const double c2 = horner<J>(c2_series, z), c3 = horner<J>(c3_series, z);
            const double sl = q.s[l];
            q.g0[l] = 1 - z * c2;
            q.g1[l] = sl * (1 - z * c3);
            q.g2[l] = sl * sl * c2;
            const double g3 = sl * sl * sl * c3;
            const double f = q.r0[l] * q.g1[l] + q.eta0[l] * q.g2[l] + q.mu[l] * g3 - h;
            const double fp = q.r0[l] * q.g0[l] + q.eta0[l] * q.g1[l] + q.mu[l] * q.g2[l];
            const double fpp = q.eta0[l] * q.g0[l] + (q.mu[l] - q.beta[l] * q.r0[l]) * q.g1[l];
            const double ds = -f * fp / (fp * fp - 0.5 * f * fpp);
            q.last[l] = ds;
            q.s[l] = sl + ds;
        }
        bool again = false; // NaN lanes do not ask for more passes; the caller rejects them
        for (std::size_t l = 0; l < L; ++l)
            again = again | (std::abs(q.last[l]) > halley_accept * q.s[l]);
        if (!again) break;
    }
    for (std::size_t l = 0; l < L; ++l) {
        const double d = q.last[l], b = q.beta[l];
        const double g0 = q.g0[l], g1 = q.g1[l], g2 = q.g2[l];
        q.g0[l] = g0 - b * d * (g1 + 0.5 * d * g0);
        q.g1[l] = g1 + d * (g0 - 0.5 * b * d * g1);
        q.g2[l] = g2 + d * (g1 + 0.5 * d * g0);
        q.fp[l] = q.r0[l] * q.g0[l] + q.eta0[l] * q.g1[l] + q.mu[l] * q.g2[l];
    }
}

/// Drifts orbits b .. b + used - 1 (used <= L) together in L lanes for kepler_drift_many; h =
/// |dt|, sign = the sign of dt. Lane loops are written so the compiler vectorizes them; a
/// partial group is copied to a padded buffer whose unused lanes repeat orbit b. Returns the
/// first orbit kepler_drift could not solve, or `none`.
template <std::size_t L>
MOONWRIGHT_LANES_INLINE std::size_t drift_group(std::size_t b, std::size_t used, const double* gm,
                                                double* r, double* v, double h, double sign,
                                                double dt, std::size_t none) noexcept {
    const double* rin = r + 3 * b;
    const double* vin = v + 3 * b;
    const double* gin = gm + b;
    double rpad[3 * L], vpad[3 * L], gpad[L];
    if (used < L) {
        for (std::size_t l = 0; l < L; ++l) {
            const std::size_t j = l < used ? l : 0;
            for (std::size_t k = 0; k < 3; ++k) {
                rpad[3 * l + k] = rin[3 * j + k];
                vpad[3 * l + k] = vin[3 * j + k];
            }
            gpad[l] = gin[j];
        }
        rin = rpad;
        vin = vpad;
        gin = gpad;
    }
    lane_block<L> q;
    double x[3][L], w[3][L], mu[L], rsq[L], v2[L], ok[L], z0[L];
    for (std::size_t l = 0; l < L; ++l) {
        const double x0 = rin[3 * l], x1 = rin[3 * l + 1], x2 = rin[3 * l + 2];
        // Time reversal as in kepler_drift: the reversed velocity goes forward.
        const double w0 = sign * vin[3 * l], w1 = sign * vin[3 * l + 1], w2 = sign * vin[3 * l + 2];
        x[0][l] = x0;
        x[1][l] = x1;
        x[2][l] = x2;
        w[0][l] = w0;
        w[1][l] = w1;
        w[2][l] = w2;
        mu[l] = gin[l];
        q.mu[l] = gin[l];
        rsq[l] = x0 * x0 + x1 * x1 + x2 * x2;
        v2[l] = w0 * w0 + w1 * w1 + w2 * w2;
        q.eta0[l] = x0 * w0 + x1 * w1 + x2 * w2;
        // 1 where the lane may take the fast path: a short step (dt v < r / 2), gm > 0.
        ok[l] = ((h * h * v2[l] < 0.25 * rsq[l]) & (mu[l] > 0)) ? 1.0 : 0.0;
    }
    for (std::size_t l = 0; l < L; ++l) q.r0[l] = std::sqrt(rsq[l]);
    for (std::size_t l = 0; l < L; ++l) {
        const double inv_r0 = 1 / q.r0[l];
        q.inv_r0[l] = inv_r0;
        q.beta[l] = 2 * mu[l] * inv_r0 - v2[l];
        // Start: the series reversion of t(s) = r0 s + eta0 s^2/2 + zeta s^3/6 - beta eta0
        // s^4/24 - beta zeta s^5/120 (zeta = gm - beta r0; the G-function series, Danby 1988,
        // Sec. 6.9) to fifth order in dt (Abramowitz & Stegun 1964, eq. 3.6.25, from memory;
        // checked numerically: the residual is O(dt^6)). Exact for circular orbits.
        const double a2 = 0.5 * q.eta0[l], zeta = mu[l] - q.beta[l] * q.r0[l];
        const double a3 = zeta * (1.0 / 6), a4 = -q.beta[l] * q.eta0[l] * (1.0 / 24),
                     a5 = -q.beta[l] * zeta * (1.0 / 120);
        const double u = h * inv_r0; // c1 dt, c1 = 1 / a1 = 1 / r0
        const double a22 = a2 * inv_r0, a33 = a3 * inv_r0, a44 = a4 * inv_r0, a55 = a5 * inv_r0;
        // c_k dt^k = u^k (polynomial in a_k / a1), with a1 factored out.
        const double k2 = -a22;
        const double k3 = 2 * a22 * a22 - a33;
        const double k4 = 5 * a22 * a33 - a44 - 5 * a22 * a22 * a22;
        const double k5 =
            6 * a22 * a44 + 3 * a33 * a33 + 14 * a22 * a22 * a22 * a22 - a55 - 21 * a22 * a22 * a33;
        const double s0 = u * (1 + u * (k2 + u * (k3 + u * (k4 + u * k5))));
        q.s[l] = s0;
        z0[l] = q.beta[l] * s0 * s0;
    }
    bool small_z = true;
    for (std::size_t l = 0; l < L; ++l) small_z = small_z & (std::abs(z0[l]) <= 0.15);
    // The shorter series when every lane's start value is well inside its range.
    if (small_z)
        solve_lanes<L, short_series>(q, h);
    else
        solve_lanes<L, long_series>(q, h);
    const double z_max = small_z ? short_series_z : 1.0;
    double xn[3][L], wn[3][L];
    for (std::size_t l = 0; l < L; ++l) {
        // f and g in increments, as in kepler_drift (Wisdom & Hernandez 2015).
        const double inv_r = 1 / q.fp[l];
        const double fm1 = -q.mu[l] * q.g2[l] * q.inv_r0[l];
        const double gg = q.r0[l] * q.g1[l] + q.eta0[l] * q.g2[l];
        const double fdot = -q.mu[l] * q.g1[l] * inv_r * q.inv_r0[l];
        const double gdm1 = -q.mu[l] * q.g2[l] * inv_r;
        xn[0][l] = x[0][l] + (fm1 * x[0][l] + gg * w[0][l]);
        xn[1][l] = x[1][l] + (fm1 * x[1][l] + gg * w[1][l]);
        xn[2][l] = x[2][l] + (fm1 * x[2][l] + gg * w[2][l]);
        wn[0][l] = sign * (w[0][l] + (fdot * x[0][l] + gdm1 * w[0][l]));
        wn[1][l] = sign * (w[1][l] + (fdot * x[1][l] + gdm1 * w[1][l]));
        wn[2][l] = sign * (w[2][l] + (fdot * x[2][l] + gdm1 * w[2][l]));
    }
    // The last Halley step below halley_accept s: by the cubic convergence s is then at the
    // root to round-off. Anything else (and NaN) goes to the bracketed solver.
    bool good[L];
    for (std::size_t l = 0; l < L; ++l) {
        const double sl = q.s[l], z = q.beta[l] * sl * sl, fp = q.fp[l];
        good[l] = (ok[l] != 0.0) & (sl > 0) & (std::abs(z) <= z_max) &
                  (std::abs(q.last[l]) <= halley_accept * sl) & (fp > 0) &
                  (fp <= std::numeric_limits<double>::max());
    }
    std::size_t failed = none;
    for (std::size_t l = 0; l < used; ++l) {
        const std::size_t j = b + l;
        if (!good[l]) {
            if (!kepler_drift(gm[j], r + 3 * j, v + 3 * j, dt).converged && failed == none)
                failed = j;
            continue;
        }
        r[3 * j] = xn[0][l];
        r[3 * j + 1] = xn[1][l];
        r[3 * j + 2] = xn[2][l];
        v[3 * j] = wn[0][l];
        v[3 * j + 1] = wn[1][l];
        v[3 * j + 2] = wn[2][l];
    }
    return failed;
}

} // namespace

MOONWRIGHT_CLONES
std::size_t kepler_drift_many(std::size_t m, const double* gm, double* r, double* v,
                              double dt) noexcept {
    if (dt == 0.0) return m;
    const double sign = dt < 0 ? -1.0 : 1.0;
    const double h = std::abs(dt);
    std::size_t failed = m;
    std::size_t b = 0;
    // Groups of four lanes, then the rest in pairs (two doubles fill an SSE2 register).
    for (; b + 4 <= m; b += 4)
        failed = std::min(failed, drift_group<4>(b, 4, gm, r, v, h, sign, dt, m));
    for (; b < m; b += 2)
        failed = std::min(
            failed, drift_group<2>(b, std::min<std::size_t>(2, m - b), gm, r, v, h, sign, dt, m));
    return failed;
}

} // namespace moonwright
