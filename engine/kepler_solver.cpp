// Universal-variable Kepler solver (Danby 1988; Wisdom & Hernandez 2015).
#include "engine/kepler_solver.hpp"

#include "engine/constants.hpp"

#include <cmath>
#include <limits>

namespace moonwright {

stumpff_values stumpff(double z) noexcept {
    stumpff_values c;
    if (!std::isfinite(z)) {
        const double nan = std::numeric_limits<double>::quiet_NaN();
        return {nan, nan, nan, nan};
    }
    // Quarter z until |z| <= 0.1, where seven series terms reach round-off (Danby 1988, 6.9).
    int n = 0;
    while (std::abs(z) > 0.1) {
        z *= 0.25;
        ++n;
    }
    c.c2 =
        0.5 *
        (1 - z / 12 * (1 - z / 30 * (1 - z / 56 * (1 - z / 90 * (1 - z / 132 * (1 - z / 182))))));
    c.c3 =
        (1 - z / 20 * (1 - z / 42 * (1 - z / 72 * (1 - z / 110 * (1 - z / 156 * (1 - z / 210)))))) /
        6.0;
    c.c1 = 1 - z * c.c3;
    c.c0 = 1 - z * c.c2;
    // Doubling formulas: c0(4z) = 2 c0^2 - 1, c1(4z) = c0 c1, c2(4z) = c1^2 / 2,
    // c3(4z) = (c2 + c0 c3) / 4 (Danby 1988, eq. 6.9.x).
    for (int k = 0; k < n; ++k) {
        const double c0 = c.c0, c1 = c.c1, c2 = c.c2, c3 = c.c3;
        c.c3 = 0.25 * (c2 + c0 * c3);
        c.c2 = 0.5 * c1 * c1;
        c.c1 = c0 * c1;
        c.c0 = 2 * c0 * c0 - 1;
    }
    return c;
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
        // A short step (small in units of r0 / v): the Taylor start is better.
        if (dt * std::sqrt(v2) < 0.1 * r0) s = dt / r0 * (1 - 0.5 * eta0 * dt / (r0 * r0));
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
        if (dt * std::sqrt(v2) < 0.1 * r0 || !(s > 0))
            s = dt / r0 * (1 - 0.5 * eta0 * dt / (r0 * r0));
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

    const double rr = fp;                       // r at the new point
    const double fm1 = -gm * g.g2 / r0;         // f - 1
    const double gg = r0 * g.g1 + eta0 * g.g2;  // g = dt - gm G3, without cancellation
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
