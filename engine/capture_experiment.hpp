// Monte Carlo capture experiments: bodies (or bound pairs) arriving at a planet of a design,
// integrated with Gauss–Radau under gravity, binary exchange or gas drag, and classified as
// flyby, temporary capture, kept capture, impact or collision with a moon.
#pragma once

#include "engine/capture_spec.hpp"
#include "engine/design.hpp"
#include "engine/statistics.hpp"

#include <array>
#include <atomic>
#include <cmath>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace moonwright {

/// Everything a capture experiment needs besides the design.
struct capture_options {
    std::string planet; ///< name of the planet in the design
    capture_mechanism mechanism = capture_mechanism::gravity;
    intruder_spec intruder;
    std::optional<pair_spec> pair;         ///< required by (and only by) the binary mechanism
    std::optional<envelope_spec> envelope; ///< required by (and only by) the drag mechanism
    std::size_t trials = 100;
    std::uint64_t seed = 1;
    unsigned jobs = 1;
    std::optional<double> span_s; ///< default: 20 orbital periods of the planet
    double leave_factor = 1.2;    ///< a member has left beyond leave_factor * start
    double check_fraction = 0.05; ///< checks at most every fraction of distance / speed
    double radau_epsilon = 1e-9;
    /// Work budget of one trial: force evaluations of the integrator. A trial that needs more
    /// ends as "unresolved" (reported, never hidden) instead of running without end; see
    /// docs/capture.md. 0: no budget.
    std::size_t max_force_evaluations = 20'000'000;
};

/// What happened to one member of the intruder in one trial.
struct capture_member_result {
    bool captured = false;           ///< at least one capture episode (see docs/capture.md)
    bool kept = false;               ///< in a capture episode at the end of the span
    int episodes = 0;                ///< capture episodes
    double longest_s = 0;            ///< longest capture episode [s] (up to the end when kept)
    std::vector<double> durations_s; ///< every capture episode [s]
    std::string fate = "left";       ///< left, kept, bound, impact, moon-collision, unbound-inside
    // Final planetocentric orbit (NaN unless the member is bound at the end).
    double a_hill = std::nan("");
    double e = std::nan("");
    double i_rad = std::nan(""); ///< to the planet's orbital plane; > pi/2 retrograde
};

/// One trial.
struct capture_trial_result {
    std::size_t trial = 0;
    std::uint64_t seed = 0;
    double b_m = 0, q_m = 0; ///< impact parameter and pericentre of the drawn hyperbola [m]
    double vinf_m_s = 0;
    /// flyby, temporary, kept, exchange, impact, moon-collision, failed, unresolved
    std::string outcome;
    std::vector<capture_member_result> members; ///< 1 or 2
    bool pair_split = false;   ///< the pair is unbound at the end (two-body energy >= 0)
    double min_distance_m = 0; ///< closest approach of any member to the planet [m]
    std::string collided_with; ///< body name when the trial ended in a collision
    double end_s = 0;          ///< when the trial ended [s]
    /// Jacobi constant of the (centre of mass of the) intruder at the start in the star–planet
    /// rotating frame and its value at L1 [m^2 s^-2]; meaningful for a circular planet orbit.
    double jacobi = 0, jacobi_l1 = 0;
    int moons_hit = 0, moons_unbound = 0; ///< existing moons hit, or unbound at the end
    double moon_max_de = 0;               ///< largest change of any moon's eccentricity
};

/// Ensemble numbers.
struct capture_summary {
    std::size_t trials = 0, captured = 0, kept = 0, impacts = 0, moon_collisions = 0;
    std::size_t pair_splits = 0, exchanges = 0, kept_prograde = 0, kept_retrograde = 0;
    std::size_t moons_hit = 0, moons_unbound = 0;
    std::size_t failed = 0, unresolved = 0; ///< trials the integrator could not finish
    proportion_interval capture_probability, keep_probability;
    std::vector<double> durations_s;                        ///< every capture episode [s]
    std::vector<double> final_a_hill, final_e, final_i_rad; ///< kept members
};

/// The resolved setting shared by all trials (SI).
struct capture_setting {
    double hill_radius_m = 0, planet_radius_m = 0, planet_mass_kg = 0, star_mass_kg = 0;
    double planet_period_s = 0, span_s = 0, start_m = 0, range_min_m = 0, range_max_m = 0;
    double envelope_cutoff_m = 0;
    std::vector<std::string> moon_names;
};

struct capture_result {
    capture_setting setting;
    std::vector<capture_trial_result> trials; ///< in trial order
    capture_summary summary;
};

/// Checks the options against the design and resolves lengths (RH, Rp). Throws input_error.
capture_setting prepare_capture(const design& d, const capture_options& o);

/// Runs one trial (independent of every other: its geometry comes from derive_seed(seed, trial)).
capture_trial_result run_capture_trial(const design& d, const capture_options& o,
                                       const capture_setting& s, std::size_t trial);

/// Runs every trial on o.jobs threads; results do not depend on the thread count. `progress`
/// (optional) is called after each finished trial with the count done, from worker threads
/// under a lock. Stops early (returning the trials done, in order) when `stop` becomes true.
capture_result run_capture_experiment(const design& d, const capture_options& o,
                                      const std::function<void(std::size_t)>& progress = {},
                                      const std::atomic<bool>* stop = nullptr);

/// Summary of trials (Wilson 95% intervals).
capture_summary summarize_capture(const std::vector<capture_trial_result>& trials);

/// Jacobi constant C = n^2 (x^2 + y^2) + 2 GM_s / r1 + 2 GM_p / r2 - v^2 of a particle at
/// inertial position x [m] and velocity v [m/s], in the frame rotating with the star–planet
/// line at n^2 = G (M_s + M_p) / D^3 about their barycentre (Murray & Dermott, Solar System
/// Dynamics, eq. 3.17, in dimensional form). xs, vs, xp, vp: star and planet states.
double jacobi_constant(double gm_star, double gm_planet, const double* xs, const double* vs,
                       const double* xp, const double* vp, const double* x, const double* v);
/// The Jacobi constant at the L1 point (at rest in the rotating frame) of a star and planet
/// at distance d_m [m]: 2 U(L1), L1 found by bisection of dU/dx on the line between them.
double jacobi_constant_l1(double gm_star, double gm_planet, double d_m);

} // namespace moonwright
