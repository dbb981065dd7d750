// Hand-filled resolved systems for the N-body tests (resolve() is not called here).
#pragma once

#include "engine/constants.hpp"
#include "engine/resolved_system.hpp"

#include <optional>
#include <string>

namespace moonwright::test {

inline resolved_orbit orbit(double a, double e, double i = 0, double node = 0, double peri = 0,
                            double mean_anomaly = 0) {
    resolved_orbit o;
    o.a_m = a;
    o.e = e;
    o.i_rad = i;
    o.node_rad = node;
    o.peri_rad = peri;
    o.mean_anomaly_rad = mean_anomaly;
    o.retrograde = i > constants::pi / 2;
    return o;
}

/// Appends a body; parent -1 for the star. Fills children and index.
inline int add_body(resolved_system& rs, const std::string& name, body_kind kind, int parent,
                    double mass, double radius, std::optional<resolved_orbit> o = {},
                    double j2 = 0) {
    resolved_body b;
    b.name = name;
    b.kind = kind;
    b.index = static_cast<int>(rs.bodies.size());
    b.parent = parent;
    b.mass_kg = mass;
    b.radius_m = radius;
    b.j2 = j2;
    b.orbit = o;
    rs.bodies.push_back(b);
    if (parent >= 0) rs.bodies[static_cast<std::size_t>(parent)].children.push_back(b.index);
    return b.index;
}

} // namespace moonwright::test
