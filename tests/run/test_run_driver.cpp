// The run loop on bundled scenarios and on published stability problems; sources named beside
// each check.
#include "engine/constants.hpp"
#include "engine/design_loader.hpp"
#include "engine/resolved_system.hpp"
#include "engine/run_driver.hpp"
#include "engine/tidal_verdict.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <doctest/doctest.h>
#include <string>
#include <vector>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
resolved_system scenario(const std::string& name) {
    return resolve(load_design_file(std::string(MOONWRIGHT_SOURCE_DIR) + "/scenarios/" + name));
}
} // namespace

TEST_CASE("the crowded scenario is unstable with a close approach first") {
    run_options o;
    o.orbits = 1000;
    o.samples = 100;
    run_driver run(scenario("crowded.toml"), o);
    run.advance();
    const run_outcome out = run.outcome();
    const verdict v = decide_verdict(out);
    MESSAGE(v.headline);
    CHECK(v.kind == verdict_kind::unstable);
    REQUIRE_FALSE(out.events.empty());
    CHECK(out.events.front().kind == event_kind::close_approach);
    CHECK(out.simulated_s < 1000 * out.reference_period_s);
}

TEST_CASE("the habitable scenario survives 1000 orbits of its moon") {
    run_options o;
    o.orbits = 1000;
    o.samples = 50;
    run_driver run(scenario("teodora.toml"), o);
    run.advance();
    const run_outcome out = run.outcome();
    const verdict v = decide_verdict(out);
    MESSAGE(v.headline);
    CHECK(out.events.empty());
    CHECK(out.max_energy_error < 1e-6);
    CHECK(run.samples().size() == 51);
}

namespace {
bool same_bits(double x, double y) {
    return std::memcmp(&x, &y, sizeof x) == 0;
}
bool same_bits(const std::vector<double>& x, const std::vector<double>& y) {
    return x.size() == y.size() && std::memcmp(x.data(), y.data(), 8 * x.size()) == 0;
}
} // namespace

TEST_CASE("sampling more often changes nothing but the samples: path, events, closest approaches "
          "and envelopes are bitwise the same") {
    // Most steps of the Wisdom–Holman map go through the run's tight loop for ordinary steps;
    // a sample step goes through the general checks. Sampling 7 times as often moves many
    // steps from one to the other, and reading the map never moves it, so the common sample
    // rows, the events and the pair records must agree bit for bit, and the finer envelopes
    // must combine to the coarser ones. frost_moons has sibling moons (quick tests between
    // siblings); crowded stops at its first event.
    for (const std::string name : {"frost_moons.toml", "crowded.toml"}) {
        CAPTURE(name);
        const resolved_system sys = scenario(name);
        auto options_with = [](std::size_t samples) {
            run_options o;
            o.orbits = 200;
            o.samples = samples;
            return o;
        };
        run_driver coarse(sys, options_with(20)), fine(sys, options_with(140));
        coarse.advance();
        fine.advance();
        const auto& cs = coarse.samples();
        const auto& fs = fine.samples();
        std::size_t matched = 0, mismatched = 0;
        std::size_t j0 = 0; // first fine row after the previous coarse row
        for (std::size_t k = 0; k < cs.size(); ++k) {
            std::size_t j = j0;
            while (j < fs.size() && fs[j].t_s < cs[k].t_s) ++j;
            REQUIRE(j < fs.size());
            REQUIRE(fs[j].t_s == cs[k].t_s); // samples fall on the same steps
            const run_sample &c = cs[k], &f = fs[j];
            bool same = same_bits(c.a, f.a) && same_bits(c.e, f.e) && same_bits(c.i, f.i) &&
                        same_bits(c.node, f.node) && same_bits(c.peri, f.peri) &&
                        same_bits(c.mean_anomaly, f.mean_anomaly) &&
                        same_bits(c.energy_error, f.energy_error) && same_bits(c.megno, f.megno) &&
                        same_bits(c.mean_megno, f.mean_megno);
            if (k > 0) {
                // The coarse interval (previous row, this row] is the union of fine ones.
                for (std::size_t b = 0; b < c.a.size(); ++b) {
                    double a_lo = f.a_min[b], a_hi = f.a_max[b], e_lo = f.e_min[b],
                           e_hi = f.e_max[b], i_lo = f.i_min[b], i_hi = f.i_max[b];
                    for (std::size_t m = j0; m < j; ++m) {
                        a_lo = std::fmin(a_lo, fs[m].a_min[b]),
                        a_hi = std::fmax(a_hi, fs[m].a_max[b]);
                        e_lo = std::fmin(e_lo, fs[m].e_min[b]),
                        e_hi = std::fmax(e_hi, fs[m].e_max[b]);
                        i_lo = std::fmin(i_lo, fs[m].i_min[b]),
                        i_hi = std::fmax(i_hi, fs[m].i_max[b]);
                    }
                    same = same && same_bits(a_lo, c.a_min[b]) && same_bits(a_hi, c.a_max[b]) &&
                           same_bits(e_lo, c.e_min[b]) && same_bits(e_hi, c.e_max[b]) &&
                           same_bits(i_lo, c.i_min[b]) && same_bits(i_hi, c.i_max[b]);
                }
            }
            (same ? matched : mismatched) += 1;
            j0 = j + 1;
        }
        CHECK(matched == cs.size());
        CHECK(mismatched == 0);
        const run_outcome co = coarse.outcome(), fo = fine.outcome();
        REQUIRE(co.events.size() == fo.events.size());
        for (std::size_t k = 0; k < co.events.size(); ++k) {
            CHECK(co.events[k].kind == fo.events[k].kind);
            CHECK(same_bits(co.events[k].t_s, fo.events[k].t_s));
        }
        REQUIRE(coarse.pairs().size() == fine.pairs().size());
        for (std::size_t k = 0; k < coarse.pairs().size(); ++k) {
            CHECK(same_bits(coarse.pairs()[k].min_distance_m, fine.pairs()[k].min_distance_m));
            CHECK(same_bits(coarse.pairs()[k].t_s, fine.pairs()[k].t_s));
        }
        MESSAGE(name << ": " << cs.size() << " coarse rows matched against " << fs.size()
                     << " fine rows; " << co.events.size() << " events");
    }
}

