// TEMPORARY materials stub so the check branch links; the real table comes from its own branch.
// Drop this file (and its line in engine/CMakeLists.txt) when the real materials.cpp is merged.
// design.hpp uses source_location without including error.hpp: include it first.
#include "engine/error.hpp"

#include "engine/materials.hpp"

#include <array>

namespace moonwright {

namespace {
// TEMPORARY: three densities from memory (CRC Handbook values for iron and ice Ih; a typical
// silicate rock), only for linking and tests in this branch.
constexpr std::array stub_table{
    material_info{"iron", 7874.0, "TEMPORARY stub, from memory"},
    material_info{"ice", 917.0, "TEMPORARY stub, from memory"},
    material_info{"rock", 3300.0, "TEMPORARY stub, from memory"},
};
} // namespace

std::span<const material_info> builtin_materials() {
    return stub_table;
}

std::optional<double> material_density(const design& d, std::string_view name) {
    for (const auto& m : d.materials)
        if (m.name == name) return m.density_kg_m3;
    for (const auto& m : stub_table)
        if (m.name == name) return m.density_kg_m3;
    return std::nullopt;
}

} // namespace moonwright
