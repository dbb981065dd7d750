// The analytic rules; sources are named beside each declaration in analytic_rules.hpp.
#include "engine/analytic_rules.hpp"

#include "engine/constants.hpp"

#include <cassert>
#include <cmath>
#include <numeric>

namespace moonwright {

namespace c = constants;

double mixture_density(std::span<const double> fractions, std::span<const double> densities) {
    assert(fractions.size() == densities.size());
    double inv = 0.0;
    for (size_t k = 0; k < fractions.size(); ++k) inv += fractions[k] / densities[k];
    return 1.0 / inv;
}

double sphere_volume(double r) {
    return 4.0 / 3.0 * c::pi * r * r * r;
}
double ellipsoid_volume(double a, double b, double cc) {
    return 4.0 / 3.0 * c::pi * a * b * cc;
}
double volume_equivalent_radius(double a, double b, double cc) {
    return std::cbrt(a * b * cc);
}

double surface_gravity(double mass, double radius) {
    return c::G * mass / (radius * radius);
}
double escape_velocity(double mass, double radius) {
    return std::sqrt(2.0 * c::G * mass / radius);
}

double kepler_period(double a, double m1, double m2) {
    return c::two_pi * std::sqrt(a * a * a / (c::G * (m1 + m2)));
}
double kepler_semi_major_axis(double period, double m1, double m2) {
    return std::cbrt(c::G * (m1 + m2) * period * period / (4.0 * c::pi * c::pi));
}

double hill_radius(double a, double e, double m, double big_m) {
    return a * (1.0 - e) * std::cbrt(m / (3.0 * big_m));
}

double roche_limit_fluid(double rp, double rho_p, double rho_s) {
    return 2.44 * rp * std::cbrt(rho_p / rho_s);
}
double roche_limit_fluid_rotating(double rp, double rho_p, double rho_s) {
    return 2.456 * rp * std::cbrt(rho_p / rho_s);
}
double roche_limit_rigid(double rp, double rho_p, double rho_s) {
    return 1.26 * rp * std::cbrt(rho_p / rho_s);
}

double stability_limit_fraction(double e_parent, double e_satellite, bool retrograde) {
    if (retrograde) return 0.9309 * (1.0 - 1.0764 * e_parent - 0.9812 * e_satellite);
    return 0.4895 * (1.0 - 1.0305 * e_parent - 0.2738 * e_satellite);
}
double stability_limit(double a_parent, double e_parent, double m_parent, double m_star,
                       double e_satellite, bool retrograde) {
    const double r_hill = a_parent * std::cbrt(m_parent / (3.0 * m_star));
    return stability_limit_fraction(e_parent, e_satellite, retrograde) * r_hill;
}

double mutual_hill_radius(double a1, double a2, double m1, double m2, double big_m) {
    return std::cbrt((m1 + m2) / (3.0 * big_m)) * 0.5 * (a1 + a2);
}
double mutual_hill_spacing(double a1, double a2, double m1, double m2, double big_m) {
    return std::abs(a2 - a1) / mutual_hill_radius(a1, a2, m1, m2, big_m);
}

double synchronous_orbit_radius(double mass, double rotation_period) {
    return std::cbrt(c::G * mass * rotation_period * rotation_period / (4.0 * c::pi * c::pi));
}

double j2_from_rotation(double rotation_period, double radius, double mass, double k2_fluid) {
    const double omega = c::two_pi / rotation_period;
    const double q = omega * omega * radius * radius * radius / (c::G * mass);
    return k2_fluid * q / 3.0;
}

double fluid_love_number(double mass, double density) {
    const bool giant = mass >= 10.0 * c::M_earth && density < 3000.0;
    return giant ? 0.5 : 0.94;
}

std::optional<commensurability> nearest_commensurability(double period_ratio, double tolerance,
                                                         int max_order, int max_p) {
    for (int order = 1; order <= max_order; ++order) {
        std::optional<commensurability> best;
        for (int q = 1; q + order <= max_p; ++q) {
            const int p = q + order;
            if (std::gcd(p, q) != 1) continue;
            const double offset = period_ratio / (static_cast<double>(p) / q) - 1.0;
            if (std::abs(offset) > tolerance) continue;
            if (!best || std::abs(offset) < std::abs(best->offset)) best = {p, q, offset};
        }
        if (best) return best;
    }
    return std::nullopt;
}

shape_class classify_shape(double a, double b, double cc, double tolerance) {
    const bool ab = std::abs(a - b) <= tolerance * a;
    const bool bc = std::abs(b - cc) <= tolerance * b;
    if (ab && bc) return shape_class::sphere;
    if (ab) return shape_class::oblate;  // a = b > c
    if (bc) return shape_class::prolate; // a > b = c
    return shape_class::triaxial;
}

} // namespace moonwright
