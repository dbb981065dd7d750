// The long-term fate of a resolved design: tidal evolution of every planet with its moons, the
// spin axes' precession and secular resonances, and their text and JSON renderings.
#pragma once

#include "engine/spin_axis.hpp"
#include "engine/tidal_evolution.hpp"

#include <optional>
#include <string>
#include <vector>

namespace moonwright {

/// The spin axis of one planet.
struct planet_spin_axis {
    std::string planet_name;
    int planet_index = -1;
    double obliquity_rad = 0;
    bool obliquity_assumed = false; ///< the design gave none: 0 used
    double moment_of_inertia_factor = 0;
    precession_result precession;
    std::vector<obliquity_warning> warnings;
};

struct tides_report {
    std::string system_name;
    tide_model model = tide_model::constant_q;
    std::vector<tidal_evolution> evolutions;    ///< planets with a rotation period, design order
    std::vector<std::string> skipped;           ///< planets left out, with the reason in words
    std::vector<std::string> secular_planets;   ///< names, in the order of the frequencies' rows
    std::optional<secular_frequencies> secular; ///< when the star has planets
    std::vector<planet_spin_axis> spin_axes;    ///< planets with rotation period and J2 > 0
    double resonance_fraction = default_resonance_fraction;
};

/// Runs the tidal evolution of every planet that has a rotation period (its direct children are
/// its moons), the Laplace-Lagrange frequencies of the star's planets, and each planet's
/// precession constant with and without its moons. Throws as evolve_tides does.
tides_report analyze_tides(const resolved_system& sys, const tidal_options& opt = {});

/// A duration in words with its unit: "850 yr", "12 kyr", "31 Myr", "1.3 Gyr".
std::string describe_duration(double seconds);

/// One fate or lock of one body, with its plain-words line.
struct tidal_fate_event {
    std::string body; ///< the moon, or the planet for star locks, early stops and resonances
    /// "survives", "roche_limit", "planet_surface", "stability_limit",
    /// "double_synchronous_lock", "lock_broken", "star_lock", "stopped_early",
    /// "obliquity_resonance".
    std::string kind;
    /// When it happens [s]: 0 for a state found at the start, the end of the run for
    /// "survives" and "stopped_early", 0 for "obliquity_resonance" (a property of the start).
    double time_s = 0;
    std::string line; ///< the same words as tides_fate_lines
};

/// Every fate and lock as a record, in the order of tides_fate_lines: per planet, for each moon
/// its double lock, broken lock and fate; then the planet's star lock and early stop; then the
/// obliquity resonances.
std::vector<tidal_fate_event> tides_fate_events(const tides_report& r);

/// One plain-words line per fate and lock, e.g. "moon 'Sel' reaches the Roche limit
/// (5,480 km) in 36 Myr" — the short form for `check`.
std::vector<std::string> tides_fate_lines(const tides_report& r);

/// The whole report as text, units on every number. `max_rows` limits the time-series table
/// (0: no table).
std::string render_tides_text(const tides_report& r, int max_rows = 21);

/// The whole report as JSON (keys carry units: _s, _m, _kg, _arcsec_per_yr ...);
/// `with_series` adds the time series.
std::string render_tides_json(const tides_report& r, bool with_series = true);

} // namespace moonwright
