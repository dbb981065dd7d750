// MEGNO against its published limits: <Y> -> 2 for regular (quasi-periodic) motion, <Y> -> 0
// for an isochronous periodic deviation, <Y> growing linearly (slope lambda / 2) for chaos.
#include "integrators/integrator.hpp"
#include "integrators/wisdom_holman.hpp"
#include "megno_systems.hpp"

#include <doctest/doctest.h>

#include <cmath>
#include <vector>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

/// <Y> sampled once per `interval` up to t_end.
std::vector<double> mean_megno_series(integrator& in, double interval, int samples) {
    std::vector<double> out;
    for (int k = 1; k <= samples; ++k) {
        in.integrate(in.time() + interval);
        out.push_back(in.megno().mean_y);
    }
    return out;
}

/// Least-squares slope of y against the sample index over the second half.
double second_half_slope(const std::vector<double>& y) {
    const std::size_t n0 = y.size() / 2, n = y.size() - n0;
    double sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (std::size_t i = n0; i < y.size(); ++i) {
        const auto x = static_cast<double>(i);
        sx += x;
        sy += y[i];
        sxx += x * x;
        sxy += x * y[i];
    }
    const auto nn = static_cast<double>(n);
    return (nn * sxy - sx * sy) / (nn * sxx - sx * sx);
}

} // namespace

// Limits: Cincotta & Simó (2000, A&AS 147, 205): <Y> -> 2 for quasi-periodic (regular) orbits,
// whose deviations grow linearly through the shear of the frequencies; <Y> ~ (lambda / 2) t for
// chaotic ones. Cincotta, Giordano & Simó (2003, Physica D 182, 151, from memory): <Y> -> 0 for
// stable isochronous periodic motion (bounded deviations, harmonic-oscillator-like).

TEST_CASE("MEGNO -> 2 for a regular two-moon system (wh, wh with the modified kick, radau)") {
    // Two moons 15 mutual Hill radii apart on circular orbits: far beyond the 2 sqrt(3) limit
    // of Gladman (1993, Icarus 106, 247), regular.
    const nbody_system sys = build_nbody(test::two_moons(15, 0.0, 1e22));
    const double p = test::moon_period(4.2e8);
    for (const std::string label : {"wh", "wh modified kick", "radau"}) {
        CAPTURE(label);
        const std::string name = label == "radau" ? "radau" : "wh";
        integrator_options o;
        o.step = name == "wh" ? p / 40 : 0.0;
        if (label == "wh modified kick") o.corrector_order = 5, o.modified_kick = true;
        auto in = make_integrator(name, sys, {}, o);
        REQUIRE(in->enable_megno(17));
        in->integrate(1000 * p);
        const megno_reading m = in->megno();
        MESSAGE(label << ": <Y> = " << m.mean_y << ", Y = " << m.y << " after 1000 inner orbits ("
                      << in->steps() << " steps), ln growth " << m.log_growth);
        CHECK(std::abs(m.mean_y - 2) < 0.05);
    }
}

TEST_CASE("MEGNO grows linearly for a chaotic two-moon system") {
    // 3.6 mutual Hill radii with e = 0.08: just outside 2 sqrt(3) for circular orbits (Gladman
    // 1993), but the eccentric orbits nearly touch: chaotic.
    const nbody_system sys = build_nbody(test::two_moons(3.6, 0.08, 1e23));
    const double p = test::moon_period(4.2e8);
    for (const char* name : {"wh", "radau"}) {
        CAPTURE(name);
        integrator_options o;
        o.step = name == std::string("wh") ? p / 60 : 0.0;
        auto in = make_integrator(name, sys, {}, o);
        REQUIRE(in->enable_megno(17));
        const std::vector<double> y = mean_megno_series(*in, 4 * p, 128);
        const double slope = second_half_slope(y) / (4 * p); // per second
        // Lyapunov exponent estimate lambda ~ 2 d<Y>/dt (Cincotta & Simó 2000).
        const double lyapunov_time = 1 / (2 * slope);
        MESSAGE(std::string(name) << ": <Y> = " << y.back()
                                  << " after 512 inner orbits, slope of <Y> over "
                                  << "the second half " << slope * p
                                  << " per orbit, Lyapunov time ~ " << lyapunov_time / p
                                  << " orbits, ln growth " << in->megno().log_growth);
        CHECK(y.back() > 10); // far from the regular 2
        CHECK(slope > 0);
    }
}

TEST_CASE("MEGNO of a Kepler orbit: 2 for a random deviation (shear), 0 along the flow") {
    resolved_system rs;
    test::add_body(rs, "Tessa", body_kind::star, -1, c::M_sun, c::R_sun);
    test::add_body(rs, "Tessa b", body_kind::planet, 0, c::M_earth, c::R_earth,
                   test::orbit(c::au, 0.3, 0.1, 0.2, 0.3, 0.4));
    const nbody_system sys = build_nbody(rs);
    const double period = c::two_pi * std::sqrt(std::pow(c::au, 3) / sys.tree().kepler_gm(1));
    wh_options o;
    o.step = period / 50;
    SUBCASE("random deviation: linear growth by the Keplerian shear, <Y> -> 2") {
        wisdom_holman wh(sys, {}, o);
        REQUIRE(wh.enable_megno(23));
        wh.integrate(3000 * period);
        MESSAGE("Kepler, random deviation: <Y> = " << wh.megno().mean_y << " after 3000 orbits");
        CHECK(std::abs(wh.megno().mean_y - 2) < 0.05);
    }
    SUBCASE("deviation along the flow (delta = (v, a)): periodic, bounded, <Y> -> 0") {
        wisdom_holman wh(sys, {}, o);
        REQUIRE(wh.enable_megno(23));
        std::vector<double> dr = wh.jacobi_velocities(), dv(dr.size(), 0.0);
        const std::vector<double>& r = wh.jacobi_positions();
        const double r2 = r[3] * r[3] + r[4] * r[4] + r[5] * r[5];
        for (std::size_t j = 3; j < 6; ++j)
            dv[j] = -sys.tree().kepler_gm(1) * r[j] / (r2 * std::sqrt(r2));
        wh.set_tangent(dr, dv);
        wh.integrate(3000 * period);
        MESSAGE("Kepler, deviation along the flow: <Y> = " << wh.megno().mean_y);
        CHECK(std::abs(wh.megno().mean_y) < 0.05);
    }
}
