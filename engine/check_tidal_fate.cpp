// The check's short tidal fate: one cheap constant-Q run per planet with moons (docs/check.md).
#include "engine/check_tidal_fate.hpp"

#include "engine/tides_report.hpp"

#include <exception>
#include <fmt/format.h>

namespace moonwright {

tidal_options check_tidal_options() {
    tidal_options opt;
    opt.model = tide_model::constant_q;
    opt.samples = 2;
    opt.rel_tol = 1e-7;
    opt.abs_tol = 1e-10;
    opt.max_steps = 20'000;
    opt.max_step_fraction = 1.0 / 100.0;
    return opt;
}

namespace {

const char* span_words(span_rule r) {
    switch (r) {
    case span_rule::given:
        return "as given";
    case span_rule::star_age:
        return "the star's age";
    case span_rule::main_sequence_lifetime:
        return "the star's main-sequence lifetime";
    }
    return "";
}

std::string join(const std::vector<std::string>& lines) {
    std::string out;
    for (const auto& l : lines) out += (out.empty() ? "" : "; ") + l;
    return out;
}

} // namespace

void add_tidal_fate_findings(const resolved_system& sys, std::vector<body_check>& bodies,
                             std::vector<std::vector<finding>>& per_body) {
    const tidal_options opt = check_tidal_options();
    for (const auto& pl : sys.bodies) {
        if (pl.kind != body_kind::planet || pl.children.empty()) continue;
        if (!pl.rotation_period_s || *pl.rotation_period_s == 0) continue;
        const auto planet_at = static_cast<std::size_t>(pl.index);
        tides_report r;
        r.system_name = sys.name;
        try {
            r.evolutions.push_back(evolve_tides(sys, pl.index, opt));
        } catch (const std::exception& e) {
            // The check must never fail because of its tidal add-on.
            per_body[planet_at].push_back(
                {severity::note, "tidal_fate", pl.name,
                 fmt::format("the tidal fate of {} and its moons could not be computed: {}",
                             pl.name, e.what())});
            continue;
        }
        const tidal_evolution& ev = r.evolutions.front();
        const std::string tail = fmt::format(
            " (constant-Q tides; span: {}, {}; run `moonwright tides` for the full report)",
            describe_duration(ev.span_s), span_words(ev.span_from));
        const auto events = tides_fate_events(r);
        std::vector<std::string> all;
        for (const auto& e : events) all.push_back(e.line);
        bodies[planet_at].tidal_fate = join(all);

        std::vector<std::string> own;
        for (const auto& e : events)
            if (e.body == pl.name) own.push_back(e.line);
        if (!own.empty())
            per_body[planet_at].push_back(
                {severity::note, "tidal_fate", pl.name, join(own) + tail});
        for (const auto& m : ev.moons) {
            std::vector<std::string> lines;
            for (const auto& e : events)
                if (e.body == m.name) lines.push_back(e.line);
            if (lines.empty() || m.body_index < 0) continue;
            const auto at = static_cast<std::size_t>(m.body_index);
            bodies[at].tidal_fate = join(lines);
            per_body[at].push_back({severity::note, "tidal_fate", m.name, join(lines) + tail});
        }
    }
}

} // namespace moonwright
