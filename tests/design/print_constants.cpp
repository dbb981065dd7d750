// Prints moonwright's constants (engine/constants.hpp) as "name value" lines for
// check_constants.py, which compares them with Astropy.
#include "engine/constants.hpp"

#include <cstdio>

int main() {
    namespace c = moonwright::constants;
    const struct {
        const char* name;
        double value;
    } rows[] = {
        {"G", c::G},
        {"au", c::au},
        {"GM_sun", c::GM_sun},
        {"GM_earth", c::GM_earth},
        {"GM_jup", c::GM_jup},
        {"R_sun", c::R_sun},
        {"R_earth", c::R_earth},
        {"R_jup", c::R_jup},
        {"L_sun", c::L_sun},
        {"M_sun", c::M_sun},
        {"M_earth", c::M_earth},
        {"M_jup", c::M_jup},
    };
    for (const auto& r : rows) std::printf("%s %.17g\n", r.name, r.value);
    return 0;
}
