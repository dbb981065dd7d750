// Each finding of the design check triggered by a small design, and absent for a good one.
#include "design_builders.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/design_check.hpp"

#include <algorithm>
#include <cmath>
#include <doctest/doctest.h>

using namespace moonwright;
using namespace moonwright::testing;
namespace c = moonwright::constants;

namespace {

/// Sun, Earth (J2 and rotation written) and a Moon at 384,400 km with every angle written
/// (Moon mass 7.342e22 kg, radius 1737.4 km: from memory).
design good_design() {
    design d = sun_earth();
    d.bodies[1].rotation_period_s = 86164.1;
    d.bodies[1].j2 = 1.0826e-3;
    d.bodies.push_back(make_body("Moon", "Planet", 7.342e22, 1.7374e6, metres(3.844e8), 0.0549));
    return d;
}

const finding* find_code(const check_report& r, const std::string& code,
                         const std::string& body = "") {
    for (const auto& f : r.findings)
        if (f.code == code && (body.empty() || f.body == body)) return &f;
    return nullptr;
}

check_report check(const design& d) {
    return run_check(resolve(d));
}

/// Outer a that puts two bodies `spacing` mutual Hill radii apart (definition inverted).
double a_for_spacing(double a1, double m1, double m2, double big_m, double spacing) {
    const double x = spacing * std::cbrt((m1 + m2) / (3 * big_m)) / 2;
    return a1 * (1 + x) / (1 - x);
}

} // namespace

TEST_CASE("a good design has no findings but its tidal fate") {
    const auto r = check(good_design());
    for (const auto& f : r.findings) INFO(f.code, ": ", f.message);
    // The only finding is the short tidal fate of the moon (a note; docs/check.md).
    REQUIRE(r.findings.size() == 1);
    CHECK(r.findings[0].code == "tidal_fate");
    CHECK(r.findings[0].body == "Moon");
    CHECK(r.findings[0].message.find("survives") != std::string::npos);
    CHECK_FALSE(r.has_errors());
    REQUIRE(r.bodies.size() == 3);
    CHECK(r.bodies[2].parent == "Planet");
    CHECK_FALSE(r.bodies[0].period_s);
    CHECK_FALSE(r.bodies[1].stability_limit_m); // a planet has no grandparent
    CHECK(r.bodies[2].stability_limit_m);
}

TEST_CASE("error: heavier than the parent") {
    design d = good_design();
    d.bodies[2].mass_kg = 2 * c::M_earth;
    const auto r = check(d);
    const finding* f = find_code(r, "heavier_than_parent", "Moon");
    REQUIRE(f);
    CHECK(f->level == severity::error);
    CHECK(f->message.find("kg") != std::string::npos);
    CHECK(r.has_errors());
    CHECK_FALSE(find_code(check(good_design()), "heavier_than_parent"));
}

TEST_CASE("error: pericentre inside the parent") {
    design d = good_design();
    d.bodies[2].orbit->a = parent_radii(1.5);
    d.bodies[2].orbit->e = 0.5;
    const auto r = check(d);
    const finding* f = find_code(r, "pericentre_inside_parent", "Moon");
    REQUIRE(f);
    CHECK(f->level == severity::error);
    CHECK(f->message.find("km") != std::string::npos);
}

TEST_CASE("error: pericentre inside the fluid Roche limit, with the density that would do") {
    design d = good_design();
    d.bodies[2].orbit->a = parent_radii(2.0);
    d.bodies[2].orbit->e = 0.0;
    const auto r = check(d);
    const finding* f = find_code(r, "inside_roche_limit", "Moon");
    REQUIRE(f);
    CHECK(f->level == severity::error);
    CHECK(f->message.find("g/cm3") != std::string::npos);
    CHECK_FALSE(find_code(r, "pericentre_inside_parent"));
    // The suggested density puts the limit exactly at the pericentre: 2.44 Rp (rho_p/rho)^(1/3).
    const auto& planet = r.bodies[1];
    const double needed = planet.density_kg_m3 * std::pow(2.44 / 2.0, 3);
    CHECK(roche_limit_fluid(planet.radius_m, planet.density_kg_m3, needed) ==
          doctest::Approx(2.0 * planet.radius_m));
}

TEST_CASE("error: apocentre beyond the parent's Hill radius") {
    design d = good_design();
    d.bodies[2].orbit->a = parent_hill(0.9);
    d.bodies[2].orbit->e = 0.2;
    const auto r = check(d);
    const finding* f = find_code(r, "beyond_hill_radius", "Moon");
    REQUIRE(f);
    CHECK(f->level == severity::error);
    CHECK(f->message.find("Star") != std::string::npos);
    d.bodies[2].orbit->e = 0.0;
    CHECK_FALSE(find_code(check(d), "beyond_hill_radius"));
}

