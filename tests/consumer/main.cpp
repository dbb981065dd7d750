// An outside program using the installed engine: sizes the Earth's Hill sphere and the month.
#include "engine/analytic_rules.hpp"
#include "engine/constants.hpp"
#include "engine/units.hpp"

#include <cstdio>

int main() {
    namespace c = moonwright::constants;
    const double rh = moonwright::hill_radius(c::au, 0.0, c::M_earth, c::M_sun);
    const double a =
        moonwright::parse_quantity("384400 km", moonwright::dimension::length, "km").value;
    const double p = moonwright::kepler_period(a, c::M_earth, 7.342e22);
    std::printf("hill_radius_km=%.0f month_days=%.2f\n", rh / 1e3, p / c::day);
    // Sanity: about 1.5 million km and 27.3 days; a non-zero exit fails the install test.
    return (rh > 1.4e9 && rh < 1.6e9 && p > 27.0 * c::day && p < 27.6 * c::day) ? 0 : 1;
}
