// What a run found (events, chaos indicator, eccentricity growth, integration error) and the
// verdict drawn from it, with reasons in plain words.
#pragma once

#include <optional>
#include <string>
#include <vector>

namespace moonwright {

enum class event_kind {
    close_approach,   ///< siblings closer than the threshold in mutual Hill radii
    collision,        ///< siblings touching (sum of radii; longest semi-axis for irregular bodies)
    parent_impact,    ///< a body reaching its parent's surface
    roche_crossing,   ///< a body inside its parent's fluid Roche limit
    escape,           ///< a body beyond the escape multiple of its parent's Hill radius
    numerical_failure ///< non-finite state or energy error over the bound
};
/// Stable snake_case name used in files and JSON ("close_approach", ...).
const char* event_name(event_kind k);
/// Whether the event ends a run by default (every kind does except none today; kept explicit).
bool is_destructive(event_kind k);

struct run_event {
    double t_s = 0; ///< time of the event [s], located by interpolation
    event_kind kind = event_kind::close_approach;
    int body = -1;          ///< index of the body the event happened to
    int other = -1;         ///< the other body (sibling or parent), -1 when none
    double distance_m = 0;  ///< separation at the event [m]
    double threshold_m = 0; ///< the threshold it crossed [m]
    std::string detail;     ///< plain words, with numbers and units
};

/// Per-body extremes over the run.
struct body_extremes {
    std::string name;
    double e_initial = 0, e_max = 0;
    double a_initial_m = 0, a_min_m = 0, a_max_m = 0;
    double i_max_rad = 0;
};

enum class verdict_kind { stable, chaotic, unstable, unreliable };
const char* verdict_name(verdict_kind k);

struct run_outcome {
    double span_s = 0;                ///< requested span [s]
    double simulated_s = 0;           ///< time actually integrated [s]
    double reference_period_s = 0;    ///< period used to count orbits (outermost moon) [s]
    std::string reference_body;       ///< the body whose orbits are counted
    std::vector<run_event> events;    ///< in time order
    std::optional<double> mean_megno; ///< time-averaged MEGNO at the end (absent if not computed)
    std::optional<double> lyapunov_time_s; ///< from the MEGNO slope, when chaotic
    double max_energy_error = 0;           ///< largest |dE/E0| seen
    double max_angular_momentum_error = 0;
    std::vector<body_extremes> bodies;
    std::vector<std::string> body_names; ///< index -> name, for messages
};

struct verdict_thresholds {
    double megno_regular = 2.5;      ///< mean MEGNO at or below this is regular (2 is the ideal)
    double energy_unreliable = 1e-4; ///< |dE/E0| above this makes the run unreliable
    double e_bounded = 0.95;         ///< an eccentricity reaching this is not "bounded"
};

struct verdict {
    verdict_kind kind = verdict_kind::stable;
    std::string headline;             ///< one sentence
    std::vector<std::string> reasons; ///< the numbers behind it, plain words
};

/// Draws the verdict: unreliable when the integration error is too large to judge; unstable at
/// the first destructive event; chaotic when MEGNO says so; stable otherwise.
verdict decide_verdict(const run_outcome& outcome, const verdict_thresholds& limits = {});

} // namespace moonwright
