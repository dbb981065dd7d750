// The main job: integrates a resolved design for a span, watches every step for events,
// samples osculating elements (with min/max envelopes between samples), energy and angular
// momentum errors and MEGNO, and hands the outcome to the verdict rules. Recording to files is
// the caller's (engine/run_file.hpp); this class keeps what it found in memory.
#pragma once

#include "engine/resolved_system.hpp"
#include "engine/run_outcome.hpp"
#include "integrators/integrator.hpp"

#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace moonwright {

struct run_options {
    /// Span: give span_s [s] or orbits of the reference body (the outermost moon, or the
    /// outermost planet when there are no moons). Neither: 10^4 orbits.
    std::optional<double> span_s;
    std::optional<double> orbits;
    std::string integrator = "wh";
    integrator_options integration;
    std::size_t samples = 1000;        ///< K regular samples of the elements over the span
    bool megno = true;                 ///< integrate the tangent equations for MEGNO
    std::uint64_t seed = 1;            ///< seeds the MEGNO deviation vector
    bool continue_after_event = false; ///< merge collisions, drop escapes, go on
    /// Close approach: siblings closer than this many mutual Hill radii (Chambers, Wetherill &
    /// Boss 1996 use 1).
    double close_approach_hill = 1.0;
    /// Escape: a body farther from its parent than this multiple of the parent's Hill radius.
    /// A planet (the star has no Hill sphere) escapes when it is unbound from the star and
    /// farther than this multiple of its initial apocentre.
    double escape_hill = 3.0;
    /// Numerical failure: relative energy error above this stops the run.
    double energy_failure = 1e-2;
};

/// One sample row: time and, per body (index order), osculating elements relative to the
/// parent subsystem in the parent's orbital frame, plus envelopes since the previous sample.
struct run_sample {
    double t_s = 0;
    std::vector<double> a, e, i, node, peri, mean_anomaly;
    std::vector<double> a_min, a_max, e_min, e_max, i_min, i_max;
    double energy_error = 0, angular_momentum_error = 0;
    double megno = std::nan(""), mean_megno = std::nan("");
};

/// Closest approach of a pair of bodies over the run.
struct pair_record {
    int a = -1, b = -1;        ///< body indices (siblings, or a body and its parent)
    double min_distance_m = 0; ///< closest separation seen [m]
    double t_s = 0;            ///< when [s]
    double mutual_hill_m = 0;  ///< mutual Hill radius of the pair [m] (0 for body-parent)
};

/// What a progress display needs.
struct run_progress {
    double t_s = 0, span_s = 0;
    double worst_e = 0; ///< largest eccentricity so far
    std::string worst_e_body;
    double closest_hill = 0; ///< closest sibling approach so far, in mutual Hill radii
    std::string closest_pair;
    std::size_t steps = 0;
};

class run_driver {
  public:
    /// Builds the model and the integrator. Throws input_error for bad options.
    run_driver(const resolved_system& system, run_options options);
    ~run_driver();
    run_driver(const run_driver&) = delete;
    run_driver& operator=(const run_driver&) = delete;

    /// Integrates until the span ends, a destructive event stops the run, or `stop` becomes
    /// true (checked between steps). `on_sample` is called after every sample (for progress
    /// and for writing rows). Returns true when the run has finished.
    bool advance(const std::atomic<bool>* stop = nullptr,
                 const std::function<void(const run_driver&)>& on_sample = {});

    [[nodiscard]] bool finished() const noexcept { return finished_; }
    [[nodiscard]] double span_s() const noexcept { return span_s_; }
    [[nodiscard]] double time_s() const noexcept;
    [[nodiscard]] double step_s() const noexcept { return step_s_; }
    [[nodiscard]] const std::string& integrator_name() const noexcept {
        return options_.integrator;
    }
    [[nodiscard]] const run_options& options() const noexcept { return options_; }
    [[nodiscard]] const resolved_system& system() const noexcept { return system_; }
    [[nodiscard]] const std::vector<run_sample>& samples() const noexcept { return samples_; }
    [[nodiscard]] const std::vector<run_event>& events() const noexcept { return events_; }
    [[nodiscard]] const std::vector<pair_record>& pairs() const noexcept { return pairs_; }
    [[nodiscard]] run_progress progress() const;
    /// The outcome so far (complete once finished()).
    [[nodiscard]] run_outcome outcome() const;

    /// Full state for an exact resume (integrator included). Samples before `samples_kept`
    /// are not included: the caller stores them (in the result file) and passes them back.
    [[nodiscard]] std::vector<double> save_checkpoint() const;
    /// Restores a checkpoint; `samples` and `events` are the ones recorded so far.
    void load_checkpoint(const std::vector<double>& data, std::vector<run_sample> samples,
                         std::vector<run_event> events);

  private:
    /// --continue-after-event: merges colliding bodies and bodies that hit their parent
    /// (momentum and volume conserved), drops escaped bodies and bodies torn apart inside a
    /// Roche limit (with their satellites), and rebuilds the model.
    void apply_events(std::size_t first);
    /// --continue-after-event with wh: Gauss–Radau near encounters, wh again once clear.
    void switch_integrator(double nearest_ratio);

    struct impl;
    std::unique_ptr<impl> impl_;
    resolved_system system_;
    run_options options_;
    double span_s_ = 0, step_s_ = 0;
    bool finished_ = false;
    std::vector<run_sample> samples_;
    std::vector<run_event> events_;
    std::vector<pair_record> pairs_;
};

} // namespace moonwright
