// The design check on real systems: derived values against published or well-known figures.
// Body data below are recalled values (from memory) unless a source is named beside them.
#include "design_builders.hpp"

#include "engine/design_check.hpp"

#include <doctest/doctest.h>

using namespace moonwright;
using namespace moonwright::testing;
namespace c = moonwright::constants;

namespace {
const finding* find_code(const check_report& r, const std::string& code, const std::string& body) {
    for (const auto& f : r.findings)
        if (f.code == code && f.body == body) return &f;
    return nullptr;
}
const body_check& body(const check_report& r, const std::string& name) {
    for (const auto& b : r.bodies)
        if (b.name == name) return b;
    throw std::runtime_error("no body " + name);
}

/// Earth and Moon: Moon mass 7.342e22 kg, radius 1737.4 km, a = 384,400 km, e = 0.0549;
/// Earth's sidereal day 86164.1 s (from memory). Earth: IAU 2015 B3 nominal GM and radius.
check_report earth_moon() {
    design d = sun_earth();
    d.bodies[1].rotation_period_s = 86164.1;
    d.bodies.push_back(make_body("Moon", "Planet", 7.342e22, 1.7374e6, metres(3.844e8), 0.0549));
    return run_check(resolve(d));
}
} // namespace

TEST_CASE("Earth-Moon: barycentre inside the Earth, about 4,670 km from its centre") {
    // From memory: the Earth-Moon barycentre lies about 4,670 km from Earth's centre.
    const auto r = earth_moon();
    const auto& moon = body(r, "Moon");
    CHECK(*moon.barycentre_offset_m / 1e3 == doctest::Approx(4670).epsilon(0.01));
    CHECK_FALSE(moon.double_body);
    CHECK_FALSE(find_code(r, "double_body", "Moon"));
}

TEST_CASE("Pluto-Charon: barycentre outside Pluto, a double body") {
    // From memory: Pluto 1.303e22 kg, radius 1188 km; Charon 1.586e21 kg, radius 606 km,
    // a = 19,596 km; the barycentre lies about 2,100 km from Pluto's centre, outside Pluto.
    design d;
    d.bodies.push_back(make_star("Sun", c::M_sun, c::R_sun));
    d.bodies.push_back(make_body("Pluto", "Sun", 1.303e22, 1.188e6, metres(39.5 * c::au), 0.25));
    d.bodies.push_back(make_body("Charon", "Pluto", 1.586e21, 6.06e5, metres(1.9596e7)));
    const auto r = run_check(resolve(d));
    const auto& charon = body(r, "Charon");
    CHECK(*charon.barycentre_offset_m / 1e3 == doctest::Approx(2100).epsilon(0.02));
    CHECK(charon.double_body);
    REQUIRE(find_code(r, "double_body", "Charon"));
    CHECK_FALSE(r.has_errors());
}

TEST_CASE("Earth: surface gravity, escape velocity, geostationary radius") {
    const auto r = earth_moon();
    const auto& e = body(r, "Planet");
    // GM/R^2 at the equatorial radius without rotation: 9.798 m/s^2 (from IAU 2015 B3 values).
    CHECK(e.surface_gravity_m_s2 == doctest::Approx(9.798).epsilon(0.001));
    CHECK(e.surface_gravity_g == doctest::Approx(0.9991).epsilon(0.001));
    // Escape velocity 11.19 km/s (from memory, handbook value).
    CHECK(e.escape_velocity_m_s / 1e3 == doctest::Approx(11.19).epsilon(0.002));
    // Geostationary orbit radius 42,164 km (a fact of the trade).
    const auto& moon = body(r, "Moon");
    CHECK(*moon.synchronous_orbit_m / 1e3 == doctest::Approx(42164).epsilon(0.001));
}

TEST_CASE("Moon: period, surface gravity, Roche limits around the Earth") {
    const auto r = earth_moon();
    const auto& m = body(r, "Moon");
    // Sidereal month 27.32 d; lunar surface gravity 1.62 m/s^2; escape velocity 2.38 km/s
    // (all from memory).
    CHECK(*m.period_s / c::day == doctest::Approx(27.32).epsilon(0.005));
    CHECK(m.surface_gravity_m_s2 == doctest::Approx(1.62).epsilon(0.01));
    CHECK(m.escape_velocity_m_s / 1e3 == doctest::Approx(2.38).epsilon(0.01));
    // Earth-Moon Roche limits, fluid about 18,400 km and rigid about 9,500 km (from memory;
    // commonly quoted with Earth 5.51 g/cm3 and Moon 3.34 g/cm3).
    CHECK(*m.roche_limit_fluid_m / 1e3 == doctest::Approx(18400).epsilon(0.01));
    CHECK(*m.roche_limit_rigid_m / 1e3 == doctest::Approx(9500).epsilon(0.01));
    CHECK_FALSE(r.has_errors());
}

