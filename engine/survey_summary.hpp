// Per-design statistics of a survey (survival fraction with its Wilson interval, Kaplan–Meier
// curve, first events by kind) and the overall verdict of a design drawn from its clones.
#pragma once

#include "engine/statistics.hpp"
#include "engine/survey_task.hpp"

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace moonwright {

/// First-event kinds counted per design, in this order: "none" (survived the span), the event
/// kinds of run_outcome.hpp, and "not_run" (the run could not start; see the task note).
const std::vector<std::string>& survey_first_event_kinds();

struct survey_design_summary {
    survey_design_record record;
    std::size_t clones = 0;     ///< task rows
    std::size_t survivors = 0;  ///< reliable clones with no event over the span
    std::size_t unreliable = 0; ///< clones whose integration was too inaccurate to judge
    std::size_t chaotic = 0;    ///< surviving clones that MEGNO or e >= 0.95 call chaotic
    /// survivors / (clones - unreliable), Wilson 95% interval (Wilson 1927).
    proportion_interval survival;
    /// Kaplan–Meier curve (Kaplan & Meier 1958) over the reliable clones: the first event is the
    /// event, survivors are censored at the span. Unreliable clones are censored when their
    /// integration stopped (lost to follow-up).
    survival_curve_estimate curve;
    std::optional<double> median_s, median_orbits; ///< median survival time when S reaches 0.5
    double span_s = 0, reference_period_s = 0;
    std::vector<std::pair<std::string, std::size_t>> first_events; ///< survey_first_event_kinds()
    std::string verdict;  ///< stable, chaotic, at_risk, unstable, unreliable, invalid
    std::string headline; ///< one sentence with the numbers
};

/// Statistics and verdict of one design from its task rows (any order). Rules (docs/survey.md):
/// invalid design -> "invalid"; every clone unreliable -> "unreliable"; every reliable clone
/// survived -> "stable" ("chaotic" when any survivor is chaotic); none survived -> "unstable";
/// otherwise "at_risk" with the fraction. Unreliable clones are named in the headline.
survey_design_summary summarize_design(const survey_design_record& record,
                                       std::vector<survey_task_result> rows);

} // namespace moonwright
