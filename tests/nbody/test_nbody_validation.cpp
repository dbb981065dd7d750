// N-body checks against published results: J2 nodal precession and the regression of the
// Moon's node (the long ones are in test_nbody_long.cpp).
#include "engine/constants.hpp"
#include "engine/diagnostics.hpp"
#include "integrators/wisdom_holman.hpp"
#include "nbody_fixtures.hpp"

#include <doctest/doctest.h>

#include <cmath>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

/// Least-squares slope of y(x).
double slope(const std::vector<double>& x, const std::vector<double>& y) {
    double mx = 0, my = 0;
    for (std::size_t k = 0; k < x.size(); ++k) {
        mx += x[k];
        my += y[k];
    }
    mx /= static_cast<double>(x.size());
    my /= static_cast<double>(x.size());
    double sxy = 0, sxx = 0;
    for (std::size_t k = 0; k < x.size(); ++k) {
        sxy += (x[k] - mx) * (y[k] - my);
        sxx += (x[k] - mx) * (x[k] - mx);
    }
    return sxy / sxx;
}

/// Unwraps an angle series in place.
void unwrap(std::vector<double>& a) {
    for (std::size_t k = 1; k < a.size(); ++k) {
        while (a[k] - a[k - 1] > c::pi) a[k] -= c::two_pi;
        while (a[k] - a[k - 1] < -c::pi) a[k] += c::two_pi;
    }
}

} // namespace

TEST_CASE("J2 nodal precession of a low moon matches -3/2 n J2 (R/a)^2 cos i / (1-e^2)^2") {
    // Murray & Dermott, Solar System Dynamics (1999), eq. 6.249 (secular rate of the node
    // due to J2, first order).
    const double j2 = 1.0826e-3, radius = c::R_earth;
    const double a = 2.0 * radius, e = 0.02, inc = 30 * c::deg;
    resolved_system rs;
    test::add_body(rs, "Orn", body_kind::star, -1, c::M_earth, radius, {}, j2); // isolated planet
    test::add_body(rs, "Orn I", body_kind::moon, 0, 1e-10 * c::M_earth, 1.0,
                   test::orbit(a, e, inc, 0.3, 0.5, 0.0));
    const nbody_system sys = build_nbody(rs);
    wh_options o;
    o.period_fraction = 1.0 / 40;
    wisdom_holman wh(sys, {}, o);
    const double n = std::sqrt(sys.tree().kepler_gm(1) / (a * a * a));
    const double expect =
        -1.5 * n * j2 * std::pow(radius / a, 2) * std::cos(inc) / std::pow(1 - e * e, 2);
    std::vector<double> t, node, q, v;
    const double t_end = 60 * c::day;
    const auto per_sample = static_cast<std::size_t>(std::ceil(t_end / 600 / wh.step_size()));
    for (int k = 0; k <= 600; ++k) {
        if (k > 0) wh.advance(per_sample);
        wh.relative_state(q, v);
        t.push_back(wh.time());
        node.push_back(osculating_elements(wh.forces().tree(), q.data(), v.data())[1].node);
    }
    unwrap(node);
    const double rate = slope(t, node);
    MESSAGE("node rate " << rate << " rad/s, theory " << expect);
    CHECK(rate == doctest::Approx(expect).epsilon(0.01));
}

TEST_CASE("Earth-Moon-Sun: the Moon's node regresses with a period of 18.6 years") {
    // The lunar nodal period of 18.61 years is a fact of the trade (e.g. Murray & Dermott
    // Sec. 6.x); the Moon's mean elements a = 384,400 km, e = 0.0549, i = 5.145 deg to the
    // ecliptic, the Earth's e = 0.0167 and the Moon/Earth mass ratio 1/81.30 are from memory.
    auto earth_moon_sun = [](double moon_a) {
        resolved_system rs;
        const int sun = test::add_body(rs, "Sun", body_kind::star, -1, c::M_sun, c::R_sun);
        const int earth =
            test::add_body(rs, "Earth", body_kind::planet, sun, c::M_earth, c::R_earth,
                           test::orbit(c::au, 0.0167, 0.0, 0.0, 1.8, 0.0));
        test::add_body(rs, "Moon", body_kind::moon, earth, c::M_earth / 81.30, 1.7374e6,
                       test::orbit(moon_a, 0.0549, 5.145 * c::deg, 2.0, 0.5, 1.0));
        return build_nbody(rs);
    };
    wh_options o;
    o.period_fraction = 1.0 / 160;
    // Time-mean osculating a of the Moon over `span`, sampled 400 times.
    auto mean_a_over = [&](const nbody_system& s, double span) {
        wisdom_holman w(s, {}, o);
        std::vector<double> q, v;
        const auto per = static_cast<std::size_t>(std::ceil(span / 400 / w.step_size()));
        double sum = 0;
        for (int k = 0; k < 400; ++k) {
            w.advance(per);
            w.relative_state(q, v);
            sum += semi_major_axis(osculating_elements(w.forces().tree(), q.data(), v.data())[2]);
        }
        return sum / 400;
    };
    // The recalled a = 384,400 km is a mean value; osculating a starting there has a time mean
    // 0.8% higher (the solar tide). Rescale the starting a until the mean over a year (13 lunar
    // months, whole cycles of the largest solar terms) is 384,400 km: two fixed-point passes.
    double a_start = 3.844e8;
    for (int pass = 0; pass < 2; ++pass) {
        const double m = mean_a_over(earth_moon_sun(a_start), c::year);
        a_start *= 3.844e8 / m;
        MESSAGE("pass " << pass << ": mean a " << m / 1e3 << " km; new start a " << a_start / 1e3
                        << " km");
    }
    const nbody_system sys = earth_moon_sun(a_start);
    wisdom_holman wh(sys, {}, o);
    std::vector<double> t, node, q, v;
    const double t_end = 18.6 * c::year;
    double mean_a = 0;
    const auto per_sample = static_cast<std::size_t>(std::ceil(t_end / 2000 / wh.step_size()));
    for (int k = 0; k <= 2000; ++k) {
        if (k > 0) wh.advance(per_sample);
        wh.relative_state(q, v);
        t.push_back(wh.time());
        const auto el = osculating_elements(wh.forces().tree(), q.data(), v.data())[2];
        node.push_back(el.node);
        mean_a += semi_major_axis(el) / 2001;
    }
    MESSAGE("time-mean osculating a of the Moon " << mean_a / 1e3 << " km");
    unwrap(node);
    const double period = c::two_pi / std::abs(slope(t, node)) / c::year;
    MESSAGE("lunar nodal period " << period << " yr");
    CHECK(slope(t, node) < 0); // regression
    // Measured 18.38 yr (1.3% short of 18.61 yr) with the mean a set to 384,400 km above;
    // starting from osculating a = 384,400 km gave a mean a 0.8% high and 18.16 yr (2.4%
    // short), as the rate scales as a^1.5. What is left is the limit of the recalled elements
    // and of a three-body model (no planets, no Earth J2). Within 2%: the goal.
    CHECK(period == doctest::Approx(18.61).epsilon(0.02));
}
