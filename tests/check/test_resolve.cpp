// Resolution of designs built in code: tree order, masses, relative lengths, drawn angles.
#include "design_builders.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/resolved_system.hpp"

#include <cmath>
#include <doctest/doctest.h>

using namespace moonwright;
using namespace moonwright::testing;
namespace c = moonwright::constants;

TEST_CASE("resolve puts parents before children and siblings innermost first") {
    design d;
    // File order deliberately scrambled: moons before their planet, outer before inner.
    d.bodies.push_back(make_body("Outer moon", "Inner planet", 1e20, 2e5, metres(4e8)));
    d.bodies.push_back(
        make_body("Outer planet", "Star", c::M_earth, c::R_earth, metres(2 * c::au)));
    d.bodies.push_back(make_body("Inner moon", "Inner planet", 1e20, 2e5, metres(1e8)));
    d.bodies.push_back(make_body("Submoon", "Inner moon", 1e15, 5e3, metres(1e6)));
    d.bodies.push_back(make_star("Star", c::M_sun, c::R_sun));
    d.bodies.push_back(make_body("Inner planet", "Star", c::M_earth, c::R_earth, metres(c::au)));
    const resolved_system s = resolve(d);
    REQUIRE(s.bodies.size() == 6);
    const char* expected[] = {"Star",    "Inner planet", "Inner moon",
                              "Submoon", "Outer moon",   "Outer planet"};
    const body_kind kinds[] = {body_kind::star,    body_kind::planet, body_kind::moon,
                               body_kind::submoon, body_kind::moon,   body_kind::planet};
    for (size_t k = 0; k < 6; ++k) {
        CHECK(s.bodies[k].name == expected[k]);
        CHECK(s.bodies[k].kind == kinds[k]);
        CHECK(s.bodies[k].index == static_cast<int>(k));
        if (k > 0) CHECK(s.bodies[k].parent < static_cast<int>(k));
    }
    CHECK(s.bodies[0].children == std::vector<int>{1, 5});
    CHECK(s.bodies[1].children == std::vector<int>{2, 4});
    CHECK(s.find("Submoon") == 3);
    CHECK(s.find("nobody") == -1);
}

TEST_CASE("Rp lengths are multiples of the parent's radius") {
    design d = sun_earth();
    d.bodies.push_back(make_body("Moon", "Planet", 7e22, 1.7e6, parent_radii(60)));
    const auto s = resolve(d);
    CHECK(s.bodies[2].orbit->a_m == doctest::Approx(60 * c::R_earth));
}

TEST_CASE("RH lengths are fractions of the parent's Hill radius at its pericentre") {
    design d = sun_earth();
    d.bodies[1].orbit->e = 0.2;
    d.bodies.push_back(make_body("Moon", "Planet", 7e22, 1.7e6, parent_hill(0.3)));
    const auto s = resolve(d);
    const double rh = c::au * 0.8 * std::cbrt(c::M_earth / (3 * c::M_sun));
    CHECK(s.bodies[2].orbit->a_m == doctest::Approx(0.3 * rh));
}

TEST_CASE("a period becomes a semi-major axis with both masses") {
    design d = sun_earth();
    body_spec m = make_body("Moon", "Planet", 7.342e22, 1.7374e6, metres(1));
    m.orbit->a.reset();
    m.orbit->period_s = 27.32 * c::day;
    d.bodies.push_back(m);
    const auto s = resolve(d);
    const double a = s.bodies[2].orbit->a_m;
    // Kepler's third law with both masses, inverted by hand.
    const double expected =
        std::cbrt(c::G * (c::M_earth + 7.342e22) * std::pow(27.32 * c::day / c::two_pi, 2));
    CHECK(a == doctest::Approx(expected));
    CHECK(kepler_period(a, c::M_earth, 7.342e22) == doctest::Approx(27.32 * c::day));
}

