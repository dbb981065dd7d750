// Moon systems for the MEGNO and checkpoint tests: a Jupiter-mass planet at 5 AU with two moons
// at a chosen spacing in mutual Hill radii and a chosen eccentricity.
#pragma once

#include "../nbody/nbody_fixtures.hpp"
#include "engine/nbody_system.hpp"

#include <cmath>

namespace moonwright::test {

/// Mutual Hill radius of two moons of masses m1, m2 at a1, a2 about a planet of mass mp
/// (Gladman 1993, Icarus 106, 247): ((m1 + m2) / (3 mp))^(1/3) (a1 + a2) / 2.
inline double mutual_hill_radius(double m1, double m2, double mp, double a1, double a2) {
    return std::cbrt((m1 + m2) / (3 * mp)) * 0.5 * (a1 + a2);
}

/// Sun, a Jupiter-mass planet at 5 AU (circular), and two moons of mass m: the inner at a1, the
/// outer at a1 + spacing mutual Hill radii, both with eccentricity e (pericentres apart).
inline resolved_system two_moons(double spacing, double e, double m = 1e23, double a1 = 4.2e8,
                                 double j2 = 0) {
    namespace c = moonwright::constants;
    // Solve a2 = a1 + spacing * R_H(a1, a2), R_H linear in a2: a2 (1 - k/2) = a1 (1 + k/2).
    const double k = spacing * std::cbrt(2 * m / (3 * c::M_jup));
    const double a2 = a1 * (1 + 0.5 * k) / (1 - 0.5 * k);
    resolved_system rs;
    const int s = add_body(rs, "Orlan", body_kind::star, -1, c::M_sun, c::R_sun);
    const int p = add_body(rs, "Orlan b", body_kind::planet, s, c::M_jup, c::R_jup,
                           orbit(5 * c::au, 0.0, 0.0, 0.0, 0.0, 0.5), j2);
    add_body(rs, "Orlan b I", body_kind::moon, p, m, 1.5e6, orbit(a1, e, 0.01, 0.0, 0.0, 0.0));
    add_body(rs, "Orlan b II", body_kind::moon, p, m, 1.5e6, orbit(a2, e, 0.02, 0.0, c::pi, 2.0));
    return rs;
}

/// Period [s] of a moon at a about a Jupiter-mass planet.
inline double moon_period(double a) {
    namespace c = moonwright::constants;
    return c::two_pi * std::sqrt(a * a * a / c::GM_jup);
}

} // namespace moonwright::test
