// Stability maps: a 1-D scan or 2-D grid over numeric design fields, one short N-body run with
// MEGNO per cell, cells run in parallel and stored in a preallocated grid.
#pragma once

#include "engine/design.hpp"
#include "engine/units.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace moonwright {

/// One scanned field: BODY.FIELD=FROM:TO:N as written on the command line.
struct map_axis {
    std::string text;  ///< the specification as written
    std::string body;  ///< body name in the design
    std::string field; ///< a, e, i, node, peri, mean_anomaly, mass, radius
    /// Unit the values are shown and stored in ("RH", "Rp", "AU", "deg", "kg", "1", ...).
    std::string unit;
    double unit_si = 1;                    ///< SI value of one `unit` (1 for RH, Rp and "1")
    length_ref ref = length_ref::absolute; ///< RH / Rp lengths keep their multiple
    double from = 0, to = 0;               ///< in `unit`
    std::size_t n = 1;                     ///< number of cells (>= 1)

    /// The i-th cell value in `unit`: from + i (to - from) / (n - 1) (from alone when n = 1).
    [[nodiscard]] double value(std::size_t i) const;
};

/// Parses "BODY.FIELD=FROM:TO:N" (FIELD may be written "orbit.a" or "a"). Checks the field's
/// name, units and range against `d` (unknown body, star without orbit, e outside [0, 1), a
/// negative length or mass). Throws input_error naming `option` (e.g. "--vary").
map_axis parse_map_axis(const std::string& text, const design& d,
                        const std::string& option = "--vary");

/// Sets one field of a design to a value given in the axis's unit (the value becomes SI, or
/// an RH/Rp multiple). Setting i clears a written sense (the inclination then decides it);
/// setting mass drops a written density or composition; setting a drops a written period.
void set_design_field(design& d, const map_axis& axis, double value);

struct map_options {
    std::vector<map_axis> axes; ///< one or two
    double orbits = 1000;       ///< span in orbits of the reference planet (see map_result)
    unsigned jobs = 1;          ///< worker threads; results do not depend on it
    std::uint64_t seed = 1;     ///< left-out angles and the MEGNO deviation vector
    std::size_t samples = 100;  ///< element samples per run (max e comes from their envelopes)
};

/// Codes stored for the first event of a cell; -1 when the cell had none.
inline constexpr int map_no_event = -1;
/// "-1 none, 0 close_approach, 1 collision, ..." for the legend attribute.
std::string map_event_legend();

/// Analytic references for the varied body when it is a moon (all SI; 0 when unknown): the
/// body of the first `a` axis, else of the first axis.
struct map_references {
    std::string body;           ///< the body they are for
    bool moon = false;          ///< the varied body is a moon (the limits below apply)
    bool retrograde = false;    ///< its sense in the unvaried design
    double e_planet = 0;        ///< planet eccentricity
    double e_moon = 0;          ///< moon eccentricity in the unvaried design
    double planet_a_m = 0;      ///< planet semi-major axis [m]
    double hill_radius_m = 0;   ///< planet's Hill radius a_p (1 - e_p) (m_p / 3 M)^(1/3) [m]
    double dwy_hill_m = 0;      ///< a_p (m_p / 3 M)^(1/3), the unit of Domingos et al. [m]
    double stability_m = 0;     ///< Domingos, Winter & Yokoyama (2006) limit for e_moon [m]
    double roche_fluid_m = 0;   ///< fluid Roche limit of the moon [m]
    double metres_per_unit = 0; ///< one unit of an `a` axis of this body in metres (RH, Rp, m)
};

struct map_result {
    std::vector<map_axis> axes;
    std::string reference_body; ///< planet whose orbits set the span
    double reference_period_s = 0;
    double span_s = 0; ///< of the unvaried design (cells whose planet moves use their own)
    /// Grids, row-major: index = i0 * n1 + i1 (axis 0 slow). Times in s.
    std::vector<double> mean_megno, survival_s, span_cell_s, max_e;
    std::vector<int> survived, first_event;
    map_references references;
    /// 1-D scans of a: the last surviving cell before the first failure and the first failing
    /// one (in the axis unit); edge = their midpoint. Empty when not a 1-D scan of a or no
    /// cell failed (or the first cell failed).
    std::optional<double> last_surviving, first_failing, edge;
    std::size_t cells() const { return survival_s.size(); }
};

/// The analytic references run_stability_map computes for `axes` (the body of the first `a`
/// axis, else of the first axis) on design `d` resolved with `seed`; for readers of a stored
/// map (the report page), which rebuild them from /design/text and the axes' specifications.
map_references map_references_for(const design& d, const std::vector<map_axis>& axes,
                                  std::uint64_t seed);

/// Runs the map. Cells whose design cannot be resolved are input errors (thrown before any
/// integration for the corners; other cells throw when reached).
map_result run_stability_map(const design& d, const map_options& options);

/// Writes the map to HDF5 (/run@command = "map", /map/axis0, /map/axis1, grids, references).
void write_map_file(const std::string& path, const design& d, const map_options& options,
                    const map_result& r, const std::string& version);

} // namespace moonwright
