// The check's short tidal fate: `tidal_fate` notes and the per-body JSON field, on designs built
// in code; the cheap run must tell the same fate as the full tides run.
#include "design_builders.hpp"

#include "engine/check_tidal_fate.hpp"
#include "engine/design_check.hpp"
#include "engine/tides_report.hpp"

#include <algorithm>
#include <cmath>
#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

using namespace moonwright;
using namespace moonwright::testing;
namespace c = moonwright::constants;

namespace {

/// Sun-like star aged 4 Gyr, an Earth-like planet with a 10 h day and a lossy interior (Q = 12),
/// a small dense moon inside the synchronous orbit (it must fall) and a large outer moon (it
/// must migrate out and stay). Invented numbers.
design two_moons() {
    design d = sun_earth();
    d.bodies[0].age_s = 4 * c::Gyr;
    body_spec& p = d.bodies[1];
    p.rotation_period_s = 10 * c::hour;
    p.k2 = 0.3;
    p.tidal_q = 12;
    d.bodies.push_back(make_body("Inner", "Planet", 1e19, 100e3, parent_radii(3.4)));
    d.bodies.push_back(make_body("Outer", "Planet", 5e22, 1600e3, parent_radii(40)));
    return d;
}

std::vector<const finding*> fates_of(const check_report& r, const std::string& body) {
    std::vector<const finding*> out;
    for (const auto& f : r.findings)
        if (f.code == "tidal_fate" && f.body == body) out.push_back(&f);
    return out;
}

const body_check& body(const check_report& r, const std::string& name) {
    return *std::find_if(r.bodies.begin(), r.bodies.end(),
                         [&](const body_check& b) { return b.name == name; });
}

} // namespace

TEST_CASE("check adds a tidal_fate note per moon that agrees with the full tides run") {
    const resolved_system sys = resolve(two_moons());
    const check_report r = run_check(sys);

    // The full run (default settings: 1/2000-span steps, tolerance 1e-9) is the reference.
    const tides_report full = analyze_tides(sys);
    REQUIRE(full.evolutions.size() == 1);
    const auto events = tides_fate_events(full);
    for (const std::string moon : {"Inner", "Outer"}) {
        INFO("moon " << moon);
        const auto notes = fates_of(r, moon);
        REQUIRE(notes.size() == 1);
        CHECK(notes[0]->level == severity::note);
        // The cheap run tells the same fate with the same three significant digits.
        for (const auto& e : events)
            if (e.body == moon) CHECK(notes[0]->message.find(e.line) != std::string::npos);
        CHECK(notes[0]->message.find("the star's age") != std::string::npos);
        REQUIRE(body(r, moon).tidal_fate.has_value());
    }
    // The physics behind the words: the inner moon falls, the outer one stays.
    CHECK(full.evolutions[0].moons[0].fate == moon_fate::roche_limit);
    CHECK(full.evolutions[0].moons[1].fate == moon_fate::survives);
    CHECK(fates_of(r, "Inner")[0]->message.find("Roche limit") != std::string::npos);
    CHECK(fates_of(r, "Outer")[0]->message.find("survives") != std::string::npos);

    // JSON: a string for the planet and its moons, null for the star.
    const auto j = nlohmann::json::parse(render_check_json(r));
    for (const auto& b : j["bodies"]) {
        INFO(b["name"]);
        if (b["kind"] == "star")
            CHECK(b["tidal_fate"].is_null());
        else
            CHECK(b["tidal_fate"].is_string());
    }
    // The planet's field holds every line of its system.
    const std::string planet = *body(r, "Planet").tidal_fate;
    CHECK(planet.find("moon 'Inner'") != std::string::npos);
    CHECK(planet.find("moon 'Outer'") != std::string::npos);
    // Text report lists the notes under their code.
    CHECK(render_check_text(r).find("[tidal_fate] Inner:") != std::string::npos);
}

TEST_CASE("the check's cheap tidal run times the fall like the closed-form constant-Q decay") {
    // With the planet's spin nearly unchanged (a 1e19 kg moon), integrating Murray & Dermott
    // (1999) eq. 4.162, da/dt = -3 (k2/Q) (m/M) (R/a)^5 n a with n = sqrt(G (M + m) / a^3),
    // gives t = (a0^(13/2) - a1^(13/2)) / ((39/2) (k2/Q) (m/M) R^5 sqrt(G (M + m))).
    const resolved_system sys = resolve(two_moons());
    const tidal_evolution ev = evolve_tides(sys, 1, check_tidal_options());
    const auto& inner = ev.moons[0];
    REQUIRE(inner.name == "Inner");
    REQUIRE(inner.fate == moon_fate::roche_limit);
    const double M = c::M_earth, m = 1e19, R = c::R_earth, k2_q = 0.3 / 12;
    const double a0 = 3.4 * R, a1 = inner.inner_limit_m;
    const double t = (std::pow(a0, 6.5) - std::pow(a1, 6.5)) /
                     (19.5 * k2_q * (m / M) * std::pow(R, 5) * std::sqrt(c::G * (M + m)));
    CHECK(*inner.fate_time_s == doctest::Approx(t).epsilon(0.005));
}

TEST_CASE("check computes no tidal fate for a planet without a rotation period or moons") {
    design d = two_moons();
    d.bodies[1].rotation_period_s.reset();
    const check_report r = run_check(resolve(d));
    CHECK(fates_of(r, "Inner").empty());
    CHECK(fates_of(r, "Planet").empty());
    CHECK_FALSE(body(r, "Inner").tidal_fate.has_value());
    const auto j = nlohmann::json::parse(render_check_json(r));
    for (const auto& b : j["bodies"]) CHECK(b["tidal_fate"].is_null());

    const check_report bare = run_check(resolve(sun_earth()));
    CHECK(std::none_of(bare.findings.begin(), bare.findings.end(),
                       [](const finding& f) { return f.code == "tidal_fate"; }));
}

TEST_CASE("a tidal run that fails becomes a note and never breaks the check") {
    // Q = 0 makes k2/Q infinite: the tidal state stops being finite (numerical_error).
    design d = two_moons();
    d.bodies[1].tidal_q = 0.0;
    const resolved_system sys = resolve(d);
    CHECK_THROWS_AS(evolve_tides(sys, 1, check_tidal_options()), moonwright::error);
    check_report r;
    CHECK_NOTHROW(r = run_check(sys));
    const auto notes = fates_of(r, "Planet");
    REQUIRE(notes.size() == 1);
    CHECK(notes[0]->message.find("could not be computed") != std::string::npos);
    CHECK_FALSE(body(r, "Inner").tidal_fate.has_value());
    // The analytic rules still ran.
    CHECK(r.bodies.size() == 4);
    CHECK(std::any_of(r.findings.begin(), r.findings.end(),
                      [](const finding& f) { return f.code == "inside_synchronous_orbit"; }));
}
