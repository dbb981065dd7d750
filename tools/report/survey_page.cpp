// The report page of a `moonwright survey` result: reads the survey file (docs/survey.md),
// recomputes the per-design statistics with the engine and lays out verdicts, table and figures.
#include "tools/report/survey_page.hpp"

#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/error.hpp"
#include "engine/survey_file.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <limits>
#include <map>

namespace moonwright::report {

namespace {

namespace c = moonwright::constants;

[[noreturn]] void not_survey(const result_file& f, const std::string& what) {
    throw input_error(source_location{f.path()}, fmt::format("not a usable survey file: {}", what));
}

stored_survey read_contents(const result_file& f) {
    if (!f.has_attribute("/", "format") || f.string_attribute("/", "format") != "moonwright survey")
        not_survey(f, "the root attribute format is not 'moonwright survey'");
    if (f.has_attribute("/", "shard_count") && f.integer_attribute("/", "shard_count") > 1)
        not_survey(f, fmt::format("this is shard {} of {}; merge the shards with `moonwright "
                                  "survey-merge` and report on the merged file",
                                  f.integer_attribute("/", "shard_index"),
                                  f.integer_attribute("/", "shard_count")));
    stored_survey s;
    s.path = f.path();
    s.version = f.string_attribute("/", "version");
    survey_contents contents = read_survey_file(f.path());
    try {
        normalize_survey_contents(contents);
    } catch (const input_error& e) {
        not_survey(f, e.what());
    }
    s.settings = contents.settings;
    s.tasks = contents.tasks.size();
    s.designs = summarize_survey(contents);
    return s;
}

/// One display unit of time for a whole page, chosen by the longest span so that every number
/// and the figure's axis share it.
struct time_unit {
    double seconds = 1.0;
    std::string name;
};
time_unit unit_for_span(double longest_s) {
    if (longest_s >= 2.0 * c::year) return {c::year, "yr"};
    if (longest_s >= 2.0 * c::day) return {c::day, "d"};
    return {c::hour, "h"};
}

/// The overall verdicts of docs/survey.md, in the order the bar chart shows them.
struct verdict_words {
    const char* name;    ///< as stored
    const char* label;   ///< as shown
    const char* meaning; ///< plain words
};
constexpr verdict_words verdicts[] = {
    {"stable", "stable", "every reliable clone survived the span with regular, bounded motion"},
    {"chaotic", "chaotic",
     "every reliable clone survived, but at least one is chaotic or reached e = 0.95"},
    {"at_risk", "at risk", "some clones survived the span and some did not"},
    {"unstable", "unstable", "no reliable clone survived the span"},
    {"unreliable", "unreliable",
     "no clone could be judged (integration error too large, or the run could not start)"},
    {"invalid", "invalid", "the design did not parse, resolve or pass the check; nothing was run"},
};

/// Worst first: unstable, at risk, unreliable, chaotic, stable; invalid designs last.
int badness_rank(const std::string& verdict) {
    static const std::map<std::string, int> rank = {
        {"unstable", 0}, {"at_risk", 1}, {"unreliable", 2}, {"chaotic", 3}, {"stable", 4}};
    const auto it = rank.find(verdict);
    return it == rank.end() ? 5 : it->second;
}

/// The valid designs, worst first: by verdict, then lower survival fraction, then earlier
/// median survival, then design order.
std::vector<const survey_design_summary*> worst_first(const stored_survey& s) {
    std::vector<const survey_design_summary*> out;
    for (const auto& d : s.designs)
        if (d.record.valid) out.push_back(&d);
    constexpr double never = std::numeric_limits<double>::infinity();
    std::stable_sort(out.begin(), out.end(), [&](const auto* a, const auto* b) {
        const int ra = badness_rank(a->verdict), rb = badness_rank(b->verdict);
        if (ra != rb) return ra < rb;
        if (a->survival.estimate != b->survival.estimate)
            return a->survival.estimate < b->survival.estimate;
        return a->median_s.value_or(never) < b->median_s.value_or(never);
    });
    return out;
}

std::string percent(double p) {
    return format_significant(100.0 * p, 3);
}

std::string event_label(const std::string& kind) {
    if (kind == "none") return "survived";
    std::string out = kind;
    std::replace(out.begin(), out.end(), '_', ' ');
    return out;
}

/// "escape 2, collision 1" (first events other than none); "-" when every clone survived.
std::string first_events_text(const survey_design_summary& d) {
    std::string out;
    for (const auto& [kind, n] : d.first_events)
        if (kind != "none" && n > 0)
            out += fmt::format("{}{} {}", out.empty() ? "" : ", ", event_label(kind), n);
    return out.empty() ? "-" : out;
}

std::string short_name(const std::string& name, std::size_t most = 28) {
    return name.size() <= most ? name : name.substr(0, most - 3) + "...";
}

std::string span_text(const survey_settings& st, const time_unit& u) {
    if (st.orbits)
        return fmt::format("{} orbits of each design's reference body",
                           format_significant(*st.orbits, 6));
    if (st.span_s) return format_significant(*st.span_s / u.seconds, 4) + "\u00a0" + u.name;
    return "the default span";
}

std::size_t count_verdict(const stored_survey& s, const std::string& v) {
    return static_cast<std::size_t>(std::count_if(s.designs.begin(), s.designs.end(),
                                                  [&](const auto& d) { return d.verdict == v; }));
}

void banner(report_page& out, const stored_survey& s, const std::string& span) {
    const std::size_t n = s.designs.size(), invalid = count_verdict(s, "invalid");
    const std::size_t valid = n - invalid, unstable = count_verdict(s, "unstable");
    const std::size_t survive = count_verdict(s, "stable") + count_verdict(s, "chaotic");
    verdict_banner b;
    if (valid == 0) {
        b.word_ = "nothing run";
        b.tone_ = verdict_tone::caution;
    } else if (survive == valid) {
        b.word_ = "all survive";
        b.tone_ = verdict_tone::good;
    } else if (unstable == valid) {
        b.word_ = "none survive";
        b.tone_ = verdict_tone::bad;
    } else {
        b.word_ = "mixed";
        b.tone_ = verdict_tone::neutral;
    }
    b.summary_ = fmt::format("{} of {} designs survived {} in every clone; {} lost some clones, "
                             "{} lost all",
                             survive, n, span, count_verdict(s, "at_risk"), unstable);
    if (const std::size_t k = count_verdict(s, "unreliable"); k > 0)
        b.summary_ += fmt::format(", {} could not be judged", k);
    b.summary_ += fmt::format(" and {} {} invalid.", invalid, invalid == 1 ? "was" : "were");
    for (const auto& v : verdicts)
        if (const std::size_t k = count_verdict(s, v.name); k > 0)
            b.reasons_.push_back(fmt::format("{} {}: {}.", k, v.label, v.meaning));
    std::map<std::string, std::size_t> events;
    std::size_t clones = 0;
    for (const auto& d : s.designs)
        for (const auto& [kind, k] : d.first_events) {
            events[kind] += k;
            clones += k;
        }
    if (clones > 0) {
        std::string lost;
        for (const auto& kind : survey_first_event_kinds())
            if (kind != "none" && events[kind] > 0)
                lost += fmt::format("{}{} {}", lost.empty() ? "" : ", ", event_label(kind),
                                    events[kind]);
        b.reasons_.push_back(fmt::format("{} clones in all: {} survived the span{}.", clones,
                                         events["none"],
                                         lost.empty() ? "" : "; first events: " + lost));
    }
    out.page_.verdict(b);
}

void designs_table(html_section& sec, const std::vector<const survey_design_summary*>& worst,
                   const time_unit& u, std::size_t cap) {
    if (worst.empty()) {
        sec.paragraph("No design passed the check, so none was integrated.");
        return;
    }
    data_table t;
    const std::size_t shown = std::min(cap, worst.size());
    t.caption_ = shown == worst.size()
                     ? fmt::format("All {} integrated designs, worst first", worst.size())
                     : fmt::format("The {} worst of {} integrated designs (the others are in "
                                   "/statistics of the file and in the survey's --summary)",
                                   shown, worst.size());
    t.columns_ = {"#",
                  "design",
                  "verdict",
                  "survived",
                  "survival fraction",
                  "Wilson 95% interval",
                  "median survival",
                  "median survival",
                  "first events (clones)",
                  "headline"};
    t.units_ = {"", "", "", "clones", "%", "%", u.name, "orbits", "", ""};
    for (std::size_t k = 0; k < shown; ++k) {
        const auto& d = *worst[k];
        const std::size_t reliable = d.clones - d.unreliable;
        t.rows_.push_back(
            {std::to_string(d.record.design_index), d.record.name, event_label(d.verdict),
             fmt::format("{} of {}", d.survivors, reliable),
             reliable > 0 ? percent(d.survival.estimate) : "-",
             reliable > 0 ? percent(d.survival.lower) + " to " + percent(d.survival.upper) : "-",
             d.median_s ? format_significant(*d.median_s / u.seconds, 4) : "not reached",
             d.median_orbits ? format_significant(*d.median_orbits, 4) : "-", first_events_text(d),
             d.headline});
    }
    sec.table(t);
    sec.paragraph(
        "Worst first: unstable, at risk, unreliable, chaotic, then stable designs; within "
        "a verdict by lower survival fraction, then earlier median survival. The survival "
        "fraction counts reliable clones only, with the Wilson score interval (Wilson "
        "1927). The median survival is the Kaplan-Meier median (Kaplan & Meier 1958), "
        "given when the curve falls to 0.5 within the span. Invalid designs are listed "
        "below with their findings.");
}

void survival_figure(report_page& out, html_section& sec, const survey_settings& st,
                     const std::vector<const survey_design_summary*>& worst, const time_unit& u,
                     std::size_t cap) {
    std::vector<const survey_design_summary*> shown;
    for (const auto* d : worst)
        if (d->clones > d->unreliable && shown.size() < cap) shown.push_back(d);
    if (shown.empty()) {
        sec.paragraph("No design has a reliable clone: there is no survival curve to draw.");
        return;
    }
    // A span in orbits gives designs of very different periods the same span in orbits but not
    // in years, so their curves share an axis only when time is counted in orbits.
    const bool in_orbits = st.orbits && std::all_of(shown.begin(), shown.end(), [](const auto* d) {
                               return d->reference_period_s > 0;
                           });
    const std::string axis_unit = in_orbits ? "orbits of each design's reference body" : u.name;
    survival_plot_data p;
    p.title_ = "Kaplan-Meier survival of the clones";
    p.x_label_ = "time since the start (" + axis_unit + ")";
    p.y_label_ = "surviving fraction of clones";
    const bool bands = shown.size() <= 2; // more bands would hide each other
    for (const auto* d : shown) {
        const double per = in_orbits ? d->reference_period_s : u.seconds;
        survival_curve cv;
        cv.label_ = fmt::format("#{} {}", d->record.design_index, short_name(d->record.name));
        cv.t_ = {0.0};
        cv.survival_ = {1.0};
        if (bands) cv.lower_ = cv.upper_ = {1.0};
        for (const auto& step : d->curve.steps) {
            cv.t_.push_back(step.time / per);
            cv.survival_.push_back(step.survival);
            if (bands) {
                cv.lower_.push_back(step.lower);
                cv.upper_.push_back(step.upper);
            }
        }
        cv.t_end_ = d->span_s / per;
        for (double t : d->curve.censored) cv.censored_.push_back(t / per);
        p.curves_.push_back(std::move(cv));
    }
    const std::size_t eligible = static_cast<std::size_t>(std::count_if(
        worst.begin(), worst.end(), [](const auto* d) { return d->clones > d->unreliable; }));
    const std::string which =
        shown.size() == eligible
            ? fmt::format("All {} designs with reliable clones are shown.", eligible)
            : fmt::format("Shown: the {} designs with the lowest survival (worst first, as in "
                          "the table) of {} with reliable clones; designs whose every clone "
                          "survived would be flat lines at 1.",
                          shown.size(), eligible);
    add_figure(out, sec, "survey-survival", p,
               "Kaplan-Meier estimate of the fraction of each design's clones with no event yet, "
               "against time in " +
                   (in_orbits ? "orbits of each design's reference body (its outermost moon), so "
                                "that designs of different periods share the axis"
                              : u.name) +
                   ". A clone's first event ends it; '+' marks clones censored: still "
                   "surviving at the end of the span, or no longer reliable. " +
                   which + (bands ? " Shaded: 95% pointwise interval (log-log)." : ""),
               "Step plot of the surviving fraction of clones against time for the worst "
               "designs.");
}

void breakdown_figures(report_page& out, html_section& sec, const stored_survey& s) {
    bar_chart_data v;
    v.title_ = "Designs by overall verdict";
    v.y_label_ = "designs";
    for (const auto& w : verdicts) {
        v.categories_.push_back(w.label);
        v.values_.push_back(static_cast<double>(count_verdict(s, w.name)));
    }
    add_figure(
        out, sec, "survey-verdicts", v,
        fmt::format("How many of the {} designs got each overall verdict.", s.designs.size()),
        "Bar chart of the number of designs per overall verdict.", 1000, 500);

    bar_chart_data e;
    e.title_ = "Clones by first event";
    e.y_label_ = "clones";
    std::string left_out;
    for (const auto& kind : survey_first_event_kinds()) {
        std::size_t n = 0;
        for (const auto& d : s.designs)
            for (const auto& [k, count] : d.first_events)
                if (k == kind) n += count;
        if (n == 0) {
            left_out += (left_out.empty() ? "" : ", ") + event_label(kind);
            continue;
        }
        e.categories_.push_back(event_label(kind));
        e.values_.push_back(static_cast<double>(n));
    }
    if (e.categories_.empty()) {
        sec.paragraph("No clone was run, so there is no first-event breakdown.");
        return;
    }
    add_figure(out, sec, "survey-first-events", e,
               "The first event of every clone of every integrated design (survived: no event "
               "over the span)." +
                   (left_out.empty() ? std::string()
                                     : " Kinds no clone had are left out: " + left_out + "."),
               "Bar chart of the number of clones per first-event kind.", 1000, 500);
}

void invalid_designs(html_section& sec, const stored_survey& s, std::size_t cap) {
    std::size_t listed = 0, invalid = 0;
    for (const auto& d : s.designs) {
        if (d.record.valid) continue;
        ++invalid;
        if (listed == cap) continue;
        ++listed;
        std::vector<finding> items;
        for (const auto& fd : d.record.findings) items.push_back(page_finding(fd, d.record.name));
        sec.findings(fmt::format("#{} {} ({}): {} findings", d.record.design_index, d.record.name,
                                 d.record.source, d.record.findings.size()),
                     items);
    }
    if (invalid == 0) sec.paragraph("Every design passed the check.");
    if (listed < invalid)
        sec.paragraph(fmt::format("{} more invalid designs are not listed here; every finding is "
                                  "in /findings of the file.",
                                  invalid - listed));
}

} // namespace

stored_survey read_survey_result(const result_file& f) {
    try {
        return read_contents(f);
    } catch (const io_error& e) {
        throw input_error(source_location{f.path()},
                          std::string("cannot read the survey result: ") + e.what());
    }
}

report_page build_survey_page(const stored_survey& s, survey_page_limits limits) {
    const survey_settings& st = s.settings;
    double longest = st.span_s.value_or(0.0);
    for (const auto& d : s.designs) longest = std::max(longest, d.span_s);
    const time_unit u = unit_for_span(longest);
    const std::string span = span_text(st, u);

    report_page out;
    out.page_ = html_report(fmt::format("Survey of {} designs", s.designs.size()),
                            fmt::format("{} clones each · {} · integrator {} · seed {}", st.clones,
                                        span, st.integrator, st.seed));
    banner(out, s, span);
    const auto worst = worst_first(s);

    html_section designs("designs", "Designs");
    designs_table(designs, worst, u, limits.table_rows);
    out.page_.section(designs);

    html_section survival("survival", "Survival over time");
    survival_figure(out, survival, st, worst, u, limits.curves);
    out.page_.section(survival);

    html_section breakdown("breakdown", "Verdicts and first events");
    breakdown_figures(out, breakdown, s);
    out.page_.section(breakdown);

    html_section invalid("invalid", "Invalid designs");
    invalid_designs(invalid, s, limits.invalid_designs);
    out.page_.section(invalid);

    html_section run("survey", "The survey");
    run.key_values(
        "Settings and metadata",
        {{"designs", std::to_string(s.designs.size()), "",
          fmt::format("{} invalid", count_verdict(s, "invalid"))},
         {"clones per design", std::to_string(st.clones), "", "clone 0 is the design as written"},
         {"task rows", std::to_string(s.tasks), "", "one per clone of a valid design"},
         {"span", span, "", ""},
         {"integrator", st.integrator, "", ""},
         {"MEGNO", st.megno ? "on" : "off", "", "on: chaotic survivors are told apart"},
         {"samples per run", std::to_string(st.samples), "", "energy error measured at these"},
         {"clone nudge", format_significant(st.nudge, 3), "of each position",
          "relative displacement of clones 1 and up"},
         {"survey seed", std::to_string(st.seed), "", ""},
         {"file version", s.version, "", ""},
         {"result file", s.path, "", ""}});
    out.page_.section(run);
    out.page_.footer(fmt::format("moonwright survey report of {} · seed {} · file version {}",
                                 s.path, st.seed, s.version));
    return out;
}

} // namespace moonwright::report
