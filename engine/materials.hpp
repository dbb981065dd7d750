// The built-in table of materials with handbook densities (and their sources), plus the
// additions a design file makes in its [materials] table.
#pragma once

#include "engine/design.hpp"

#include <optional>
#include <span>
#include <string_view>

namespace moonwright {

struct material_info {
    std::string_view name;   ///< key used in a design's composition, e.g. "iron"
    double density_kg_m3;    ///< uncompressed density at laboratory conditions
    std::string_view source; ///< where the value comes from
};

/// Every built-in material.
std::span<const material_info> builtin_materials();
/// Density of a material by name: the design's own [materials] first, then the built-in table.
std::optional<double> material_density(const design& d, std::string_view name);

} // namespace moonwright
