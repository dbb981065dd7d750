// Units at the edges: parsing "<number> <unit>" strings into SI, and formatting SI for people.
// Inside moonwright every quantity is SI (m, kg, s, kg/m^3, rad, W).
#pragma once

#include <span>
#include <stdexcept>
#include <string>
#include <string_view>

namespace moonwright {

enum class dimension { length, mass, time, density, angle, luminosity, dimensionless };

/// A length may be absolute or relative to the body's parent (resolved once the tree is known).
enum class length_ref {
    absolute,     ///< metres
    parent_radii, ///< `Rp`: multiples of the parent's mean radius
    parent_hill,  ///< `RH`: fraction of the parent's Hill radius
};

struct unit_info {
    std::string_view symbol;
    dimension dim;
    double to_si;   ///< SI value of one unit (1 for Rp/RH: the multiple is kept as given)
    length_ref ref; ///< absolute unless Rp / RH
};

/// A parsed quantity: `value` is SI, or the multiple of Rp / RH when `ref` says so.
struct quantity {
    double value = 0.0;
    length_ref ref = length_ref::absolute;
    bool operator==(const quantity&) const = default;
};

/// Why a quantity string could not be read; the loader adds file, line and field.
class quantity_error : public std::invalid_argument {
  public:
    quantity_error(std::string found, std::string expected)
        : std::invalid_argument(found + ": expected " + expected), found_(std::move(found)),
          expected_(std::move(expected)) {}
    [[nodiscard]] const std::string& found() const noexcept { return found_; }
    [[nodiscard]] const std::string& expected() const noexcept { return expected_; }

  private:
    std::string found_, expected_;
};

/// Every unit moonwright knows.
std::span<const unit_info> all_units();
/// The unit with this exact symbol (case-sensitive), or nullptr.
const unit_info* find_unit(std::string_view symbol);
/// The symbols accepted for a dimension, comma separated, for messages ("m, km, AU, ...").
std::string unit_symbols(dimension dim);
/// A word for a dimension ("a length", "a mass", ...), for messages.
std::string_view dimension_name(dimension dim);

/// Parses "<number>" or "<number> <unit>" (a space between is optional: "0.3RH").
/// A bare number takes `default_unit`. Throws quantity_error for a malformed number, an unknown
/// unit, a unit of the wrong dimension, or a non-finite value. Sign is not checked here.
quantity parse_quantity(std::string_view text, dimension dim, std::string_view default_unit);
/// Converts a bare number given in `default_unit` to SI.
double to_si(double value, std::string_view default_unit);

/// Formats an SI value in a chosen unit with `digits` significant digits, e.g. "1.02 AU".
std::string format_in(double si_value, std::string_view unit, int digits = 4);
/// Formats an SI value exactly (17 significant digits) in a unit: round trips bit for bit.
std::string format_exact(double si_value, std::string_view unit);

} // namespace moonwright