TEST_CASE("warning: beyond the stability limit, prograde but not retrograde") {
    design d = good_design();
    d.bodies[2].orbit->a = parent_hill(0.6);
    d.bodies[2].orbit->e = 0.0;
    auto r = check(d);
    const finding* f = find_code(r, "beyond_stability_limit", "Moon");
    REQUIRE(f);
    CHECK(f->level == severity::warning);
    CHECK(f->message.find("retrograde") != std::string::npos); // suggests the way out
    CHECK_FALSE(r.has_errors());
    // Domingos, Winter & Yokoyama (2006): retrograde orbits last to 0.9309 R_H.
    d.bodies[2].orbit->sense = orbit_sense::retrograde;
    r = check(d);
    CHECK_FALSE(find_code(r, "beyond_stability_limit"));
    CHECK(find_code(r, "retrograde_tidal_decay", "Moon"));
}

TEST_CASE("warning: no stable orbit at extreme eccentricities") {
    design d = good_design();
    d.bodies[1].orbit->e = 0.8;
    d.bodies[2].orbit->e = 0.9;
    d.bodies[2].orbit->a = metres(1e9);
    const check_report report = check(d); // keep it alive: f points into it
    const finding* f = find_code(report, "no_stable_orbit", "Moon");
    REQUIRE(f);
    CHECK(f->level == severity::warning);
}

TEST_CASE("warnings: spacing in mutual Hill radii (Gladman 1993; Chambers et al. 1996)") {
    const double m = 1e20, a1 = 1e8;
    auto pair = [&](double spacing) {
        design d = good_design();
        d.bodies.pop_back();
        d.bodies.push_back(make_body("Inner", "Planet", m, 2e5, metres(a1)));
        d.bodies.push_back(make_body("Outer", "Planet", m, 2e5,
                                     metres(a_for_spacing(a1, m, m, c::M_earth, spacing))));
        return check(d);
    };
    auto r = pair(2.0);
    REQUIRE(r.bodies[2].next_sibling);
    CHECK(r.bodies[2].next_sibling->mutual_hill_spacing == doctest::Approx(2.0));
    const finding* f = find_code(r, "spacing_hill_unstable", "Outer");
    REQUIRE(f);
    CHECK(f->level == severity::warning);
    CHECK_FALSE(find_code(r, "spacing_long_term_unstable"));
    CHECK_FALSE(find_code(r, "orbits_intersect"));

    r = pair(6.0);
    CHECK_FALSE(find_code(r, "spacing_hill_unstable"));
    REQUIRE(find_code(r, "spacing_long_term_unstable", "Outer"));
    CHECK(find_code(r, "spacing_long_term_unstable")->level == severity::warning);

    r = pair(15.0);
    CHECK_FALSE(find_code(r, "spacing_hill_unstable"));
    CHECK_FALSE(find_code(r, "spacing_long_term_unstable"));
}

TEST_CASE("warning: intersecting orbits") {
    design d = good_design();
    d.bodies.pop_back();
    d.bodies.push_back(make_body("Round", "Planet", 1e20, 2e5, parent_radii(20)));
    d.bodies.push_back(make_body("Eccentric", "Planet", 1e20, 2e5, parent_radii(40), 0.6));
    auto r = check(d);
    const finding* f = find_code(r, "orbits_intersect", "Eccentric");
    REQUIRE(f);
    CHECK(f->level == severity::warning);
    CHECK(f->message.find("cross") != std::string::npos);
    CHECK(r.bodies[2].next_sibling->min_orbit_distance_m < 1.0);
    d.bodies.back().orbit->e = 0.1;
    r = check(d);
    CHECK_FALSE(find_code(r, "orbits_intersect"));
}

TEST_CASE("near-commensurabilities 2:1 and 3:2 are found, others not") {
    CHECK(nearest_commensurability(2.01)->p == 2);
    CHECK(nearest_commensurability(2.01)->q == 1);
    CHECK(nearest_commensurability(1.498)->p == 3);
    CHECK(nearest_commensurability(1.498)->q == 2);
    CHECK(nearest_commensurability(2.5)->p == 5);
    CHECK(nearest_commensurability(3.0)->q == 1);
    CHECK_FALSE(nearest_commensurability(1.52));
    CHECK_FALSE(nearest_commensurability(5.0)); // order 4 is not counted

    auto with_periods = [](double p1_days, double p2_days) {
        design d = good_design();
        d.bodies.pop_back();
        for (auto [name, days] : {std::pair{"Inner", p1_days}, std::pair{"Outer", p2_days}}) {
            body_spec b = make_body(name, "Planet", 1e18, 5e4, metres(1));
            b.orbit->a.reset();
            b.orbit->period_s = days * c::day;
            d.bodies.push_back(b);
        }
        return check(d);
    };
    auto r = with_periods(2.0, 4.02);
    const finding* f = find_code(r, "near_commensurability", "Outer");
    REQUIRE(f);
    CHECK(f->level == severity::note);
    CHECK(f->message.find("2:1") != std::string::npos);
    CHECK(r.bodies[2].next_sibling->period_ratio == doctest::Approx(2.01).epsilon(1e-9));
    r = with_periods(2.0, 3.01);
    REQUIRE(find_code(r, "near_commensurability"));
    CHECK(find_code(r, "near_commensurability")->message.find("3:2") != std::string::npos);
    CHECK_FALSE(find_code(with_periods(2.0, 3.04), "near_commensurability"));
}