TEST_CASE("mass, radius and density from each way of giving them") {
    design d = sun_earth();
    d.materials.push_back({"test rock", 3000.0, "invented"});
    d.materials.push_back({"test ice", 1000.0, "invented"});

    body_spec by_density = make_body("A", "Planet", 1, 1e6, metres(1e8));
    by_density.mass_kg.reset();
    by_density.density_kg_m3 = 2000.0;
    body_spec by_composition = make_body("B", "Planet", 1, 1e6, metres(2e8));
    by_composition.mass_kg.reset();
    by_composition.composition = {{"test rock", 0.5}, {"test ice", 0.5}};
    body_spec by_axes = make_body("C", "Planet", 1, 1, metres(3e8));
    by_axes.mass_kg.reset();
    by_axes.radius_m.reset();
    by_axes.semi_axes_m = std::array<double, 3>{40e3, 20e3, 10e3};
    by_axes.density_kg_m3 = 1500.0;
    body_spec mass_density =
        make_body("D", "Planet", 4.0 / 3.0 * c::pi * 1e18 * 2000.0, 1, metres(4e8));
    mass_density.radius_m.reset();
    mass_density.density_kg_m3 = 2000.0;
    for (const auto& b : {by_density, by_composition, by_axes, mass_density}) d.bodies.push_back(b);

    const auto s = resolve(d);
    const auto& a = s.bodies[static_cast<size_t>(s.find("A"))];
    CHECK(a.mass_kg == doctest::Approx(2000.0 * 4.0 / 3.0 * c::pi * 1e18));
    CHECK(a.mass_from == "radius+density");
    const auto& b = s.bodies[static_cast<size_t>(s.find("B"))];
    // 1 / (0.5/3000 + 0.5/1000) = 1500 kg/m^3.
    CHECK(b.density_kg_m3 == doctest::Approx(1500.0));
    CHECK(b.mass_kg == doctest::Approx(1500.0 * 4.0 / 3.0 * c::pi * 1e18));
    CHECK(b.mass_from == "radius+composition");
    const auto& cc = s.bodies[static_cast<size_t>(s.find("C"))];
    CHECK(cc.radius_m == doctest::Approx(20e3)); // (40 * 20 * 10)^(1/3) = 20 km
    CHECK(cc.mass_kg == doctest::Approx(1500.0 * 4.0 / 3.0 * c::pi * 40e3 * 20e3 * 10e3));
    CHECK(cc.mass_from == "semi-axes+density");
    const auto& dd = s.bodies[static_cast<size_t>(s.find("D"))];
    CHECK(dd.radius_m == doctest::Approx(1e6));
    CHECK(dd.mass_from == "mass+density");
}

TEST_CASE("an unknown material is an input error that names the body and the field") {
    design d = sun_earth();
    body_spec m = make_body("Moon", "Planet", 1, 1e6, metres(1e8));
    m.mass_kg.reset();
    m.composition = {{"unobtainium", 1.0}};
    d.bodies.push_back(m);
    try {
        (void)resolve(d);
        FAIL("expected an input_error");
    } catch (const input_error& e) {
        CHECK(e.field() == "body[Moon].composition[0].material");
        CHECK(std::string(e.what()).find("unobtainium") != std::string::npos);
        CHECK(e.code() == exit_code::bad_input);
    }
}

namespace {
design with_drawn_moon() {
    design d = sun_earth();
    body_spec m = make_body("Moon", "Planet", 7e22, 1.7e6, metres(4e8));
    m.orbit->i_rad.reset();
    m.orbit->node_rad.reset();
    m.orbit->peri_rad.reset();
    m.orbit->mean_anomaly_rad.reset();
    d.bodies.push_back(m);
    return d;
}
} // namespace

TEST_CASE("angles left out are drawn from the seed, the same for a seed, else different") {
    const design d = with_drawn_moon();
    const auto s1 = resolve(d, 7);
    const auto s2 = resolve(d, 7);
    const auto s3 = resolve(d, 8);
    const auto& o1 = *s1.bodies[2].orbit;
    const auto& o2 = *s2.bodies[2].orbit;
    const auto& o3 = *s3.bodies[2].orbit;
    CHECK(o1.drawn == std::array<bool, 4>{true, true, true, true});
    CHECK(o1.i_rad == o2.i_rad);
    CHECK(o1.node_rad == o2.node_rad);
    CHECK(o1.peri_rad == o2.peri_rad);
    CHECK(o1.mean_anomaly_rad == o2.mean_anomaly_rad);
    CHECK(o1.node_rad != o3.node_rad);
    CHECK(o1.mean_anomaly_rad != o3.mean_anomaly_rad);
    for (const auto* o : {&o1, &o3}) {
        CHECK(o->i_rad >= 0.0);
        CHECK(o->i_rad < 1.0 * c::deg);
        CHECK(o->node_rad < c::two_pi);
        CHECK(o->mean_anomaly_rad >= 0.0);
    }
    // The written planet orbit draws nothing.
    CHECK(s1.bodies[1].orbit->drawn == std::array<bool, 4>{false, false, false, false});
    CHECK(s1.seed == 7);
}

TEST_CASE("writing one angle leaves the other draws unchanged") {
    design d = with_drawn_moon();
    const auto before = resolve(d, 3);
    d.bodies[2].orbit->node_rad = 1.0;
    const auto after = resolve(d, 3);
    const auto& o = *after.bodies[2].orbit;
    CHECK(o.node_rad == 1.0);
    CHECK(o.drawn == std::array<bool, 4>{true, false, true, true});
    CHECK(o.i_rad == before.bodies[2].orbit->i_rad);
    CHECK(o.mean_anomaly_rad == before.bodies[2].orbit->mean_anomaly_rad);
}

TEST_CASE("seed: override beats the design's seed, default is 1") {
    design d = with_drawn_moon();
    CHECK(resolve(d).seed == 1);
    d.seed = 42;
    CHECK(resolve(d).seed == 42);
    CHECK(resolve(d, 5).seed == 5);
    CHECK(resolve(d).bodies[2].orbit->node_rad == resolve(d, 42).bodies[2].orbit->node_rad);
}

