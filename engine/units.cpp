// The unit table and the quantity parser/formatter.
#include "engine/units.hpp"

#include "engine/constants.hpp"

#include <array>
#include <charconv>
#include <cmath>
#include <fmt/format.h>

namespace moonwright {

namespace {
namespace c = constants;
constexpr std::array units_table{
    // length
    unit_info{"m", dimension::length, 1.0, length_ref::absolute},
    unit_info{"km", dimension::length, 1.0e3, length_ref::absolute},
    unit_info{"AU", dimension::length, c::au, length_ref::absolute},
    unit_info{"au", dimension::length, c::au, length_ref::absolute},
    unit_info{"Rearth", dimension::length, c::R_earth, length_ref::absolute},
    unit_info{"Rjup", dimension::length, c::R_jup, length_ref::absolute},
    unit_info{"Rsun", dimension::length, c::R_sun, length_ref::absolute},
    unit_info{"Rp", dimension::length, 1.0, length_ref::parent_radii},
    unit_info{"RH", dimension::length, 1.0, length_ref::parent_hill},
    // mass
    unit_info{"kg", dimension::mass, 1.0, length_ref::absolute},
    unit_info{"Mearth", dimension::mass, c::M_earth, length_ref::absolute},
    unit_info{"Mjup", dimension::mass, c::M_jup, length_ref::absolute},
    unit_info{"Msun", dimension::mass, c::M_sun, length_ref::absolute},
    // time
    unit_info{"s", dimension::time, 1.0, length_ref::absolute},
    unit_info{"h", dimension::time, c::hour, length_ref::absolute},
    unit_info{"d", dimension::time, c::day, length_ref::absolute},
    unit_info{"yr", dimension::time, c::year, length_ref::absolute},
    unit_info{"Myr", dimension::time, c::Myr, length_ref::absolute},
    unit_info{"Gyr", dimension::time, c::Gyr, length_ref::absolute},
    // density
    unit_info{"kg/m3", dimension::density, 1.0, length_ref::absolute},
    unit_info{"g/cm3", dimension::density, 1.0e3, length_ref::absolute},
    // angle
    unit_info{"deg", dimension::angle, c::deg, length_ref::absolute},
    unit_info{"rad", dimension::angle, 1.0, length_ref::absolute},
    // luminosity
    unit_info{"W", dimension::luminosity, 1.0, length_ref::absolute},
    unit_info{"Lsun", dimension::luminosity, c::L_sun, length_ref::absolute},
    // dimensionless
    unit_info{"1", dimension::dimensionless, 1.0, length_ref::absolute},
};

std::string_view trim(std::string_view s) {
    while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
    while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
    return s;
}
} // namespace

std::span<const unit_info> all_units() {
    return units_table;
}

const unit_info* find_unit(std::string_view symbol) {
    for (const auto& u : units_table)
        if (u.symbol == symbol) return &u;
    return nullptr;
}

std::string_view dimension_name(dimension dim) {
    switch (dim) {
    case dimension::length:
        return "a length";
    case dimension::mass:
        return "a mass";
    case dimension::time:
        return "a time";
    case dimension::density:
        return "a density";
    case dimension::angle:
        return "an angle";
    case dimension::luminosity:
        return "a luminosity";
    case dimension::dimensionless:
        return "a plain number";
    }
    return "a quantity";
}

std::string unit_symbols(dimension dim) {
    std::string out;
    for (const auto& u : units_table) {
        if (u.dim != dim || u.symbol == "au") continue;
        if (!out.empty()) out += ", ";
        out += u.symbol;
    }
    return out;
}

quantity parse_quantity(std::string_view text, dimension dim, std::string_view default_unit) {
    // Built by appending: g++ 12 -O3 warns falsely (-Wrestrict) on "\"" + std::string + "\"".
    std::string found(1, '"');
    found.append(text);
    found.push_back('"');
    const std::string expected_text =
        dim == dimension::dimensionless
            ? std::string("a number")
            : fmt::format("{} as a number with a unit ({}), or a bare number in {}",
                          dimension_name(dim), unit_symbols(dim), default_unit);
    std::string_view s = trim(text);
    double number = 0.0;
    const char* first = s.data();
    const char* last = s.data() + s.size();
    if (!s.empty() && *first == '+') ++first; // from_chars does not take a leading '+'
    auto [ptr, ec] = std::from_chars(first, last, number);
    if (ec != std::errc() || ptr == first) throw quantity_error(found, expected_text);
    if (!std::isfinite(number)) throw quantity_error(found, "a finite number");
    std::string_view unit = trim(std::string_view(ptr, static_cast<size_t>(last - ptr)));
    if (unit.empty()) unit = default_unit;
    const unit_info* u = find_unit(unit);
    if (u == nullptr) {
        throw quantity_error(found, fmt::format("a known unit for {} ({}); \"{}\" is not one",
                                                dimension_name(dim), unit_symbols(dim), unit));
    }
    if (u->dim != dim) {
        throw quantity_error(found, fmt::format("{} ({}); \"{}\" is {}", dimension_name(dim),
                                                unit_symbols(dim), unit, dimension_name(u->dim)));
    }
    return quantity{number * u->to_si, u->ref};
}

double to_si(double value, std::string_view default_unit) {
    const unit_info* u = find_unit(default_unit);
    return u ? value * u->to_si : value;
}

std::string format_in(double si_value, std::string_view unit, int digits) {
    const unit_info* u = find_unit(unit);
    const double v = u ? si_value / u->to_si : si_value;
    return fmt::format("{:.{}g} {}", v, digits, unit);
}

std::string format_exact(double si_value, std::string_view unit) {
    const unit_info* u = find_unit(unit);
    // Only SI units (to_si == 1) divide exactly; others are written in SI to keep every bit.
    if (u == nullptr || u->to_si != 1.0) {
        for (const auto& cand : units_table)
            if (u && cand.dim == u->dim && cand.to_si == 1.0) {
                u = &cand;
                break;
            }
    }
    return fmt::format("{:.17g} {}", si_value, u ? u->symbol : unit);
}

} // namespace moonwright
