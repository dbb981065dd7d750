// Spin-axis precession and Laplace-Lagrange frequencies against published values.
#include "engine/constants.hpp"
#include "engine/spin_axis.hpp"

#include <cmath>
#include <doctest/doctest.h>
#include <vector>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
double arcsec_per_yr(double rad_s) {
    return rad_s * 180.0 * 3600.0 / c::pi * c::year;
}
double arcsec_per_yr_to_rad_s(double v) {
    return v / (180.0 * 3600.0 / c::pi * c::year);
}

// Laplace coefficient from its hypergeometric series (Murray & Dermott 1999, eq. 6.68):
// b_s^(j) = 2 (s)_j / j! alpha^j sum_k (s)_k (s+j)_k / (k! (j+1)_k) alpha^(2k).
double laplace_series(double s, int j, double alpha) {
    double pref = 2;
    for (int i = 0; i < j; ++i) pref *= (s + i) / (i + 1);
    pref *= std::pow(alpha, j);
    double term = 1, sum = 1;
    for (int k = 0; k < 2000; ++k) {
        term *= (s + k) * (s + j + k) / ((k + 1.0) * (j + 1.0 + k)) * alpha * alpha;
        sum += term;
        if (term < 1e-17 * sum) break;
    }
    return pref * sum;
}
} // namespace

TEST_CASE("Laplace coefficients: quadrature against the series") {
    for (double alpha : {0.1, 0.5, 0.544493, 0.8, 0.95})
        for (int j : {0, 1, 2, 3}) {
            CHECK(laplace_coefficient(1.5, j, alpha) ==
                  doctest::Approx(laplace_series(1.5, j, alpha)).epsilon(1e-11));
            CHECK(laplace_coefficient(0.5, j, alpha) ==
                  doctest::Approx(laplace_series(0.5, j, alpha)).epsilon(1e-11));
        }
    // Murray & Dermott Sec. 7.4 Jupiter-Saturn: b_{3/2}^(1) = 3.17296, b_{3/2}^(2) = 2.07110 at
    // alpha = 0.544493 (from memory; SciPy quad gave 3.1729646 and 2.0710972).
    CHECK(laplace_coefficient(1.5, 1, 0.544493) == doctest::Approx(3.17296).epsilon(1e-5));
    CHECK(laplace_coefficient(1.5, 2, 0.544493) == doctest::Approx(2.07110).epsilon(1e-5));
    CHECK_THROWS(laplace_coefficient(1.5, 1, 1.0));
}

TEST_CASE("Laplace-Lagrange: the Jupiter-Saturn example of Murray & Dermott") {
    // Murray & Dermott (1999) Sec. 7.4-7.5 (values from memory): m_J = 9.54786e-4, m_S = 2.85837e-4
    // solar masses, a_J = 5.202545 au, a_S = 9.554841 au, n_J = 30.3374 deg/yr, n_S = 12.1890
    // deg/yr; results g1 = 9.63429e-4, g2 = 6.09915e-3, f1 = 0, f2 = -7.06256e-3 deg/yr,
    // i.e. 3.468, 21.957 and -25.425 "/yr. (The 3.7, 22.3 and -26.3 "/yr sometimes quoted belong to
    // the full planetary system's g5, g6, s6, not to this two-planet model; recalled, not checked.)
    const double deg_per_yr = c::deg / c::year;
    std::vector<secular_planet> p = {
        {"Jupiter", 9.54786e-4 * c::M_sun, 5.202545 * c::au, 30.3374 * deg_per_yr},
        {"Saturn", 2.85837e-4 * c::M_sun, 9.554841 * c::au, 12.1890 * deg_per_yr}};
    const auto s = laplace_lagrange(c::M_sun, p);
    REQUIRE(s.g_rad_s.size() == 2);
    MESSAGE("g = " << arcsec_per_yr(s.g_rad_s[0]) << ", " << arcsec_per_yr(s.g_rad_s[1])
                   << " \"/yr; f = " << arcsec_per_yr(s.f_rad_s[0]) << ", "
                   << arcsec_per_yr(s.f_rad_s[1]) << " \"/yr");
    CHECK(s.g_rad_s[0] / deg_per_yr == doctest::Approx(9.63429e-4).epsilon(0.01));
    CHECK(s.g_rad_s[1] / deg_per_yr == doctest::Approx(6.09915e-3).epsilon(0.01));
    CHECK(s.f_rad_s[0] / deg_per_yr == doctest::Approx(-7.06256e-3).epsilon(0.01));
    CHECK(std::abs(s.f_rad_s[1]) < 1e-12 * std::abs(s.f_rad_s[0]));
    // Mean motions from Kepler's law instead of the tabulated ones change little.
    std::vector<secular_planet> pk = {p[0], p[1]};
    pk[0].mean_motion_rad_s.reset();
    pk[1].mean_motion_rad_s.reset();
    const auto sk = laplace_lagrange(c::M_sun, pk);
    CHECK(sk.g_rad_s[1] == doctest::Approx(s.g_rad_s[1]).epsilon(0.01));
}