TEST_CASE("the ordinary steps' envelopes, folded four steps to a vector, equal the step-by-step "
          "fold bit for bit") {
    // Continuing after events makes every step take the exact sibling test, so every step
    // goes through the general checks and their one-step fold; without it nearly every step
    // is kept by the tight loop and folded four at a time. Before any event the trajectory
    // is the same (reading the map never moves it), so the samples must agree bit for bit.
    // frost_moons stays far from encounters (no switch to the adaptive integrator); the
    // crowded system is cut short of its first close approach. Few steps per sample leave
    // many partial groups of four.
    struct case_spec {
        std::string name;
        double orbits;
        std::size_t samples;
    };
    for (const case_spec& spec :
         {case_spec{"frost_moons.toml", 30, 97}, case_spec{"crowded.toml", 2, 7}}) {
        const std::string& name = spec.name;
        CAPTURE(name);
        const resolved_system sys = scenario(name);
        auto options_with = [&spec](bool every_step) {
            run_options o;
            o.orbits = spec.orbits;
            o.samples = spec.samples;
            o.continue_after_event = every_step;
            return o;
        };
        run_driver kept(sys, options_with(false)), each(sys, options_with(true));
        kept.advance();
        each.advance();
        REQUIRE(kept.outcome().events.empty());
        REQUIRE(each.outcome().events.empty());
        const auto& ks = kept.samples();
        const auto& es = each.samples();
        REQUIRE(ks.size() == es.size());
        std::size_t same_rows = 0;
        for (std::size_t k = 0; k < ks.size(); ++k) {
            const run_sample &x = ks[k], &y = es[k];
            same_rows += same_bits(x.t_s, y.t_s) && same_bits(x.a, y.a) && same_bits(x.e, y.e) &&
                         same_bits(x.a_min, y.a_min) && same_bits(x.a_max, y.a_max) &&
                         same_bits(x.e_min, y.e_min) && same_bits(x.e_max, y.e_max) &&
                         same_bits(x.i_min, y.i_min) && same_bits(x.i_max, y.i_max);
        }
        CHECK(same_rows == ks.size());
        MESSAGE(name << ": " << ks.size() << " sample rows, " << kept.progress().steps << " steps");
    }
}

