// The tangent Kepler drift by forward-mode differentiation of the universal-variable solution.
#include "engine/kepler_variation.hpp"

#include "engine/constants.hpp"
#include "engine/kepler_solver.hpp"

#include <cmath>

namespace moonwright {

namespace {

/// A dual number a + b eps, eps^2 = 0: b carries the directional derivative exactly.
struct dual {
    double a = 0, b = 0;
};
inline dual operator+(dual x, dual y) {
    return {x.a + y.a, x.b + y.b};
}
inline dual operator-(dual x, dual y) {
    return {x.a - y.a, x.b - y.b};
}
inline dual operator*(dual x, dual y) {
    return {x.a * y.a, x.a * y.b + x.b * y.a};
}
inline dual operator/(double c, dual x) {
    return {c / x.a, -c * x.b / (x.a * x.a)};
}
inline dual operator/(dual x, dual y) {
    return {x.a / y.a, (x.b * y.a - x.a * y.b) / (y.a * y.a)};
}
inline dual operator*(double c, dual x) {
    return {c * x.a, c * x.b};
}
inline dual operator/(dual x, double c) {
    return {x.a / c, x.b / c};
}
inline dual operator-(double c, dual x) {
    return {c - x.a, -x.b};
}
inline dual sqrt(dual x) {
    const double s = std::sqrt(x.a);
    return {s, x.b / (2 * s)};
}

struct dual_g {
    dual g0, g1, g2, g3;
};

/// Danby's G-functions G_k(s, beta) = s^k c_k(beta s^2) on dual numbers, by quartering and
/// doubling (Danby 1988, Sec. 6.9). Only the derivative parts are used: the value parts agree
/// with stumpff() to a few ulp, not bitwise (stumpff() now sums its series directly).
dual_g g_functions(dual beta, dual s) {
    dual z = beta * s * s;
    int n = 0;
    while (std::abs(z.a) > 0.1) {
        z = 0.25 * z;
        ++n;
    }
    dual c2 =
        0.5 *
        (1 - z / 12 * (1 - z / 30 * (1 - z / 56 * (1 - z / 90 * (1 - z / 132 * (1 - z / 182))))));
    dual c3 =
        (1 - z / 20 * (1 - z / 42 * (1 - z / 72 * (1 - z / 110 * (1 - z / 156 * (1 - z / 210)))))) /
        6.0;
    dual c1 = 1 - z * c3;
    dual c0 = 1 - z * c2;
    for (int k = 0; k < n; ++k) {
        const dual o0 = c0, o1 = c1, o2 = c2, o3 = c3;
        c3 = 0.25 * (o2 + o0 * o3);
        c2 = 0.5 * (o1 * o1);
        c1 = o0 * o1;
        c0 = 2 * (o0 * o0) - dual{1, 0};
    }
    const dual s2 = s * s;
    return {c0, s * c1, s2 * c2, s2 * s * c3};
}

} // namespace

bool kepler_drift_variation(double gm, double* r, double* v, double* dr, double* dv,
                            double dt) noexcept {
    const double r_in[3] = {r[0], r[1], r[2]};
    const double v_in[3] = {v[0], v[1], v[2]};
    const kepler_result res = kepler_drift(gm, r, v, dt);
    if (!res.converged) return false;
    if (dt == 0.0) return true;
    // kepler_drift propagates the reversed velocity forward for dt < 0; so do we.
    const bool backward = dt < 0;
    const double sign = backward ? -1.0 : 1.0;
    dt = std::abs(dt);
    dual R[3], V[3];
    for (int k = 0; k < 3; ++k) {
        R[k] = {r_in[k], dr[k]};
        V[k] = {sign * v_in[k], sign * dv[k]};
    }
    const dual r0 = sqrt(R[0] * R[0] + R[1] * R[1] + R[2] * R[2]);
    const dual eta0 = R[0] * V[0] + R[1] * V[1] + R[2] * V[2];
    const dual beta = 2 * gm / r0 - (V[0] * V[0] + V[1] * V[1] + V[2] * V[2]);
    // The solver reduces elliptic steps modulo the period; the anomaly of the whole step adds
    // k periods in s (G3 grows by the period per 2 pi / sqrt(beta), the others are periodic).
    double s = res.s;
    auto residual = [&](double x) {
        const dual_g g = g_functions(dual{beta.a, 0}, dual{x, 0});
        return r0.a * g.g1.a + eta0.a * g.g2.a + gm * g.g3.a - dt;
    };
    if (beta.a > 0) {
        const double sb = std::sqrt(beta.a);
        const double period = constants::two_pi * gm / (beta.a * sb);
        if (dt >= period) {
            double k = std::floor(dt / period);
            double f = residual(s + k * constants::two_pi / sb);
            if (f > 0.5 * period) k -= 1;
            if (f < -0.5 * period) k += 1;
            s += k * constants::two_pi / sb;
        }
    }
    // Implicit function theorem on F(s; r0, eta0, beta) = r0 G1 + eta0 G2 + gm G3 - dt = 0:
    // ds = -(dF at fixed s) / (dF/ds), dF/ds = r0 G0 + eta0 G1 + gm G2 = r (Danby 1988, 6.9).
    dual_g g = g_functions(beta, dual{s, 0});
    const dual f_fixed = r0 * g.g1 + eta0 * g.g2 + gm * g.g3;
    const double dfds = r0.a * g.g0.a + eta0.a * g.g1.a + gm * g.g2.a;
    const dual S{s, -f_fixed.b / dfds};
    g = g_functions(beta, S);
    // f and g functions in increment form, as in kepler_drift.
    const dual rr = r0 * g.g0 + eta0 * g.g1 + gm * g.g2;
    const dual fm1 = -gm * g.g2 / r0;
    const dual gg = r0 * g.g1 + eta0 * g.g2;
    const dual fdot = -gm * g.g1 / (rr * r0);
    const dual gdm1 = -gm * g.g2 / rr;
    for (int k = 0; k < 3; ++k) {
        const dual rn = R[k] + (fm1 * R[k] + gg * V[k]);
        const dual vn = V[k] + (fdot * R[k] + gdm1 * V[k]);
        dr[k] = rn.b;
        dv[k] = sign * vn.b;
    }
    return true;
}

} // namespace moonwright
