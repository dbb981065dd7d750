// The tides report: analysis of a whole hand-filled system and its text and JSON renderings.
#include "engine/tides_report.hpp"
#include "tides_fixtures.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

using namespace moonwright;
using namespace moonwright::test;
namespace c = moonwright::constants;

namespace {
resolved_system demo() {
    resolved_system s;
    s.name = "Harrow";
    auto star = make_star("Harrow", 0.9 * c::M_sun);
    star.age_s = 3 * c::Gyr;
    add_body(s, star, -1);
    auto pl = make_body("Cadmus", body_kind::planet, 1.2 * c::M_earth, 1.05 * c::R_earth,
                        make_orbit(0.9 * c::au, 0.02));
    pl.rotation_period_s = 20 * c::hour;
    pl.j2 = 1.2e-3;
    pl.obliquity_rad = 30 * c::deg;
    pl.k2 = 0.3;
    pl.tidal_q = 40;
    const int p = add_body(s, pl, 0);
    add_body(s, make_body("Nib", body_kind::moon, 2e15, 8e3, make_orbit(3.0 * c::R_earth, 0.01)),
             p);
    add_body(s, make_body("Sel", body_kind::moon, 3e22, 1500e3, make_orbit(50 * c::R_earth, 0.03)),
             p);
    auto giant = make_body("Brae", body_kind::planet, 300 * c::M_earth, c::R_jup,
                           make_orbit(5 * c::au, 0.05));
    add_body(s, giant, 0);
    return s;
}
} // namespace

TEST_CASE("describe_duration picks the unit") {
    CHECK(describe_duration(850 * c::year) == "850 yr");
    CHECK(describe_duration(12e3 * c::year) == "12 kyr");
    CHECK(describe_duration(31e6 * c::year) == "31 Myr");
    CHECK(describe_duration(1.3e9 * c::year) == "1.3 Gyr");
}

TEST_CASE("analyze_tides covers every planet and renders fates in words") {
    const auto s = demo();
    const auto r = analyze_tides(s);
    REQUIRE(r.evolutions.size() == 1); // Brae has no rotation period
    CHECK(r.skipped.size() == 1);
    CHECK(r.evolutions[0].span_from == span_rule::star_age);
    CHECK(r.evolutions[0].span_s == doctest::Approx(3 * c::Gyr));
    REQUIRE(r.secular.has_value());
    CHECK(r.secular->f_rad_s.size() == 2);
    REQUIRE(r.spin_axes.size() == 1);
    const auto lines = tides_fate_lines(r);
    const std::string text = render_tides_text(r);
    MESSAGE(text);
    // Nib (8 km) is inside the synchronous orbit and falls to the rigid Roche limit.
    CHECK(text.find("moon 'Nib' reaches the rigid Roche limit") != std::string::npos);
    CHECK(text.find("moon 'Sel' survives the 3 Gyr span") != std::string::npos);
    CHECK(text.find("\"/yr") != std::string::npos);
    // A moon placed inside its Roche limit is reported as such, at t = 0.
    auto s2 = demo();
    s2.bodies[2].orbit->a_m = 2.0 * c::R_earth;
    const auto r2 = analyze_tides(s2);
    CHECK(*r2.evolutions[0].moons[0].fate_time_s == 0.0);
    CHECK(render_tides_text(r2, 0).find("moon 'Nib' starts inside the Roche limit") !=
          std::string::npos);
    CHECK(text.find("Barnes & O'Brien 2002") != std::string::npos);
}

TEST_CASE("render_tides_json is valid JSON with units in the keys") {
    const auto r = analyze_tides(demo());
    const auto j = nlohmann::json::parse(render_tides_json(r));
    REQUIRE(j["planets"].size() == 1);
    const auto& p = j["planets"][0];
    CHECK(p["span_s"].get<double>() == doctest::Approx(3 * c::Gyr));
    CHECK(p["moons"][0]["fate"] == "roche_limit");
    CHECK(p["moons"][1]["fate"] == "survives");
    CHECK(p["series"]["t_s"].size() == p["series"]["spin_period_s"].size());
    CHECK(p["series"]["moons"][0]["a_m"].size() == p["series"]["t_s"].size());
    // A lost moon's later rows are null, not a made-up number.
    CHECK(p["series"]["moons"][0]["a_m"].back().is_null());
    CHECK(j["spin_axes"][0].contains("precession_rate_arcsec_per_yr"));
    CHECK(j["fates"].size() >= 2);
    CHECK(p["moons"][0]["fate_time_s"].get<double>() > 0);
    const auto short_j = nlohmann::json::parse(render_tides_json(r, false));
    CHECK_FALSE(short_j["planets"][0].contains("series"));
}
