// A design resolved into physical values: every mass, radius, density and orbital element
// known in SI, relative lengths (Rp, RH) turned into metres, left-out angles drawn from a seed.
// This is what the check, the N-body engine and the tidal model start from.
#pragma once

#include "engine/design.hpp"

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace moonwright {

/// Orbital elements relative to the parent subsystem, all SI. Retrograde orbits have i > 90 deg.
struct resolved_orbit {
    double a_m = 0, e = 0, i_rad = 0, node_rad = 0, peri_rad = 0, mean_anomaly_rad = 0;
    bool retrograde = false;
    /// Which of i, node, peri, mean anomaly were drawn from the seed (not written in the design).
    std::array<bool, 4> drawn{};
};

struct resolved_body {
    std::string name;
    body_kind kind = body_kind::star;
    int index = 0;             ///< position in resolved_system::bodies (parents before children)
    int parent = -1;           ///< index of the parent; -1 for the star
    std::vector<int> children; ///< indices, innermost orbit first
    double mass_kg = 0, radius_m = 0, density_kg_m3 = 0;
    std::optional<std::array<double, 3>> semi_axes_m; ///< irregular body, a >= b >= c
    std::optional<double> rotation_period_s, obliquity_rad;
    double j2 = 0, j4 = 0;   ///< given, derived from rotation, or 0
    bool j2_derived = false; ///< true when J2 came from the rotation rule
    std::optional<double> k2, tidal_q, time_lag_s;
    std::optional<double> luminosity_w, age_s;
    std::optional<resolved_orbit> orbit; ///< empty for the star
    /// How the mass was obtained: "mass", "radius+density", "radius+composition", "semi-axes+...".
    std::string mass_from;
};

struct resolved_system {
    std::string name;
    std::uint64_t seed = 0;                  ///< the seed used for the angles that were drawn
    std::vector<resolved_body> bodies;       ///< parents always before their children
    int find(const std::string& name) const; ///< index or -1
};

/// Resolves a validated design. `seed_override` replaces the design's seed (default seed when
/// neither is given: 1). Throws input_error for what only resolution can find (a material that
/// is not in the table, an RH length for a planet whose parent has no Hill sphere, ...).
resolved_system resolve(const design& d, std::optional<std::uint64_t> seed_override = {});

} // namespace moonwright
