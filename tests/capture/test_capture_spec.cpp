// Unit tests of the capture specs: keys, units, ranges and the messages of bad input.
#include "engine/capture_experiment.hpp"
#include "engine/capture_spec.hpp"
#include "engine/constants.hpp"
#include "engine/error.hpp"

#include <doctest/doctest.h>
#include <string>

using namespace moonwright;

namespace {
std::string message_of(const auto& f) {
    try {
        f();
    } catch (const input_error& e) {
        return e.what();
    }
    return "no input_error";
}
} // namespace

TEST_CASE("intruder spec: single body with a planetocentric arrival") {
    const intruder_spec s = parse_intruder_spec("mass=1e18 kg, vinf=1 km/s, b=0.1:1 RH");
    CHECK(s.mass_kg == doctest::Approx(1e18));
    CHECK(s.vinf_m_s == doctest::Approx(1000.0));
    CHECK(s.arrival == arrival_kind::hyperbolic);
    CHECK(!s.range_is_pericentre);
    CHECK(s.range_min.value == doctest::Approx(0.1));
    CHECK(s.range_max.value == doctest::Approx(1.0));
    CHECK(s.range_min.ref == length_ref::parent_hill);
    CHECK(s.start.value == doctest::Approx(3.0));
    CHECK(!s.planar);
}

TEST_CASE("intruder spec: pericentre range, radius, start and planar approach") {
    const intruder_spec s = parse_intruder_spec(
        "mass=2e15, radius=8 km, vinf=300 m/s, q=1.5:4 Rp, start=0.5 RH, approach=planar");
    CHECK(s.mass_kg == doctest::Approx(2e15));
    CHECK(s.radius_m == doctest::Approx(8000.0));
    CHECK(s.vinf_m_s == doctest::Approx(300.0));
    CHECK(s.range_is_pericentre);
    CHECK(s.range_min.ref == length_ref::parent_radii);
    CHECK(s.start.value == doctest::Approx(0.5));
    CHECK(s.planar);
}

TEST_CASE("intruder spec: heliocentric elements") {
    const intruder_spec s = parse_intruder_spec("mass=1e16 kg, a=1.02 AU, e=0.03, i=2 deg");
    CHECK(s.arrival == arrival_kind::heliocentric);
    CHECK(s.a_m == doctest::Approx(1.02 * constants::au));
    CHECK(s.e == doctest::Approx(0.03));
    CHECK(*s.i_rad == doctest::Approx(2 * constants::deg));
    CHECK(!s.node_rad);
}

TEST_CASE("speeds take length/time units") {
    CHECK(parse_speed("1 km/s") == doctest::Approx(1000.0));
    CHECK(parse_speed("250") == doctest::Approx(250.0));
    CHECK(parse_speed("1 AU/d") == doctest::Approx(constants::au / constants::day));
    CHECK_THROWS_AS(parse_speed("1 kg/s"), quantity_error);
    CHECK_THROWS_AS(parse_speed("fast"), quantity_error);
}

TEST_CASE("pair and envelope specs") {
    const pair_spec p = parse_pair_spec("m1=1e18 kg, m2=5e17 kg, sep=200 km, e=0.1");
    CHECK(p.m1_kg == doctest::Approx(1e18));
    CHECK(p.m2_kg == doctest::Approx(5e17));
    CHECK(p.sep_m == doctest::Approx(2e5));
    CHECK(p.e == doctest::Approx(0.1));
    const envelope_spec e =
        parse_envelope_spec("rho0=1e-3 g/cm3, k=3, cutoff=20 Rp, cd=2, gas=corotating");
    CHECK(e.rho0_kg_m3 == doctest::Approx(1.0));
    CHECK(e.k == doctest::Approx(3.0));
    CHECK(e.cutoff.value == doctest::Approx(20.0));
    CHECK(e.drag_coefficient == doctest::Approx(2.0));
    CHECK(e.corotating);
}

TEST_CASE("bad specs say where, what was found and what was expected") {
    // toml++-style rule: every message names the option, the key and the column.
    CHECK(message_of([] { (void)parse_intruder_spec("mass=1e18 kg, vinf=1 km/s, bb=1 RH"); }) ==
          "--intruder:1:28: --intruder = \"bb\": expected one of the keys M, a, approach, b, "
          "density, e, i, mass, node, peri, q, radius, start, vinf");
    CHECK(message_of([] {
              (void)parse_intruder_spec("mass=1e18 kg, vinf=1 kg, b=0.1:1 RH");
          }).find("--intruder:1:15: --intruder vinf = \"1 kg\": expected a speed") == 0);
    CHECK(message_of([] {
              (void)parse_intruder_spec("mass=1e18 kg, vinf=1 km/s, b=1:0.1 RH");
          }).find("expected a range lo:hi with 0 <= lo < hi") != std::string::npos);
    CHECK(message_of([] {
              (void)parse_intruder_spec("mass=1e18 kg");
          }).find("--intruder vinf: expected") != std::string::npos);
    CHECK(message_of([] { (void)parse_pair_spec("m1=1e18 kg, sep=200 km"); }).find("--pair m2") !=
          std::string::npos);
    CHECK(message_of([] {
              (void)parse_pair_spec("m1=1e18, m2=1e18, sep=200 km, e=1.2");
          }).find("0 <= e < 1") != std::string::npos);
    CHECK(message_of([] {
              (void)parse_envelope_spec("rho0=1e-3 kg/m3, gas=windy");
          }).find("--envelope gas = windy: expected static or corotating") != std::string::npos);
    CHECK_THROWS_AS(parse_capture_mechanism("magic"), input_error);
}

TEST_CASE("Jacobi constant at L1 against the Hill-limit series") {
    // Murray & Dermott, Solar System Dynamics, Sec. 3.8 (from memory): for small mu,
    // C_L1 ~ 3 + 3^(4/3) mu^(2/3) - 10 mu / 3 in units G (M1 + M2) = a = n = 1; the neglected
    // terms are O(mu^(4/3)).
    for (double mu : {1e-3, 1e-5}) {
        const double gm_star = (1 - mu) * constants::GM_sun / (1 - 1e-3);
        const double gm_planet = mu * gm_star / (1 - mu);
        const double d = constants::au;
        const double unit = (gm_star + gm_planet) / d; // (n a)^2
        const double c_l1 = jacobi_constant_l1(gm_star, gm_planet, d) / unit;
        const double series = 3 + std::pow(3.0, 4.0 / 3.0) * std::pow(mu, 2.0 / 3.0) - 10 * mu / 3;
        CHECK(c_l1 == doctest::Approx(series).epsilon(3 * std::pow(mu, 4.0 / 3.0)));
    }
}