TEST_CASE("Mars: Phobos inside the synchronous orbit and the fluid Roche limit, Deimos not") {
    // From memory: Mars GM 4.2828e13 m^3/s^2, radius 3389.5 km, sidereal day 24.6229 h;
    // Phobos a = 9,376 km (1.0659e16 kg, 11.1 km); Deimos a = 23,463 km (1.476e15 kg, 6.2 km).
    // Phobos spirals inward by tides, Deimos slowly outward (a fact of the trade).
    design d;
    d.bodies.push_back(make_star("Sun", c::M_sun, c::R_sun));
    body_spec mars = make_body("Mars", "Sun", 4.2828e13 / c::G, 3.3895e6, metres(1.524 * c::au));
    mars.rotation_period_s = 24.6229 * c::hour;
    d.bodies.push_back(mars);
    d.bodies.push_back(make_body("Phobos", "Mars", 1.0659e16, 1.11e4, metres(9.376e6), 0.0151));
    d.bodies.push_back(make_body("Deimos", "Mars", 1.476e15, 6.2e3, metres(2.3463e7)));
    const auto r = run_check(resolve(d));
    // Mars synchronous orbit about 20,400 km (from memory).
    CHECK(*body(r, "Phobos").synchronous_orbit_m / 1e3 == doctest::Approx(20400).epsilon(0.01));
    CHECK(find_code(r, "inside_synchronous_orbit", "Phobos"));
    CHECK_FALSE(find_code(r, "inside_synchronous_orbit", "Deimos"));
    // Phobos (about 1.86 g/cm3) orbits inside Mars's fluid Roche limit but outside the rigid
    // one: it holds together by material strength (from memory; a textbook example). The check
    // reports it as an error, since a design's moons are taken as strengthless.
    const auto& phobos = body(r, "Phobos");
    CHECK(*phobos.pericentre_m < *phobos.roche_limit_fluid_m);
    CHECK(*phobos.pericentre_m > *phobos.roche_limit_rigid_m);
    CHECK(find_code(r, "inside_roche_limit", "Phobos"));
    CHECK_FALSE(find_code(r, "inside_roche_limit", "Deimos"));
    CHECK(r.count(severity::error) == 1);
}

TEST_CASE("Galilean moons: Io, Europa and Ganymede near 2:1 commensurabilities") {
    // From memory: periods 1.769, 3.551, 7.155 d (the Laplace resonance 1:2:4); masses
    // 8.93e22, 4.80e22, 1.48e23 kg; radii 1822, 1561, 2634 km. Jupiter: IAU 2015 B3.
    design d;
    d.bodies.push_back(make_star("Sun", c::M_sun, c::R_sun));
    d.bodies.push_back(make_body("Jupiter", "Sun", c::M_jup, c::R_jup, metres(5.2 * c::au), 0.048));
    const struct {
        const char* name;
        double days, mass, radius;
    } moons[] = {{"Io", 1.769, 8.93e22, 1.822e6},
                 {"Europa", 3.551, 4.80e22, 1.561e6},
                 {"Ganymede", 7.155, 1.48e23, 2.634e6}};
    for (const auto& m : moons) {
        body_spec b = make_body(m.name, "Jupiter", m.mass, m.radius, metres(1));
        b.orbit->a.reset();
        b.orbit->period_s = m.days * c::day;
        d.bodies.push_back(b);
    }
    const auto r = run_check(resolve(d));
    const auto& io = body(r, "Io");
    REQUIRE(io.next_sibling);
    REQUIRE(io.next_sibling->near);
    CHECK(io.next_sibling->near->p == 2);
    CHECK(io.next_sibling->near->q == 1);
    REQUIRE(body(r, "Europa").next_sibling->near);
    CHECK(body(r, "Europa").next_sibling->near->p == 2);
    CHECK(find_code(r, "near_commensurability", "Europa"));
    CHECK(find_code(r, "near_commensurability", "Ganymede"));
    // Io's a = 421,700 km (from memory).
    CHECK(*io.a_m / 1e3 == doctest::Approx(421700).epsilon(0.005));
    CHECK_FALSE(r.has_errors());
}

TEST_CASE("Triton: a retrograde moon gets the tidal-decay note") {
    // From memory: Neptune 1.024e26 kg, radius 24,764 km, a = 30.07 AU; Triton 2.14e22 kg,
    // radius 1353 km, a = 354,760 km, i = 157 deg (retrograde, decaying by tides).
    design d;
    d.bodies.push_back(make_star("Sun", c::M_sun, c::R_sun));
    d.bodies.push_back(make_body("Neptune", "Sun", 1.024e26, 2.4764e7, metres(30.07 * c::au)));
    d.bodies.push_back(
        make_body("Triton", "Neptune", 2.14e22, 1.353e6, metres(3.5476e8), 0.0, 157 * c::deg));
    const auto r = run_check(resolve(d));
    CHECK(body(r, "Triton").retrograde);
    CHECK(find_code(r, "retrograde_tidal_decay", "Triton"));
    CHECK_FALSE(find_code(r, "beyond_stability_limit", "Triton"));
    CHECK_FALSE(r.has_errors());
}
