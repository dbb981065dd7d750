// Orbital elements <-> Cartesian state (Murray & Dermott 1999; Danby 1988).
#include "engine/orbital_elements.hpp"

#include "engine/constants.hpp"
#include "engine/error.hpp"

#include <cmath>
#include <limits>
#include <string>

namespace moonwright {

namespace {

inline vec3 cross(const vec3& a, const vec3& b) {
    return {a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]};
}
inline double dot(const vec3& a, const vec3& b) {
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}
inline double norm(const vec3& a) {
    return std::sqrt(dot(a, a));
}

/// Wraps an angle into (-pi, pi].
inline double wrap(double x) {
    x = std::remainder(x, constants::two_pi);
    return x <= -constants::pi ? x + constants::two_pi : x;
}

[[noreturn]] void bad(const std::string& field, double found, const std::string& expected) {
    throw input_error(source_location{"<orbital elements>", 0, 0}, field, std::to_string(found),
                      expected);
}

} // namespace

double semi_major_axis(const orbital_elements& el) noexcept {
    if (el.e == 1.0) return std::numeric_limits<double>::infinity();
    return el.q / (1 - el.e);
}

double mean_anomaly(double e, double nu) {
    if (e < 1) {
        const double ea = 2 * std::atan2(std::sqrt(1 - e) * std::sin(nu / 2),
                                         std::sqrt(1 + e) * std::cos(nu / 2));
        return wrap(ea - e * std::sin(ea));
    }
    if (e == 1) {
        const double d = std::tan(nu / 2);
        return d + d * d * d / 3;
    }
    const double h = 2 * std::atanh(std::sqrt((e - 1) / (e + 1)) * std::tan(nu / 2));
    return e * std::sinh(h) - h;
}

double true_anomaly(double e, double m) {
    if (e < 1) {
        m = wrap(m);
        // f(E) = E - e sin E - m is increasing; f(-pi) <= 0 <= f(pi).
        double lo = -constants::pi, hi = constants::pi;
        double ea = m + 0.85 * e * (m > 0 ? 1 : (m < 0 ? -1 : 0)); // Danby 1988, Sec. 6.6
        if (!(ea > lo && ea < hi)) ea = 0.5 * (lo + hi);
        for (int it = 0; it < 200; ++it) {
            const double f = ea - e * std::sin(ea) - m;
            if (f == 0) break;
            if (f < 0)
                lo = ea;
            else
                hi = ea;
            double next = ea - f / (1 - e * std::cos(ea));
            if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
            if (std::abs(next - ea) <=
                2 * std::numeric_limits<double>::epsilon() * std::max(1.0, std::abs(ea))) {
                ea = next;
                break;
            }
            ea = next;
        }
        return 2 *
               std::atan2(std::sqrt(1 + e) * std::sin(ea / 2), std::sqrt(1 - e) * std::cos(ea / 2));
    }
    if (e == 1) {
        // Barker: D^3 + 3 D - 3 M = 0, Cardano: D = w - 1/w, w = cbrt(3M/2 + sqrt(1 + 9M^2/4)).
        const double am = std::abs(m);
        const double w = std::cbrt(1.5 * am + std::sqrt(1 + 2.25 * am * am));
        const double d = w - 1 / w;
        return 2 * std::atan(m < 0 ? -d : d);
    }
    // Hyperbolic: f(H) = e sinh H - H - |M|, increasing; asinh(|M|/e) <= H <= asinh(|M|/(e-1)).
    const double am = std::abs(m);
    double lo = std::asinh(am / e), hi = std::asinh(am / (e - 1));
    double h = lo;
    for (int it = 0; it < 200; ++it) {
        const double f = e * std::sinh(h) - h - am;
        if (f == 0) break;
        if (f < 0)
            lo = h;
        else
            hi = h;
        double next = h - f / (e * std::cosh(h) - 1);
        if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
        if (std::abs(next - h) <=
            2 * std::numeric_limits<double>::epsilon() * std::max(1.0, std::abs(h))) {
            h = next;
            break;
        }
        h = next;
    }
    if (m < 0) h = -h;
    return 2 * std::atan2(std::sqrt(e + 1) * std::sinh(h / 2), std::sqrt(e - 1) * std::cosh(h / 2));
}

