// Hand-filled resolved systems for the tides tests (no design loading, no resolve()).
#pragma once

#include "engine/constants.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"

#include <cmath>
#include <string>

namespace moonwright::test {

inline resolved_body make_star(const std::string& name, double mass) {
    resolved_body b;
    b.name = name;
    b.kind = body_kind::star;
    b.mass_kg = mass;
    b.radius_m = constants::R_sun;
    return b;
}

inline resolved_orbit make_orbit(double a, double e = 0, double i = 0, bool retro = false) {
    resolved_orbit o;
    o.a_m = a;
    o.e = e;
    o.i_rad = i;
    o.retrograde = retro;
    return o;
}

/// Appends `b` as a child of `parent`; returns its index.
inline int add_body(resolved_system& s, resolved_body b, int parent) {
    b.index = static_cast<int>(s.bodies.size());
    b.parent = parent;
    s.bodies.push_back(b);
    if (parent >= 0) s.bodies[parent].children.push_back(b.index);
    return b.index;
}

inline resolved_body make_body(const std::string& name, body_kind kind, double mass, double radius,
                               resolved_orbit orbit) {
    resolved_body b;
    b.name = name;
    b.kind = kind;
    b.mass_kg = mass;
    b.radius_m = radius;
    b.density_kg_m3 = mass / (4.0 / 3.0 * constants::pi * radius * radius * radius);
    b.orbit = orbit;
    return b;
}

} // namespace moonwright::test
