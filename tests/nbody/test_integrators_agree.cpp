// Every registered integrator, driven through the common interface, follows the same moon.
#include "engine/constants.hpp"
#include "engine/diagnostics.hpp"
#include "integrators/integrator.hpp"
#include "nbody_fixtures.hpp"

#include <cmath>
#include <doctest/doctest.h>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
resolved_system star_planet_moon() {
    resolved_system rs;
    const int s = test::add_body(rs, "Aster", body_kind::star, -1, c::M_sun, c::R_sun);
    const int p = test::add_body(rs, "Dunmore", body_kind::planet, s, 1.2 * c::M_earth,
                                 1.05 * c::R_earth, test::orbit(c::au, 0.02, 0.0, 0.0, 0.3, 1.0));
    test::add_body(rs, "Dunmore I", body_kind::moon, p, 0.01 * c::M_earth, 1.5e6,
                   test::orbit(2.5e8, 0.04, 0.1, 0.4, 1.0, 2.0));
    return rs;
}
} // namespace

TEST_CASE("wh, radau, bs and rkf78 agree on a moon's position after 30 days") {
    const nbody_system sys = build_nbody(star_planet_moon());
    const double t_end = 30 * c::day;

    auto reference = make_integrator("radau", sys);
    reference->integrate(t_end);
    std::vector<double> q_ref, v_ref;
    reference->relative_state(q_ref, v_ref);
    const double r_moon = std::hypot(q_ref[6], q_ref[7], q_ref[8]);

    integrator_options wh_fine;
    wh_fine.corrector_order = 7;
    wh_fine.period_fraction = 0.005;
    for (const char* name : {"wh", "bs", "rkf78"}) {
        CAPTURE(name);
        auto it = make_integrator(name, sys, {}, wh_fine);
        CHECK(it->name() == name);
        it->integrate(t_end);
        CHECK(it->time() == doctest::Approx(t_end));
        std::vector<double> q, v;
        it->relative_state(q, v);
        const double miss = std::hypot(q[6] - q_ref[6], q[7] - q_ref[7], q[8] - q_ref[8]);
        // The moon's position relative to its planet agrees to a part in 1e5 of its distance
        // (the Wisdom–Holman map carries an O(dt^2) error; the adaptive ones are far tighter).
        CHECK(miss / r_moon < 1e-5);
    }
}
