// Universal-variable Kepler solver (Danby 1988; Wisdom & Hernandez 2015).
#include "engine/kepler_solver.hpp"

#include "engine/constants.hpp"

#include <cmath>
#include <limits>

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
    // (Evaluating these in long double was tried: with the Wisdom–Holman kick also exact it
    // took the two-body e = 0.9 energy error over 1e5 orbits from 4.0e-12 to 1e-13, but the
    // kick's own round-off keeps the map near 3.4e-12, and it cost ~50% more per drift.)
    const double rr = fp;                       // r at the new point
    const double fm1 = -gm * g.g2 / r0;         // f - 1
    const double gg = r0 * g.g1 + eta0 * g.g2;  // g
    const double fdot = -gm * g.g1 / (rr * r0); // f'
    const double gdm1 = -gm * g.g2 / rr;        // g' - 1
    double rn[3], vn[3];
    for (int k = 0; k < 3; ++k) {
        rn[k] = r[k] + (fm1 * r[k] + gg * vv[k]);
        vn[k] = vv[k] + (fdot * r[k] + gdm1 * vv[k]);
    }
    for (int k = 0; k < 3; ++k) {
        r[k] = rn[k];
        v[k] = backward ? -vn[k] : vn[k];
    }
    return res;
}

} // namespace moonwright
