// Unit parsing: every dimension, relative lengths, bare numbers, and the errors.
#include "engine/constants.hpp"
#include "engine/units.hpp"

#include <doctest/doctest.h>

using namespace moonwright;
namespace c = moonwright::constants;

TEST_CASE("quantities with units convert to SI") {
    CHECK(parse_quantity("0.92 AU", dimension::length, "km").value ==
          doctest::Approx(0.92 * c::au));
    CHECK(parse_quantity("1700 km", dimension::length, "m").value == 1.7e6);
    CHECK(parse_quantity("3.4 g/cm3", dimension::density, "kg/m3").value == doctest::Approx(3400));
    CHECK(parse_quantity("20 h", dimension::time, "d").value == 72000.0);
    CHECK(parse_quantity("2 Myr", dimension::time, "yr").value == doctest::Approx(2e6 * c::year));
    CHECK(parse_quantity("1 Msun", dimension::mass, "kg").value ==
          doctest::Approx(1.98841e30).epsilon(1e-5));
    CHECK(parse_quantity("90 deg", dimension::angle, "deg").value == doctest::Approx(c::pi / 2));
    CHECK(parse_quantity("1.1 Lsun", dimension::luminosity, "Lsun").value ==
          doctest::Approx(1.1 * c::L_sun));
}

TEST_CASE("relative lengths keep their multiple and reference") {
    const auto rp = parse_quantity("60 Rp", dimension::length, "km");
    CHECK(rp.value == 60.0);
    CHECK(rp.ref == length_ref::parent_radii);
    const auto rh = parse_quantity("0.3RH", dimension::length, "km"); // no space is fine
    CHECK(rh.value == 0.3);
    CHECK(rh.ref == length_ref::parent_hill);
}

TEST_CASE("a bare number takes the field's default unit") {
    CHECK(parse_quantity("12", dimension::length, "km").value == 12000.0);
    CHECK(parse_quantity(" +5 ", dimension::time, "h").value == 18000.0);
}

TEST_CASE("wrong dimension, unknown unit and junk are errors that say what was expected") {
    CHECK_THROWS_WITH_AS(parse_quantity("3 kg", dimension::length, "km"),
                         doctest::Contains("\"kg\" is a mass"), quantity_error);
    CHECK_THROWS_WITH_AS(parse_quantity("3 parsec", dimension::length, "km"),
                         doctest::Contains("\"parsec\" is not one"), quantity_error);
    CHECK_THROWS_AS(parse_quantity("fast", dimension::time, "h"), quantity_error);
    CHECK_THROWS_AS(parse_quantity("", dimension::time, "h"), quantity_error);
    CHECK_THROWS_AS(parse_quantity("inf km", dimension::length, "km"), quantity_error);
    CHECK_THROWS_AS(parse_quantity("nan", dimension::length, "km"), quantity_error);
}

TEST_CASE("exact formatting round trips every bit") {
    const double v = 0.1 + 0.2;
    const auto q = parse_quantity(format_exact(v, "m"), dimension::length, "km");
    CHECK(q.value == v);
    CHECK(format_in(1.5e11, "AU", 3) == "1 AU");
}
