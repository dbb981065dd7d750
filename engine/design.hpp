// The design model: what a design file says, in SI, before anything is derived or drawn.
// TOML and JSON files load into this one model (engine/design_loader.hpp).
#pragma once

#include "engine/error.hpp"
#include "engine/units.hpp"

#include <array>
#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace moonwright {

/// Depth in the tree: the star (root), planets, moons, submoons.
enum class body_kind { star, planet, moon, submoon };
enum class orbit_sense { prograde, retrograde };

/// A length as written: metres, or a multiple of the parent's radius (Rp) or Hill radius (RH).
using length_spec = quantity;

/// An orbit as written. Elements are relative to the parent subsystem; angles may be left out
/// (drawn from the seed when the design is resolved).
struct orbit_spec {
    std::optional<length_spec> a;           ///< semi-major axis (or give period_s)
    std::optional<double> period_s;         ///< orbital period [s] (or give a)
    double e = 0.0;                         ///< eccentricity, 0 <= e < 1
    std::optional<double> i_rad;            ///< inclination to the reference plane [rad]
    std::optional<double> node_rad;         ///< longitude of the ascending node [rad]
    std::optional<double> peri_rad;         ///< argument of pericentre [rad]
    std::optional<double> mean_anomaly_rad; ///< mean anomaly at t = 0 [rad]
    std::optional<orbit_sense> sense;       ///< prograde when left out
    bool operator==(const orbit_spec&) const = default;
};

struct material_fraction {
    std::string material; ///< a name from the built-in table or the design's [materials]
    double fraction = 0;  ///< mass fraction, the fractions of a body sum to 1
    bool operator==(const material_fraction&) const = default;
};

/// One body as written. Exactly one way of giving its mass: mass; radius + density;
/// radius + composition; or semi_axes (+ density or composition) for an irregular body.
struct body_spec {
    std::string name;
    std::string orbits;            ///< parent's name; empty for the star
    std::optional<body_kind> kind; ///< as written; derived from the tree when left out
    std::optional<double> mass_kg;
    std::optional<double> radius_m; ///< mean radius
    std::optional<double> density_kg_m3;
    std::vector<material_fraction> composition;
    std::optional<std::array<double, 3>> semi_axes_m; ///< irregular body: a >= b >= c
    // Spin and tides (planets mostly; any body may give them).
    std::optional<double> rotation_period_s;
    std::optional<double> obliquity_rad;
    std::optional<double> j2, j4;     ///< zonal harmonics; J2 derived from rotation when left out
    std::optional<double> k2;         ///< tidal Love number
    std::optional<double> tidal_q;    ///< tidal quality factor Q
    std::optional<double> time_lag_s; ///< constant time-lag model alternative to Q
    // Star.
    std::optional<double> luminosity_w;
    std::optional<double> age_s;
    std::optional<orbit_spec> orbit; ///< every body but the star has one
    bool operator==(const body_spec&) const = default;
};

/// A material added by the design file to the built-in table.
struct material_spec {
    std::string name;
    double density_kg_m3 = 0;
    std::string source; ///< where the density comes from (free text)
    bool operator==(const material_spec&) const = default;
};

/// A whole design. Equality compares content only, not where it was read from.
struct design {
    std::string name;
    std::string description;
    std::optional<std::uint64_t> seed;    ///< for angles left out; a run's --seed overrides
    std::vector<material_spec> materials; ///< additions to the built-in table
    std::vector<body_spec> bodies;        ///< in file order

    // Provenance (not part of equality).
    std::string source_name; ///< file path or label
    std::string source_text; ///< the original text, stored with results
    /// Where each field was written: key is the field path, e.g. "body[Sel].orbit.e".
    std::map<std::string, source_location> where;

    bool operator==(const design& o) const {
        return name == o.name && description == o.description && seed == o.seed &&
               materials == o.materials && bodies == o.bodies;
    }
};

/// "star", "planet", "moon", "submoon": the name used in design files, messages and results.
inline const char* body_kind_name(body_kind k) {
    switch (k) {
    case body_kind::star:
        return "star";
    case body_kind::planet:
        return "planet";
    case body_kind::moon:
        return "moon";
    case body_kind::submoon:
        return "submoon";
    }
    return "body";
}

/// Field path used in messages and in design::where, e.g. body_field("Sel", "orbit.e").
inline std::string body_field(const std::string& body_name, const std::string& field) {
    return "body[" + body_name + "]" + (field.empty() ? "" : "." + field);
}

} // namespace moonwright
