// Small helpers that build designs in code for the check tests (no design files involved).
#pragma once

#include "engine/constants.hpp"
#include "engine/error.hpp"

#include "engine/design.hpp"

#include <string>

namespace moonwright::testing {

/// A star given by mass and radius.
inline body_spec make_star(const std::string& name, double mass_kg, double radius_m) {
    body_spec b;
    b.name = name;
    b.mass_kg = mass_kg;
    b.radius_m = radius_m;
    return b;
}

/// A body given by mass and radius on an orbit with every angle written (nothing drawn).
inline body_spec make_body(const std::string& name, const std::string& orbits, double mass_kg,
                           double radius_m, length_spec a, double e = 0.0, double i_rad = 0.0) {
    body_spec b;
    b.name = name;
    b.orbits = orbits;
    b.mass_kg = mass_kg;
    b.radius_m = radius_m;
    orbit_spec o;
    o.a = a;
    o.e = e;
    o.i_rad = i_rad;
    o.node_rad = 0.0;
    o.peri_rad = 0.0;
    o.mean_anomaly_rad = 0.0;
    b.orbit = o;
    return b;
}

inline length_spec metres(double m) {
    return {m, length_ref::absolute};
}
inline length_spec parent_radii(double k) {
    return {k, length_ref::parent_radii};
}
inline length_spec parent_hill(double k) {
    return {k, length_ref::parent_hill};
}

/// Sun-like star, Earth-like planet at 1 AU, nothing else: a base to add moons to.
/// Values: IAU 2015 B3 nominal Sun and Earth (engine/constants.hpp).
inline design sun_earth() {
    design d;
    d.name = "test system";
    d.bodies.push_back(make_star("Star", constants::M_sun, constants::R_sun));
    d.bodies.push_back(
        make_body("Planet", "Star", constants::M_earth, constants::R_earth, metres(constants::au)));
    return d;
}

} // namespace moonwright::testing
