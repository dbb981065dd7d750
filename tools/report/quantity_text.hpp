// Numbers with units as the report pages write them: digit groups, no-break spaces, durations
// and lengths in the unit a reader expects.
#pragma once

#include "engine/constants.hpp"
#include "engine/design_check.hpp"

#include <algorithm>
#include <cmath>
#include <string>

namespace moonwright::report {

/// A no-break space (U+00A0): keeps a number and its unit, and digit groups, on one line.
inline constexpr const char* nbsp = "\u00a0";

/// Groups the digits of a plain number by threes from 10000 up ("1472736" -> "1 472 736"),
/// as ISO 80000-1 writes them; numbers with an exponent are left as they are.
inline std::string grouped(const std::string& s, const std::string& sep) {
    if (s.empty() || s.find_first_of("eE") != std::string::npos) return s;
    const std::size_t start = s[0] == '-' ? 1 : 0;
    const std::size_t end = std::min(s.find('.'), s.size());
    if (end < start + 5) return s;
    std::string out = s.substr(0, start);
    for (std::size_t k = start; k < end; ++k) {
        if (k > start && (end - k) % 3 == 0) out += sep;
        out += s[k];
    }
    return out + s.substr(end);
}

/// A number with its unit in the same cell or sentence, kept on one line; "-" when not finite;
/// no unit for "" or "1" (a plain number).
inline std::string with_unit(double v, const std::string& unit, int digits = 4) {
    if (!std::isfinite(v)) return "-";
    const std::string n = grouped(format_significant(v, digits), nbsp);
    return unit.empty() || unit == "1" ? n : n + nbsp + unit;
}

/// A time span [s] in Myr, yr, d, h or s, whichever reads best.
inline std::string duration(double s) {
    namespace c = moonwright::constants;
    if (!std::isfinite(s)) return "-";
    if (s >= 1e6 * c::year) return with_unit(s / c::Myr, "Myr");
    if (s >= 2.0 * c::year) return with_unit(s / c::year, "yr");
    if (s >= 2.0 * c::day) return with_unit(s / c::day, "d");
    if (s >= 2.0 * c::hour) return with_unit(s / c::hour, "h");
    return with_unit(s, "s");
}

} // namespace moonwright::report