namespace {
/// A Sun-like star, a Jupiter-like planet on a circular orbit at 5.2 AU and the given moons
/// (TOML [[body]] blocks), resolved.
resolved_system jovian_system(const std::string& moons) {
    const std::string text = R"(
[system]
name = "test"
[[body]]
name = "Sol-like"
mass = "1 Msun"
radius = "1 Rsun"
[[body]]
name = "Jove-like"
orbits = "Sol-like"
mass = "1 Mjup"
radius = "1 Rjup"
J2 = 0
orbit = { a = "5.2 AU", e = 0, i = "0 deg", node = "0 deg", peri = "0 deg", mean_anomaly = "0 deg" }
)" + moons;
    return resolve(parse_design(text, design_format::toml, "test.toml"));
}

std::string moon(const std::string& name, const std::string& a, const std::string& mass,
                 const std::string& phase, const std::string& sense = "prograde") {
    return "[[body]]\nname = \"" + name + "\"\norbits = \"Jove-like\"\nmass = \"" + mass +
           "\"\nradius = \"" + std::string(mass == "1e25 kg" ? "20000 km" : "10 km") +
           "\"\norbit = { a = \"" + a +
           "\", e = 0, i = \"0 deg\", node = \"0 deg\", peri = \"0 deg\", mean_anomaly = \"" +
           phase + "\", sense = \"" + sense + "\" }\n";
}

run_outcome run_for(const resolved_system& sys, double planet_orbits) {
    run_options o;
    o.samples = 20;
    o.megno = false;
    const auto& planet = sys.bodies[1];
    o.span_s = planet_orbits * 2 * c::pi *
               std::sqrt(std::pow(planet.orbit->a_m, 3) /
                         (c::G * (sys.bodies[0].mass_kg + planet.mass_kg)));
    run_driver run(sys, o);
    run.advance();
    return run.outcome();
}

bool has_event(const run_outcome& o, event_kind k) {
    for (const auto& e : o.events)
        if (e.kind == k) return true;
    return false;
}
} // namespace

TEST_CASE("Gladman (1993): two moons 3.0 mutual Hill radii apart meet; 3.8 apart never do") {
    // Equal moons of 1e-6 planet masses on circular coplanar orbits. Gladman 1993 (Icarus 106,
    // 247): Hill stable beyond 2 sqrt(3) = 3.46 mutual Hill radii. The inner moon sits at
    // 0.05 of the planet's Hill radius, where the star's pull is small.
    const double m = 1e-6 * c::M_jup;
    const double rh_planet = 5.2 * c::au * std::cbrt(c::M_jup / (3 * c::M_sun));
    const double a1 = 0.05 * rh_planet;
    for (double spacing : {3.0, 3.8}) {
        CAPTURE(spacing);
        // a2 - a1 = spacing * ((2m / 3M)^(1/3)) (a1 + a2) / 2, solved for a2.
        const double k = spacing * std::cbrt(2 * m / (3 * c::M_jup)) / 2;
        const double a2 = a1 * (1 + k) / (1 - k);
        const std::string mass = std::to_string(m) + " kg";
        const resolved_system sys =
            jovian_system(moon("Inner", std::to_string(a1) + " m", mass, "0 deg") +
                          moon("Outer", std::to_string(a2) + " m", mass, "180 deg"));
        run_options o;
        o.orbits = 1000;
        o.samples = 20;
        o.megno = false;
        run_driver run(sys, o);
        run.advance();
        const run_outcome out = run.outcome();
        if (spacing < 3.46) {
            REQUIRE_FALSE(out.events.empty());
            CHECK(out.events.front().kind == event_kind::close_approach);
        } else {
            CHECK(out.events.empty());
            CHECK(out.simulated_s == doctest::Approx(1000 * out.reference_period_s));
        }
    }
}

TEST_CASE(
    "Domingos, Winter & Yokoyama (2006): prograde limit near 0.49 RH, retrograde near 0.93 RH") {
    // Moons start on the star-planet line beyond the planet (mean anomaly 0 in the planet's
    // orbit frame, planet at its node), the phase the published limits use. 1000 planet orbits.
    const std::string small = "1e15 kg";
    CHECK(run_for(jovian_system(moon("Tilo", "0.40 RH", small, "0 deg")), 1000).events.empty());
    CHECK(has_event(run_for(jovian_system(moon("Tilo", "0.60 RH", small, "0 deg")), 1000),
                    event_kind::escape));
    CHECK(run_for(jovian_system(moon("Reva", "0.65 RH", small, "0 deg", "retrograde")), 1000)
              .events.empty());
    CHECK(has_event(
        run_for(jovian_system(moon("Reva", "1.2 RH", small, "0 deg", "retrograde")), 1000),
        event_kind::escape));
}