orbital_elements elements_from_mean(double a, double e, double i, double node, double peri,
                                    double mean_anom) {
    if (!(e >= 0) || e == 1) bad("e", e, "0 <= e < 1 (with a > 0) or e > 1 (with a < 0)");
    if (e < 1 && !(a > 0)) bad("a", a, "a > 0 for an elliptic orbit");
    if (e > 1 && !(a < 0)) bad("a", a, "a < 0 for a hyperbolic orbit");
    orbital_elements el;
    el.q = a * (1 - e);
    el.e = e;
    el.i = i;
    el.node = node;
    el.peri = peri;
    el.nu = true_anomaly(e, mean_anom);
    return el;
}

cartesian_state elements_to_cartesian(double gm, const orbital_elements& el) {
    if (!(el.q > 0)) bad("q", el.q, "a pericentre distance q > 0");
    if (!(el.e >= 0)) bad("e", el.e, "e >= 0");
    if (!(gm > 0)) bad("gm", gm, "gm > 0");
    const double cnu = std::cos(el.nu), snu = std::sin(el.nu);
    const double denom = 1 + el.e * cnu;
    if (!(denom > 0)) bad("nu", el.nu, "a true anomaly inside the asymptotes, 1 + e cos(nu) > 0");
    const double p = el.q * (1 + el.e);
    const double rr = p / denom;
    const double vfac = std::sqrt(gm / p);
    // Perifocal frame, then rotation Rz(node) Rx(i) Rz(peri) (Murray & Dermott eq. 2.119).
    const double px = rr * cnu, py = rr * snu;
    const double vx = -vfac * snu, vy = vfac * (el.e + cnu);
    const double co = std::cos(el.node), so = std::sin(el.node);
    const double cw = std::cos(el.peri), sw = std::sin(el.peri);
    const double ci = std::cos(el.i), si = std::sin(el.i);
    const double p11 = co * cw - so * sw * ci, p12 = -co * sw - so * cw * ci;
    const double p21 = so * cw + co * sw * ci, p22 = -so * sw + co * cw * ci;
    const double p31 = sw * si, p32 = cw * si;
    cartesian_state s;
    s.r = {p11 * px + p12 * py, p21 * px + p22 * py, p31 * px + p32 * py};
    s.v = {p11 * vx + p12 * vy, p21 * vx + p22 * vy, p31 * vx + p32 * vy};
    return s;
}

orbital_elements cartesian_to_elements(double gm, const cartesian_state& s) {
    const vec3 h = cross(s.r, s.v);
    const double hn = norm(h);
    const double rn = norm(s.r);
    orbital_elements el;
    if (!(hn > 0) || !(rn > 0) || !(gm > 0)) {
        throw numerical_error("cartesian_to_elements: degenerate state (r = 0 or r parallel to v)");
    }
    const vec3 vxh = cross(s.v, h);
    const vec3 ev = {vxh[0] / gm - s.r[0] / rn, vxh[1] / gm - s.r[1] / rn,
                     vxh[2] / gm - s.r[2] / rn};
    el.e = norm(ev);
    const double p = hn * hn / gm;
    el.q = p / (1 + el.e);
    el.i = std::atan2(std::hypot(h[0], h[1]), h[2]);
    const vec3 hhat = {h[0] / hn, h[1] / hn, h[2] / hn};
    // Node vector z x h; on an equatorial orbit use the x axis as the reference direction.
    vec3 nhat = {-h[1], h[0], 0.0};
    const double nn = norm(nhat);
    if (nn > 1e-15 * hn) {
        nhat = {nhat[0] / nn, nhat[1] / nn, 0.0};
        el.node = std::atan2(nhat[1], nhat[0]);
    } else {
        nhat = {1.0, 0.0, 0.0};
        el.node = 0.0;
    }
    // Angles in the orbit plane, measured in the sense of h: atan2(h.(a x b), a.b).
    auto plane_angle = [&](const vec3& a, const vec3& b) {
        return std::atan2(dot(hhat, cross(a, b)), dot(a, b));
    };
    if (el.e > 0) {
        el.peri = plane_angle(nhat, ev);
        el.nu = plane_angle(ev, s.r);
    } else {
        el.peri = 0.0;
        el.nu = plane_angle(nhat, s.r);
    }
    return el;
}

} // namespace moonwright
