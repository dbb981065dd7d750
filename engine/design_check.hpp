// The analytic design check: derived quantities of every body and findings (errors, warnings,
// notes) that say in plain words what to change. What `moonwright check` prints.
// Every finding code, its rule and its source: docs/check.md.
#pragma once

#include "engine/analytic_rules.hpp"
#include "engine/error.hpp" // before design.hpp, which uses source_location
#include "engine/resolved_system.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace moonwright {

enum class severity { error, warning, note };
/// "error", "warning", "note".
std::string_view severity_name(severity s);
/// "sphere", "oblate", "prolate", "triaxial".
std::string_view shape_class_name(shape_class s);

/// One finding: a stable snake_case code (listed in docs/check.md), the body it is about, and
/// a message in plain words with numbers and units that says what to change.
struct finding {
    severity level = severity::note;
    std::string code;
    std::string body;
    std::string message;
};

/// How a body relates to its next sibling outward (same parent, next larger a).
struct sibling_relation {
    std::string other;                    ///< name of the outer sibling
    int other_index = -1;                 ///< its index in the resolved system
    double mutual_hill_radius_m = 0;      ///< Chambers, Wetherill & Boss (1996)
    double mutual_hill_spacing = 0;       ///< |a2 - a1| / mutual Hill radius
    double period_ratio = 0;              ///< outer period / inner period (>= 1)
    std::optional<commensurability> near; ///< a near p:q within commensurability_tolerance
    double min_orbit_distance_m = 0;      ///< minimum distance between the two orbits
};

/// Everything the check derives for one body. Quantities that do not apply are empty (the
/// star has no orbit, no period, no Hill radius; a body whose parent does not rotate has no
/// synchronous orbit).
struct body_check {
    std::string name;
    body_kind kind = body_kind::star;
    std::string parent; ///< empty for the star
    double mass_kg = 0, radius_m = 0, density_kg_m3 = 0;
    double surface_gravity_m_s2 = 0, surface_gravity_g = 0, escape_velocity_m_s = 0;
    std::string mass_from;
    // Orbit around the parent.
    std::optional<double> a_m, e, i_rad, pericentre_m, apocentre_m;
    bool retrograde = false;
    std::optional<double> period_s;      ///< Kepler's third law with both masses
    std::optional<double> hill_radius_m; ///< this body's Hill radius, at its own pericentre
    /// Roche limits of this body around its parent (parent's radius and density, this body's).
    std::optional<double> roche_limit_fluid_m, roche_limit_fluid_rotating_m, roche_limit_rigid_m;
    /// Outer stability limit for this body's orbit around its parent (Domingos, Winter &
    /// Yokoyama 2006), needs a grandparent; negative when no orbit is stable.
    std::optional<double> stability_limit_m;
    /// Outer bound of the parent's Hill sphere (the parent's Hill radius at its pericentre).
    std::optional<double> parent_hill_radius_m;
    /// The parent's synchronous-orbit radius (needs the parent's rotation period).
    std::optional<double> synchronous_orbit_m;
    /// Distance of the body-parent barycentre from the parent's centre, a m / (M + m).
    std::optional<double> barycentre_offset_m;
    bool double_body = false; ///< barycentre outside the parent's radius
    double j2 = 0;
    bool j2_derived = false;
    std::optional<shape_class> shape;        ///< irregular bodies (semi-axes given)
    std::optional<double> rounding_radius_m; ///< size above which a body of its kind is round
    std::optional<sibling_relation> next_sibling;
    /// The short tidal fate in words (constant-Q tides over the star's age or main-sequence
    /// lifetime): for a planet every line of its system, for a moon its own lines. Empty when
    /// not computed (no moons, no rotation period, a failed run, or a submoon).
    std::optional<std::string> tidal_fate;
};

/// The whole check: one entry per body in resolved order, and every finding.
struct check_report {
    std::string design;
    std::uint64_t seed = 0;
    std::vector<body_check> bodies;
    std::vector<finding> findings; ///< in body order; within a body errors, warnings, notes
    [[nodiscard]] bool has_errors() const;
    [[nodiscard]] int count(severity s) const;
};

/// Relative tolerance of a near-commensurability: |ratio / (p/q) - 1| <= 1% (a choice;
/// common practice, no source). Orders p - q up to 3, p up to 10.
inline constexpr double commensurability_tolerance = 0.01;
/// Radius above which a rocky body is rounded by its own gravity (common practice, no source).
inline constexpr double rounding_radius_rock_m = 300e3;
/// Radius above which an icy body is rounded (common practice, no source).
inline constexpr double rounding_radius_ice_m = 200e3;
/// Bulk density below which a small body counts as icy for the rounding rule [kg/m^3]
/// (common practice, no source).
inline constexpr double icy_density_below_kg_m3 = 2500.0;

/// A number with `digits` significant digits, written without an exponent from 0.001 up to
/// 1e9 ("19070", "0.1659"), with one outside that range ("1.988e+30").
std::string format_significant(double value, int digits = 4);

/// Runs every analytic rule on a resolved system, and a short tidal run for each planet with
/// moons and a rotation period (`tidal_fate` notes). Never throws for a bad design: what breaks
/// a rule becomes a finding, and a tidal run that fails becomes a note.
check_report run_check(const resolved_system& sys);

/// Human-readable report: aligned tables with units in the headers, findings by severity.
std::string render_check_text(const check_report& report);
/// JSON report with the stable field names listed in docs/check.md (SI units; quantities that
/// do not apply are null). Pretty-printed with 2-space indents, ends with a newline.
std::string render_check_json(const check_report& report);

} // namespace moonwright
