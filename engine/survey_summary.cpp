// The survey statistics and the design verdict rules (docs/survey.md).
#include "engine/survey_summary.hpp"

#include "engine/run_outcome.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace moonwright {

const std::vector<std::string>& survey_first_event_kinds() {
    static const std::vector<std::string> kinds = {"none",
                                                   event_name(event_kind::close_approach),
                                                   event_name(event_kind::collision),
                                                   event_name(event_kind::parent_impact),
                                                   event_name(event_kind::roche_crossing),
                                                   event_name(event_kind::escape),
                                                   event_name(event_kind::numerical_failure),
                                                   "not_run"};
    return kinds;
}

namespace {

std::string percent(double x) {
    return fmt::format("{:.0f}%", 100 * x);
}

std::string orbit_count(double orbits) {
    return orbits >= 100 ? fmt::format("{:.0f}", orbits) : fmt::format("{:.3g}", orbits);
}

} // namespace

survey_design_summary summarize_design(const survey_design_record& record,
                                       std::vector<survey_task_result> rows) {
    std::sort(
        rows.begin(), rows.end(),
        [](const survey_task_result& a, const survey_task_result& b) { return a.clone < b.clone; });
    survey_design_summary s;
    s.record = record;
    s.clones = rows.size();
    for (const auto& kind : survey_first_event_kinds()) s.first_events.emplace_back(kind, 0);
    auto count_kind = [&](const std::string& kind) {
        for (auto& [k, n] : s.first_events)
            if (k == kind) ++n;
    };

    std::vector<survival_observation> observations;
    for (const auto& r : rows) {
        if (s.span_s == 0) s.span_s = r.span_s;
        if (s.reference_period_s == 0) s.reference_period_s = r.reference_period_s;
        count_kind(!r.note.empty() ? "not_run" : r.first_event.empty() ? "none" : r.first_event);
        const bool unreliable = r.verdict == verdict_name(verdict_kind::unreliable);
        if (unreliable) {
            ++s.unreliable;
            // Lost to follow-up: censored where the integration stopped being trustworthy.
            if (r.note.empty())
                observations.push_back({r.first_event_time_s.value_or(r.simulated_s), false});
            continue;
        }
        if (r.survived()) {
            ++s.survivors;
            if (r.verdict == verdict_name(verdict_kind::chaotic)) ++s.chaotic;
            observations.push_back({r.simulated_s, false});
        } else {
            observations.push_back({r.first_event_time_s.value_or(r.simulated_s), true});
        }
    }
    const std::size_t reliable = s.clones - s.unreliable;
    s.survival = wilson_interval(s.survivors, reliable);
    s.curve = kaplan_meier(observations);
    s.median_s = s.curve.median;
    if (s.median_s && s.reference_period_s > 0)
        s.median_orbits = *s.median_s / s.reference_period_s;
    const std::string span = s.reference_period_s > 0
                                 ? orbit_count(s.span_s / s.reference_period_s) + " orbits"
                                 : fmt::format("{:.4g} s", s.span_s);

    if (!record.valid) {
        s.verdict = "invalid";
        std::string why = "the design did not pass the check";
        for (const auto& f : record.findings)
            if (f.level == severity::error) {
                why = f.message;
                break;
            }
        s.headline = "Invalid: " + why;
        return s;
    }
    if (reliable == 0) {
        s.verdict = "unreliable";
        s.headline = fmt::format("Unreliable: none of the {} clones could be judged (integration "
                                 "error too large, or the run could not start).",
                                 s.clones);
        return s;
    }
    if (s.survivors == reliable) {
        s.verdict = s.chaotic > 0 ? "chaotic" : "stable";
        s.headline = s.chaotic > 0
                         ? fmt::format("Chaotic: all {} clones survived {}, but {} of them show "
                                       "chaos or an unbounded eccentricity.",
                                       reliable, span, s.chaotic)
                         : fmt::format("Stable: all {} clones survived {}.", reliable, span);
    } else if (s.survivors == 0) {
        s.verdict = "unstable";
        s.headline = fmt::format("Unstable: none of the {} clones survived {}", reliable, span);
        if (s.median_orbits)
            s.headline += fmt::format("; median survival {} orbits", orbit_count(*s.median_orbits));
        s.headline += ".";
    } else {
        s.verdict = "at_risk";
        s.headline = fmt::format("At risk: {} of {} clones survived {} ({}, 95% interval {} to {})",
                                 s.survivors, reliable, span, percent(s.survival.estimate),
                                 percent(s.survival.lower), percent(s.survival.upper));
        if (s.median_orbits)
            s.headline += fmt::format("; median survival {} orbits", orbit_count(*s.median_orbits));
        s.headline += ".";
    }
    if (s.unreliable > 0)
        s.headline += fmt::format(" {} of {} clones were unreliable and are left out of the "
                                  "fraction.",
                                  s.unreliable, s.clones);
    return s;
}

} // namespace moonwright