TEST_CASE("note: angles drawn from the seed, with their values") {
    design d = good_design();
    d.bodies[2].orbit->node_rad.reset();
    d.bodies[2].orbit->mean_anomaly_rad.reset();
    const auto r = run_check(resolve(d, 99));
    const finding* f = find_code(r, "angles_drawn", "Moon");
    REQUIRE(f);
    CHECK(f->level == severity::note);
    CHECK(f->message.find("seed 99") != std::string::npos);
    CHECK(f->message.find("node =") != std::string::npos);
    CHECK(f->message.find("mean anomaly =") != std::string::npos);
    CHECK(f->message.find("peri =") == std::string::npos);
}

TEST_CASE("note: J2 derived") {
    design d = good_design();
    d.bodies[1].j2.reset();
    const auto r = check(d);
    const finding* f = find_code(r, "j2_derived", "Planet");
    REQUIRE(f);
    CHECK(f->level == severity::note);
}

TEST_CASE("note: double body when the barycentre leaves the parent") {
    design d = good_design();
    d.bodies[2].mass_kg = 0.3 * c::M_earth;
    d.bodies[2].orbit->a = parent_radii(10);
    const auto r = check(d);
    REQUIRE(find_code(r, "double_body", "Moon"));
    CHECK(r.bodies[2].double_body);
    CHECK_FALSE(check(good_design()).bodies[2].double_body);
}

TEST_CASE("notes: irregular shape, too big to stay irregular, too small to be round") {
    design d = good_design();
    body_spec small = make_body("Rubble", "Planet", 1, 1, metres(1e8));
    small.mass_kg.reset();
    small.radius_m.reset();
    small.semi_axes_m = std::array<double, 3>{30e3, 20e3, 10e3};
    small.density_kg_m3 = 1800.0;
    body_spec big = small;
    big.name = "Lump";
    big.orbit->a = metres(2e8);
    big.semi_axes_m = std::array<double, 3>{500e3, 400e3, 300e3};
    big.density_kg_m3 = 3000.0;
    body_spec pebble = make_body("Pebble", "Planet", 1e17, 20e3, metres(6e8));
    for (const auto& b : {small, big, pebble}) d.bodies.push_back(b);
    const auto r = check(d);
    const finding* f = find_code(r, "irregular_shape", "Rubble");
    REQUIRE(f);
    CHECK(f->message.find("triaxial") != std::string::npos);
    CHECK_FALSE(find_code(r, "too_big_to_stay_irregular", "Rubble"));
    CHECK(find_code(r, "too_big_to_stay_irregular", "Lump"));
    CHECK(find_code(r, "too_small_to_be_round", "Pebble"));
    CHECK_FALSE(find_code(r, "too_small_to_be_round", "Moon"));
}

TEST_CASE("note: inside the parent's synchronous orbit") {
    design d = good_design();
    d.bodies[2].orbit->a = metres(2e7); // below ~42,164 km for a sidereal day
    const auto r = check(d);
    REQUIRE(find_code(r, "inside_synchronous_orbit", "Moon"));
    CHECK(r.bodies[2].synchronous_orbit_m);
}

TEST_CASE("findings of a body come errors first, and the counts add up") {
    design d = good_design();
    d.bodies[2].orbit->a = parent_radii(1.5);
    d.bodies[2].orbit->e = 0.5;
    d.bodies[2].orbit->node_rad.reset();
    const auto r = check(d);
    CHECK(r.count(severity::error) >= 2);
    CHECK(r.count(severity::note) >= 1);
    CHECK(r.count(severity::error) + r.count(severity::warning) + r.count(severity::note) ==
          static_cast<int>(r.findings.size()));
    CHECK(std::is_sorted(r.findings.begin(), r.findings.end(), [](const auto& x, const auto& y) {
        return static_cast<int>(x.level) < static_cast<int>(y.level);
    }));
}