TEST_CASE("Earth's lunisolar precession with and without the Moon") {
    // Lunisolar precession 50.3"/yr, period ~25.8 kyr (from memory). Earth J2 = 1.0826e-3,
    // C/MR^2 = 0.3307, obliquity 23.44 deg, sidereal day 86164.1 s; Moon 7.342e22 kg at 384,400 km,
    // e = 0.0549, i = 5.145 deg (from memory).
    std::vector<precession_moon> moon = {{"Moon", 7.342e22, 384.4e6, 0.0549, 5.145 * c::deg}};
    const auto p = precession_constant(c::two_pi / 86164.1, 1.0826e-3, 0.3307, c::M_earth,
                                       c::R_earth, 23.44 * c::deg, c::M_sun, c::au, 0.0167, moon);
    const double rate = arcsec_per_yr(p.rate_rad_s);
    MESSAGE("alpha = " << arcsec_per_yr(p.alpha_rad_s) << " \"/yr, rate " << rate
                       << " \"/yr, without Moon " << arcsec_per_yr(p.rate_no_moons_rad_s)
                       << " \"/yr, ratio " << p.rate_no_moons_rad_s / p.rate_rad_s);
    CHECK(rate == doctest::Approx(50.3).epsilon(0.05));
    CHECK(c::two_pi / p.rate_rad_s / c::year == doctest::Approx(25.8e3).epsilon(0.05));
    // Without the Moon about a third (from memory): the Sun's share of the torque. Our formula
    // gives 0.32.
    CHECK(p.rate_no_moons_rad_s / p.rate_rad_s == doctest::Approx(0.3).epsilon(0.17));
    REQUIRE(p.distant_moons.size() == 1);
    // Earth's Laplace radius is about 8 Earth radii (Tremaine, Touma & Namouni 2009; from memory).
    CHECK(p.laplace_radius_m / c::R_earth == doctest::Approx(8.4).epsilon(0.1));
}

TEST_CASE("Close moons move with the equator and add to J2 and to the spin") {
    // French et al. (1993): a ring of close moons adds q to J2 and l to C; with l << q / J2 the
    // precession grows by about (J2 + q)/J2.
    std::vector<precession_moon> close = {{"Inner", 1e21, 3 * c::R_earth, 0, 0}};
    const auto p = precession_constant(c::two_pi / 86164.1, 1.0826e-3, 0.3307, c::M_earth,
                                       c::R_earth, 0.0, c::M_sun, c::au, 0.0, close);
    REQUIRE(p.close_moons.size() == 1);
    const double q = 0.5 * 1e21 / c::M_earth * 9;
    const double n = std::sqrt(c::G * (c::M_earth + 1e21) / std::pow(3 * c::R_earth, 3));
    const double l = 1e21 / c::M_earth * 9 * n / (c::two_pi / 86164.1);
    CHECK(p.alpha_rad_s / p.alpha_no_moons_rad_s ==
          doctest::Approx((1.0826e-3 + q) / 1.0826e-3 * 0.3307 / (0.3307 + l)));
}

TEST_CASE("Obliquity warning near a nodal frequency") {
    // Laskar & Robutel (1993): chaos where the precession frequency meets the nodal frequencies.
    secular_frequencies s;
    s.f_rad_s = {arcsec_per_yr_to_rad_s(-18.0), 0.0};
    precession_result p;
    p.rate_rad_s = arcsec_per_yr_to_rad_s(50.0);
    p.rate_no_moons_rad_s = arcsec_per_yr_to_rad_s(16.0);
    const auto w = obliquity_resonances(p, s);
    REQUIRE(w.size() == 1);
    CHECK_FALSE(w[0].with_moons);
    CHECK(w[0].relative_gap == doctest::Approx(2.0 / 18.0));
    CHECK(obliquity_resonances(p, s, 0.05).empty());
}
