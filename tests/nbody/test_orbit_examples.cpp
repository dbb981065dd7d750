// Published worked examples of element conversion and universal-variable propagation.
#include "engine/constants.hpp"
#include "engine/kepler_solver.hpp"
#include "engine/orbital_elements.hpp"

#include <doctest/doctest.h>

#include <cmath>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
constexpr double mu_km = 398600.0; // Curtis's Earth GM [km^3/s^2]
constexpr double mu = mu_km * 1e9; // [m^3/s^2]
constexpr double km = 1000.0;
double deg(double rad) {
    double d = rad / c::deg;
    return d < 0 ? d + 360 : d;
}
} // namespace

TEST_CASE("Curtis Example 4.3: orbital elements from a state vector") {
    // H. D. Curtis, Orbital Mechanics for Engineering Students, Example 4.3 (from memory):
    // r = (-6045, -3490, 2500) km, v = (-3.457, 6.618, 2.533) km/s, mu = 398600 km^3/s^2
    // -> h = 58310 km^2/s, i = 153.2 deg, node = 255.3 deg, e = 0.1712, peri = 20.07 deg,
    // true anomaly = 28.45 deg, a = 8788 km.
    const cartesian_state s{{-6045 * km, -3490 * km, 2500 * km},
                            {-3.457 * km, 6.618 * km, 2.533 * km}};
    const orbital_elements el = cartesian_to_elements(mu, s);
    const double h = std::sqrt(mu * el.q * (1 + el.e)) / (km * km);
    CHECK(h == doctest::Approx(58310).epsilon(1e-4));
    CHECK(deg(el.i) == doctest::Approx(153.2).epsilon(1e-3));
    CHECK(deg(el.node) == doctest::Approx(255.3).epsilon(1e-3));
    CHECK(el.e == doctest::Approx(0.1712).epsilon(1e-3));
    CHECK(deg(el.peri) == doctest::Approx(20.07).epsilon(1e-3));
    CHECK(deg(el.nu) == doctest::Approx(28.45).epsilon(1e-3));
    CHECK(semi_major_axis(el) / km == doctest::Approx(8788).epsilon(1e-4));
}

TEST_CASE("Curtis Example 3.7: state 60 minutes later by the universal Kepler equation") {
    // Curtis, Example 3.7 (Algorithm 3.4), from memory: r0 = 7000 i - 12124 j km,
    // v0 = 2.6679 i + 4.6210 j km/s, dt = 1 h -> r = -3297.8 i + 7413.4 j km,
    // v = -8.2977 i - 0.96309 j km/s.
    double r[3] = {7000 * km, -12124 * km, 0}, v[3] = {2.6679 * km, 4.6210 * km, 0};
    const kepler_result res = kepler_drift(mu, r, v, 3600.0);
    REQUIRE(res.converged);
    // The inputs carry 5 digits, so compare each component to 2e-4 of the vector's length.
    const double rn = std::hypot(-3297.8, 7413.4), vn = std::hypot(-8.2977, -0.96309);
    CHECK(std::abs(r[0] / km + 3297.8) < 2e-4 * rn);
    CHECK(std::abs(r[1] / km - 7413.4) < 2e-4 * rn);
    CHECK(std::abs(v[0] / km + 8.2977) < 2e-4 * vn);
    CHECK(std::abs(v[1] / km + 0.96309) < 2e-4 * vn);
}

TEST_CASE("Curtis Example 3.6: hyperbolic true anomaly one hour later") {
    // Curtis, Example 3.6, from memory: r0 = 10000 km, v0 = 10 km/s, true anomaly 30 deg;
    // after 1 h the true anomaly is 100.04 deg (e = 1.4682).
    const double r0 = 10000 * km, v0 = 10 * km;
    const double nu0 = 30 * c::deg;
    // From the vis-viva and the radial velocity of the example: find h from r0, v0, nu0.
    // e cos nu0 = h^2/(mu r0) - 1 and v0^2 = (mu/h)^2 (1 + 2 e cos nu0 + e^2).
    // Solve for h by bisection on v(h) - v0.
    auto speed = [&](double h) {
        const double ecos = h * h / (mu * r0) - 1;
        const double e = ecos / std::cos(nu0);
        return (mu / h) * std::sqrt(1 + 2 * ecos + e * e);
    };
    double lo = std::sqrt(mu * r0), hi = 10 * lo;
    for (int k = 0; k < 200; ++k) {
        const double mid = 0.5 * (lo + hi);
        (speed(mid) < v0 ? lo : hi) = mid;
    }
    const double h = 0.5 * (lo + hi);
    const double e = (h * h / (mu * r0) - 1) / std::cos(nu0);
    CHECK(e == doctest::Approx(1.4682).epsilon(2e-4));
    orbital_elements el;
    el.e = e;
    el.q = h * h / mu / (1 + e);
    el.nu = nu0;
    cartesian_state s = elements_to_cartesian(mu, el);
    REQUIRE(kepler_drift(mu, s.r.data(), s.v.data(), 3600.0).converged);
    CHECK(deg(cartesian_to_elements(mu, s).nu) == doctest::Approx(100.04).epsilon(2e-4));
}
