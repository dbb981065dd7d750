// Analytic rules against published values; the source is named beside each check.
#include "engine/analytic_rules.hpp"
#include "engine/constants.hpp"

#include <cmath>
#include <doctest/doctest.h>

using namespace moonwright;
namespace c = moonwright::constants;

TEST_CASE("Kepler's third law: Earth-Moon sidereal month") {
    // From memory: Moon a = 384,400 km; sidereal month 27.32 d. Moon mass 7.342e22 kg (from
    // memory).
    const double p = kepler_period(384.4e6, c::M_earth, 7.342e22);
    CHECK(p / c::day == doctest::Approx(27.32).epsilon(0.005));
    CHECK(kepler_semi_major_axis(p, c::M_earth, 7.342e22) == doctest::Approx(384.4e6));
}

TEST_CASE("Hill radius of the Earth is about 1.5 million km") {
    // Murray & Dermott, Solar System Dynamics (Sec. 3.3): Earth's Hill sphere ~0.01 AU ~1.5e6 km.
    const double rh = hill_radius(c::au, 0.0, c::M_earth, c::M_sun);
    CHECK(rh / 1e9 == doctest::Approx(1.5).epsilon(0.01));
}

TEST_CASE("Roche coefficients") {
    // Equal densities reduce each rule to its coefficient times the parent radius
    // (Roche 1849 fluid 2.44; Chandrasekhar 1969 2.456; rigid 1.26; Murray & Dermott Sec. 4.12).
    CHECK(roche_limit_fluid(1.0, 1000, 1000) == doctest::Approx(2.44));
    CHECK(roche_limit_fluid_rotating(1.0, 1000, 1000) == doctest::Approx(2.456));
    CHECK(roche_limit_rigid(1.0, 1000, 1000) == doctest::Approx(1.26));
    // Density ratio 8 doubles the limit (cube root).
    CHECK(roche_limit_fluid(1.0, 8000, 1000) == doctest::Approx(4.88));
}

TEST_CASE("Domingos, Winter & Yokoyama (2006) stability limits") {
    // Domingos, Winter & Yokoyama 2006, MNRAS 373, 1227, fitted limits (coefficients from memory):
    // 0.4895 R_H prograde and 0.9309 R_H retrograde for circular orbits.
    CHECK(stability_limit_fraction(0.0, 0.0, false) == doctest::Approx(0.4895));
    CHECK(stability_limit_fraction(0.0, 0.0, true) == doctest::Approx(0.9309));
    CHECK(stability_limit_fraction(0.2, 0.0, false) == doctest::Approx(0.4895 * (1 - 0.2061)));
    CHECK(stability_limit_fraction(0.2, 0.0, true) == doctest::Approx(0.9309 * (1 - 0.21528)));
}

TEST_CASE("Gladman (1993) Hill stability spacing is 2 sqrt 3") {
    CHECK(gladman_hill_stable_spacing == doctest::Approx(2.0 * std::sqrt(3.0)));
    const double rh = mutual_hill_radius(1.0, 1.1, 1e-6, 1e-6, 1.0);
    CHECK(rh == doctest::Approx(std::cbrt(2e-6 / 3.0) * 1.05));
    CHECK(mutual_hill_spacing(1.0, 1.1, 1e-6, 1e-6, 1.0) == doctest::Approx(0.1 / rh));
}

TEST_CASE("ellipsoid volume is 4/3 pi a b c") {
    CHECK(ellipsoid_volume(3, 2, 1) == doctest::Approx(8.0 * c::pi));
    CHECK(volume_equivalent_radius(4, 2, 1) == doctest::Approx(2.0));
    CHECK(classify_shape(3, 3, 1) == shape_class::oblate);
    CHECK(classify_shape(3, 1, 1) == shape_class::prolate);
    CHECK(classify_shape(3, 2, 1) == shape_class::triaxial);
}

TEST_CASE("J2 of the Earth from its rotation") {
    // q = omega^2 R^3 / GM; J2 = k2_fluid q / 3. Earth: sidereal day 86164.1 s, R = 6378.1 km,
    // fluid Love number 0.94 (from memory); measured J2 = 1.0826e-3 (from memory).
    const double j2 = j2_from_rotation(86164.1, c::R_earth, c::M_earth, 0.94);
    CHECK(j2 == doctest::Approx(1.0826e-3).epsilon(0.02));
}

TEST_CASE("mixture density by mass fractions") {
    // CRC Handbook: iron 7.874 g/cm3, ice Ih 0.917 g/cm3. Half and half by mass: harmonic mean.
    const double w[] = {0.5, 0.5};
    const double rho[] = {7874.0, 917.0};
    CHECK(mixture_density(w, rho) == doctest::Approx(1.0 / (0.5 / 7874.0 + 0.5 / 917.0)));
}