TEST_CASE("retrograde sense turns i into 180 deg - i") {
    design d = sun_earth();
    body_spec m = make_body("Moon", "Planet", 7e22, 1.7e6, metres(4e8), 0.0, 10.0 * c::deg);
    m.orbit->sense = orbit_sense::retrograde;
    d.bodies.push_back(m);
    auto s = resolve(d);
    CHECK(s.bodies[2].orbit->i_rad == doctest::Approx(170.0 * c::deg));
    CHECK(s.bodies[2].orbit->retrograde);

    // A drawn inclination is flipped as well.
    d.bodies[2].orbit->i_rad.reset();
    s = resolve(d);
    CHECK(s.bodies[2].orbit->i_rad > 179.0 * c::deg);
    CHECK(s.bodies[2].orbit->retrograde);

    // i > 90 deg with no sense written is retrograde; with sense = prograde it is an error.
    d.bodies[2].orbit->sense.reset();
    d.bodies[2].orbit->i_rad = 150.0 * c::deg;
    s = resolve(d);
    CHECK(s.bodies[2].orbit->retrograde);
    CHECK(s.bodies[2].orbit->i_rad == doctest::Approx(150.0 * c::deg));
    d.bodies[2].orbit->sense = orbit_sense::prograde;
    CHECK_THROWS_AS((void)resolve(d), input_error);
}

TEST_CASE("J2 derived from rotation when left out, with the documented fluid Love number") {
    design d = sun_earth();
    d.bodies[1].rotation_period_s = 86164.1;
    body_spec giant = make_body("Giant", "Star", c::M_jup, c::R_jup, metres(5 * c::au));
    giant.rotation_period_s = 10 * c::hour;
    d.bodies.push_back(giant);
    body_spec given = make_body("Given", "Star", c::M_earth, c::R_earth, metres(3 * c::au));
    given.rotation_period_s = 20 * c::hour;
    given.j2 = 1e-3;
    d.bodies.push_back(given);
    const auto s = resolve(d);
    const auto& p = s.bodies[1];
    CHECK(p.j2_derived);
    CHECK(p.j2 == doctest::Approx(j2_from_rotation(86164.1, c::R_earth, c::M_earth, 0.94)));
    const auto& g = s.bodies[static_cast<size_t>(s.find("Giant"))];
    CHECK(g.j2 == doctest::Approx(j2_from_rotation(10 * c::hour, c::R_jup, c::M_jup, 0.5)));
    const auto& k = s.bodies[static_cast<size_t>(s.find("Given"))];
    CHECK_FALSE(k.j2_derived);
    CHECK(k.j2 == 1e-3);
    CHECK(s.bodies[0].j2 == 0.0); // the star gets no derived J2
}

TEST_CASE("what only resolution can find is an input error with the field path") {
    SUBCASE("RH around the star") {
        design d = sun_earth();
        d.bodies[1].orbit->a = parent_hill(0.1);
        try {
            (void)resolve(d);
            FAIL("expected an input_error");
        } catch (const input_error& e) {
            CHECK(e.field() == "body[Planet].orbit.a");
            CHECK(std::string(e.what()).find("Hill radius") != std::string::npos);
        }
    }
    SUBCASE("unknown parent") {
        design d = sun_earth();
        d.bodies.push_back(make_body("Moon", "Nowhere", 1e20, 1e5, metres(1e8)));
        CHECK_THROWS_WITH_AS((void)resolve(d), doctest::Contains("body[Moon].orbits"), input_error);
    }
    SUBCASE("two stars") {
        design d = sun_earth();
        d.bodies.push_back(make_star("Other", c::M_sun, c::R_sun));
        CHECK_THROWS_AS((void)resolve(d), input_error);
    }
    SUBCASE("unbound orbit") {
        design d = sun_earth();
        d.bodies[1].orbit->e = 1.0;
        CHECK_THROWS_WITH_AS((void)resolve(d), doctest::Contains("body[Planet].orbit.e"),
                             input_error);
    }
    SUBCASE("a moon with only a mass has no size") {
        design d = sun_earth();
        body_spec m = make_body("Moon", "Planet", 1e20, 1, metres(1e8));
        m.radius_m.reset();
        d.bodies.push_back(m);
        CHECK_THROWS_WITH_AS((void)resolve(d), doctest::Contains("body[Moon].radius"), input_error);
    }
    SUBCASE("a loop of parents") {
        design d = sun_earth();
        d.bodies.push_back(make_body("X", "Y", 1e20, 1e5, metres(1e8)));
        d.bodies.push_back(make_body("Y", "X", 1e20, 1e5, metres(1e8)));
        CHECK_THROWS_AS((void)resolve(d), input_error);
    }
}
