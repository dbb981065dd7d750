// One survey task: a design integrated as one clone (left-out angles redrawn from the clone's
// seed, positions nudged by a tiny relative amount), with the row it leaves in the survey table.
#pragma once

#include "engine/design.hpp"
#include "engine/design_check.hpp"
#include "engine/resolved_system.hpp"

#include <atomic>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace moonwright {

/// Settings shared by every task of a survey (they decide its results, so a resumed survey
/// must use the same ones).
struct survey_settings {
    std::uint64_t seed = 1;       ///< survey seed: every task seed derives from it
    std::size_t clones = 4;       ///< clones per design (clone 0 is the design as written)
    std::optional<double> orbits; ///< span in orbits of the reference body (default 10^4)
    std::optional<double> span_s; ///< or a span [s]
    bool megno = false;           ///< MEGNO is off by default in surveys (speed)
    std::string integrator = "wh";
    std::size_t samples = 100; ///< samples per run: the energy error is measured at these
    /// Relative size of the position nudge of clones 1..K-1: each body's position relative to
    /// its parent subsystem moves by this fraction of its length in a random direction.
    double nudge = 1e-9;
    std::size_t shard_index = 0, shard_count = 1; ///< this process runs shard k of n
    /// One line that identifies the settings (journal header, file attributes).
    [[nodiscard]] std::string fingerprint() const;
};

/// Seed of task (design, clone): derive_seed(survey seed, design, clone) >> 1, so that it is a
/// valid design seed (0 .. 2^63 - 1) and fits a signed 64-bit column.
std::uint64_t survey_task_seed(std::uint64_t survey_seed, std::uint64_t design_index,
                               std::uint64_t clone);

/// Task number i = design * clones + clone; a shard k of n runs the tasks with i mod n = k.
bool survey_task_in_shard(const survey_settings& s, std::uint64_t design_index,
                          std::uint64_t clone);
/// The shard that records design-level facts (name, source, findings): the shard of clone 0.
bool survey_design_in_shard(const survey_settings& s, std::uint64_t design_index);

struct survey_task {
    std::uint64_t design_index = 0;
    std::uint64_t clone = 0;
    std::uint64_t seed = 0; ///< resolves the design (left-out angles), nudges, seeds MEGNO
    std::string design_name;
    std::shared_ptr<const design> design_;
};

/// What one task found: one row of the survey's task table.
struct survey_task_result {
    std::uint64_t design_index = 0;
    std::string design_name;
    std::uint64_t clone = 0;
    std::uint64_t seed = 0;
    std::string verdict;            ///< stable, chaotic, unstable, unreliable (verdict_name)
    std::string first_event;        ///< event_name of the first event, "" when none
    std::string first_event_bodies; ///< "Sel-Tor", "" when none
    std::optional<double> first_event_time_s; ///< [s]
    double orbits_survived = 0;               ///< first event (or end) over the reference period
    double max_e = 0;                         ///< largest eccentricity of any body over the run
    double energy_error = 0;                  ///< largest relative energy error seen at the samples
    double span_s = 0;                        ///< requested span [s]
    double simulated_s = 0;                   ///< time integrated [s]
    double reference_period_s = 0;            ///< [s]
    std::string note;                         ///< why the task could not run ("" normally)
    /// No event over the span and a reliable integration.
    [[nodiscard]] bool survived() const { return verdict == "stable" || verdict == "chaotic"; }
};

/// The resolved system of a clone: clone 0 resolves with the design's own seed (as `run` and
/// `check` do) and is not nudged; clone k >= 1 resolves with `task_seed` (so angles the design
/// left out are redrawn) and every body's position relative to its parent subsystem (Jacobi
/// coordinates, velocities unchanged) moves by `nudge` times its length in a random direction
/// drawn from `task_seed`. The nudge is applied through the osculating elements, with the same
/// GM the N-body model uses, so the model starts at the nudged positions.
resolved_system resolve_clone(const design& d, std::uint64_t clone, std::uint64_t task_seed,
                              double nudge);

/// Integrates one task with the run driver, events and verdict rules of `moonwright run`.
/// Never throws for a design the run cannot take: the row then says "unreliable" with a note.
survey_task_result run_survey_task(const survey_task& task, const survey_settings& settings);
/// The same, stopped early when *stop becomes true: nothing then (the task is not finished).
std::optional<survey_task_result> run_survey_task(const survey_task& task,
                                                  const survey_settings& settings,
                                                  const std::atomic<bool>* stop);

/// One line of JSON (no newline) for a task row, and back; doubles round-trip exactly.
std::string survey_result_to_json(const survey_task_result& r);
survey_task_result survey_result_from_json(std::string_view line);
/// A task as one line of JSON (the design in the design-file schema), and back (MPI messages).
std::string survey_task_to_json(const survey_task& t);
survey_task survey_task_from_json(std::string_view line);

/// Design-level facts of a survey entry: where it came from, and for an invalid design
/// (parse error, resolve error or an error finding) the findings.
struct survey_design_record {
    std::uint64_t design_index = 0;
    std::string name;   ///< the design's name (its source label when it did not parse)
    std::string source; ///< "dir/a.toml", "batch.jsonl:17", "<stdin>:3"
    bool valid = true;
    std::vector<finding> findings; ///< every finding of an invalid design; empty when valid
};
std::string survey_design_to_json(const survey_design_record& r);
survey_design_record survey_design_from_json(std::string_view line);

} // namespace moonwright
