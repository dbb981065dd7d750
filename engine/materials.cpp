// The built-in materials table: uncompressed densities with the source of every value.
#include "engine/materials.hpp"

#include <array>

namespace moonwright {

namespace {
// Densities in kg/m^3 at laboratory pressure. "checked" means the value was compared in this
// session with a reproduction of the named table; "from memory" means it was recalled and not
// re-checked against the source named; "common practice, no source" marks a round working value.
constexpr std::array builtin_table{
    material_info{"iron", 7874.0,
                  "CRC Handbook of Chemistry and Physics, Physical Constants of Inorganic "
                  "Compounds: Fe 7.874 g/cm3 at 20 C (from memory)"},
    material_info{"nickel", 8900.0,
                  "CRC Handbook of Chemistry and Physics, Physical Constants of Inorganic "
                  "Compounds: Ni 8.90 g/cm3 at 20 C (from memory)"},
    material_info{"water", 999.8,
                  "CRC Handbook of Chemistry and Physics, Properties of Ice and Supercooled "
                  "Water: liquid water 0.9998 g/cm3 at 0 C (checked)"},
    material_info{"ice", 916.7,
                  "CRC Handbook of Chemistry and Physics, Properties of Ice and Supercooled "
                  "Water: ice Ih 0.9167 g/cm3 at 0 C (checked)"},
    material_info{"graphite", 2200.0,
                  "CRC Handbook of Chemistry and Physics, Physical Constants of Inorganic "
                  "Compounds: C (graphite) 2.2 g/cm3 (from memory)"},
    material_info{"troilite", 4730.0,
                  "FeS: mid value of the specific gravity 4.67-4.79 listed for troilite by "
                  "mindat.org (checked); CRC lists synthetic FeS at 4.84 (from memory)"},
    material_info{"forsterite", 3270.0,
                  "Mg2SiO4: Deer, Howie & Zussman, An Introduction to the Rock-Forming "
                  "Minerals, 3.27 g/cm3 for the pure end member (from memory)"},
    material_info{"olivine", 3320.0,
                  "(Mg0.9Fe0.1)2SiO4, mantle olivine Fo90: Deer, Howie & Zussman, 3.32 g/cm3 "
                  "(from memory)"},
    material_info{"enstatite", 3200.0,
                  "MgSiO3: Deer, Howie & Zussman, 3.2 g/cm3 for the pure end member "
                  "(from memory)"},
    material_info{"basalt", 2900.0,
                  "CRC Handbook of Chemistry and Physics, Density of Various Solids: basalt "
                  "2.4-3.1 g/cm3; 2.9 chosen as a typical solid basalt (from memory)"},
    material_info{"granite", 2700.0,
                  "CRC Handbook of Chemistry and Physics, Density of Various Solids: granite "
                  "2.64-2.76 g/cm3; mid value (from memory)"},
    material_info{"rock", 3000.0,
                  "generic silicate rock between crust (granite 2.7) and mantle (olivine 3.3) "
                  "values; common practice, no source"},
    material_info{"carbonaceous", 2400.0,
                  "grain density of CI-like carbonaceous chondrite material, Consolmagno, Britt "
                  "& Macke 2008, Chemie der Erde 68, 1 (from memory)"},
    material_info{"ammonia_ice", 860.0,
                  "solid NH3 at 77 K, Olovsson & Templeton 1959, as tabulated in a 2022 "
                  "laboratory table of crystalline ice densities (checked; citation of the "
                  "table not checked)"},
    material_info{"methane_ice", 490.0, "solid CH4 near 90 K, about 0.49 g/cm3 (from memory)"},
    material_info{"nitrogen_ice", 1030.0,
                  "solid alpha-N2 at 9 K, 1.031 g/cm3 (Maynard-Casely, Hester & Brand 2020), as "
                  "tabulated in a 2022 laboratory table of crystalline ice densities (checked)"},
    material_info{"co2_ice", 1640.0,
                  "solid CO2 at 150 K, 1.643 g/cm3 (Simon & Peters 1980), as tabulated in a "
                  "2022 laboratory table of crystalline ice densities (checked)"},
};
} // namespace

std::span<const material_info> builtin_materials() {
    return builtin_table;
}

std::optional<double> material_density(const design& d, std::string_view name) {
    for (const auto& m : d.materials)
        if (m.name == name) return m.density_kg_m3;
    for (const auto& m : builtin_table)
        if (m.name == name) return m.density_kg_m3;
    return std::nullopt;
}

} // namespace moonwright
