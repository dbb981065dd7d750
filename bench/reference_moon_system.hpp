// The reference moon system of the speed benchmarks, shared by bench_nbody and
// bench_matched_accuracy so both measure the same bodies.
#pragma once

#include "engine/constants.hpp"
#include "engine/design.hpp"
#include "engine/resolved_system.hpp"

#include <optional>

namespace moonwright::bench {

/// A near-circular orbit (e = 0.001) of semi-major axis a [m], inclination i [rad] and mean
/// anomaly m [rad].
inline resolved_orbit near_circular_orbit(double a, double i, double m) {
    resolved_orbit o;
    o.a_m = a;
    o.e = 0.001;
    o.i_rad = i;
    o.mean_anomaly_rad = m;
    return o;
}

/// Invented planet radius [m]: 1.05 Earth radii, the value bench_adaptive uses.
inline constexpr double reference_planet_radius_m = 1.05 * constants::R_earth;

/// Sun-like star; planet of 1.2 Earth masses at 1 AU, e = 0.02; five moons of 1e-2, 1e-4,
/// 1e-5, 1e-5, 1e-6 Earth masses, near-circular and prograde at 5, 12, 25, 45, 70 planet radii.
/// Indices: 0 star, 1 planet, 2..6 the moons from the inside out. All names are invented.
inline resolved_system reference_moon_system() {
    namespace c = moonwright::constants;
    resolved_system rs;
    auto add = [&](const char* name, body_kind kind, int parent, double mass, double radius,
                   std::optional<resolved_orbit> o) {
        resolved_body b;
        b.name = name;
        b.kind = kind;
        b.index = static_cast<int>(rs.bodies.size());
        b.parent = parent;
        b.mass_kg = mass;
        b.radius_m = radius;
        b.orbit = o;
        rs.bodies.push_back(b);
        if (parent >= 0) rs.bodies[static_cast<std::size_t>(parent)].children.push_back(b.index);
    };
    const double rp = reference_planet_radius_m;
    add("Hale", body_kind::star, -1, c::M_sun, c::R_sun, {});
    resolved_orbit po = near_circular_orbit(c::au, 0.0, 0.5);
    po.e = 0.02;
    add("Hale b", body_kind::planet, 0, 1.2 * c::M_earth, rp, po);
    const double masses[5] = {1e-2, 1e-4, 1e-5, 1e-5, 1e-6};
    const double dist[5] = {5, 12, 25, 45, 70};
    const char* names[5] = {"Hale b I", "Hale b II", "Hale b III", "Hale b IV", "Hale b V"};
    for (int k = 0; k < 5; ++k) {
        add(names[k], body_kind::moon, 1, masses[k] * c::M_earth, 1e6,
            near_circular_orbit(dist[k] * rp, 0.01 * (k + 1), 1.3 * k));
    }
    return rs;
}

} // namespace moonwright::bench