TEST_CASE("continue after events: the crowded system goes on to the end of its span") {
    run_options o;
    o.orbits = 300;
    o.samples = 30;
    o.megno = false;
    o.continue_after_event = true;
    run_driver run(scenario("crowded.toml"), o);
    run.advance();
    const run_outcome out = run.outcome();
    MESSAGE(out.events.size() << " events; " << decide_verdict(out).headline);
    CHECK(run.finished());
    CHECK(out.simulated_s == doctest::Approx(300 * out.reference_period_s));
    REQUIRE(out.events.size() >= 2);
    for (const auto& e : out.events) CHECK(e.kind != event_kind::numerical_failure);
    // Energy error since the last change stays small thanks to Gauss–Radau near encounters.
    CHECK(out.max_energy_error < 1e-6);
    CHECK(decide_verdict(out).kind == verdict_kind::unstable);
}

TEST_CASE(
    "continue after events: two moons on crossing orbits collide, merge, and the run goes on") {
    // Moon B's eccentric orbit crosses moon A's circular one; both are large (invented, puffy
    // bodies of 20,000 km) so that they collide within a short run.
    const resolved_system sys =
        jovian_system(moon("Amra", "0.02 RH", "1e25 kg", "0 deg") +
                      "[[body]]\nname = \"Bex\"\norbits = \"Jove-like\"\nmass = \"5e24 kg\"\n"
                      "radius = \"20000 km\"\norbit = { a = \"0.03 RH\", e = 0.45, i = \"0 deg\", "
                      "node = \"0 deg\", peri = \"0 deg\", mean_anomaly = \"100 deg\" }\n");
    run_options o;
    o.orbits = 2000;
    o.samples = 20;
    o.megno = false;
    o.continue_after_event = true;
    run_driver run(sys, o);
    run.advance();
    const run_outcome out = run.outcome();
    bool collided = false;
    for (const auto& e : out.events) {
        MESSAGE(std::string(event_name(e.kind)) << " at " << e.t_s << " s: " << e.detail);
        collided = collided || e.kind == event_kind::collision;
    }
    CHECK(collided);
    CHECK(run.finished());
    CHECK(out.simulated_s == doctest::Approx(2000 * out.reference_period_s));
}

TEST_CASE("a dynamically stable moon doomed by tides says so in the verdict") {
    // An invented small planet spinning slowly with a small close moon inside its synchronous
    // orbit: tides raised on the planet pull the moon down (Murray & Dermott ch. 4).
    const std::string text = R"(
[system]
name = "Doomed"
[[body]]
name = "Hestia"
mass = "0.9 Msun"
radius = "0.9 Rsun"
[[body]]
name = "Korrin"
orbits = "Hestia"
mass = "0.2 Mearth"
radius = "3500 km"
rotation_period = "30 h"
k2 = 0.15
Q = 60
orbit = { a = "1.3 AU", e = 0.01, i = "0 deg", node = "0 deg", peri = "0 deg", mean_anomaly = "0 deg" }
[[body]]
name = "Pell"
orbits = "Korrin"
radius = "40 km"
density = "1.9 g/cm3"
orbit = { a = "4.2 Rp", e = 0.01, i = "1 deg", node = "0 deg", peri = "0 deg", mean_anomaly = "0 deg" }
)";
    const resolved_system sys = resolve(parse_design(text, design_format::toml, "doomed.toml"));
    run_options o;
    o.orbits = 500;
    o.samples = 10;
    run_driver run(sys, o);
    run.advance();
    verdict v = decide_verdict(run.outcome());
    REQUIRE(v.kind == verdict_kind::stable);
    add_tidal_fate(v, sys);
    MESSAGE(v.headline);
    CHECK(v.kind == verdict_kind::stable);
    CHECK(v.headline.find(", but moon 'Pell' reaches the rigid Roche limit") != std::string::npos);
    CHECK(v.reasons.back().rfind("Tides: ", 0) == 0);
}
