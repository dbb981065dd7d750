// Survey tasks: clone set-up (redrawn angles, nudged positions), one integration, its row.
#include "engine/survey_task.hpp"

#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/nbody_system.hpp"
#include "engine/orbital_elements.hpp"
#include "engine/random.hpp"
#include "engine/run_driver.hpp"
#include "engine/run_outcome.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <limits>
#include <nlohmann/json.hpp>

namespace moonwright {

using json = nlohmann::json;

std::string survey_settings::fingerprint() const {
    return fmt::format("seed={};clones={};orbits={};span_s={};megno={};integrator={};samples={};"
                       "nudge={};shard={}/{}",
                       seed, clones, orbits ? fmt::format("{}", *orbits) : "default",
                       span_s ? fmt::format("{}", *span_s) : "none", megno ? 1 : 0, integrator,
                       samples, nudge, shard_index, shard_count);
}

std::uint64_t survey_task_seed(std::uint64_t survey_seed, std::uint64_t design_index,
                               std::uint64_t clone) {
    return derive_seed(survey_seed, design_index, clone) >> 1;
}

bool survey_task_in_shard(const survey_settings& s, std::uint64_t design_index,
                          std::uint64_t clone) {
    return (design_index * s.clones + clone) % s.shard_count == s.shard_index;
}

bool survey_design_in_shard(const survey_settings& s, std::uint64_t design_index) {
    return survey_task_in_shard(s, design_index, 0);
}

resolved_system resolve_clone(const design& d, std::uint64_t clone, std::uint64_t task_seed,
                              double nudge) {
    if (clone == 0) return resolve(d, d.seed.value_or(1));
    resolved_system sys = resolve(d, task_seed);
    if (!(nudge > 0)) return sys;
    // The GM of each body's Jacobi orbit, as the N-body model converts elements with it.
    const jacobi_tree tree = build_nbody(sys).tree();
    rng random(derive_seed(task_seed, 0x6e75646765)); // a stream of its own: "nudge"
    for (std::size_t k = 1; k < sys.bodies.size(); ++k) {
        auto& orbit = sys.bodies[k].orbit;
        if (!orbit) continue;
        const double gm = tree.kepler_gm(k);
        cartesian_state s = elements_to_cartesian(
            gm, elements_from_mean(orbit->a_m, orbit->e, orbit->i_rad, orbit->node_rad,
                                   orbit->peri_rad, orbit->mean_anomaly_rad));
        // A direction uniform on the sphere: three normal deviates, normalized (Muller 1959).
        double u[3] = {random.normal(), random.normal(), random.normal()};
        const double un = std::sqrt(u[0] * u[0] + u[1] * u[1] + u[2] * u[2]);
        const double r = std::sqrt(s.r[0] * s.r[0] + s.r[1] * s.r[1] + s.r[2] * s.r[2]);
        for (int c = 0; c < 3; ++c) s.r[static_cast<std::size_t>(c)] += nudge * r * u[c] / un;
        const orbital_elements el = cartesian_to_elements(gm, s);
        orbit->a_m = semi_major_axis(el);
        orbit->e = el.e;
        orbit->i_rad = el.i;
        orbit->node_rad = el.node;
        orbit->peri_rad = el.peri;
        orbit->mean_anomaly_rad = mean_anomaly(el.e, el.nu);
    }
    return sys;
}

survey_task_result run_survey_task(const survey_task& task, const survey_settings& settings) {
    return *run_survey_task(task, settings, nullptr);
}

std::optional<survey_task_result> run_survey_task(const survey_task& task,
                                                  const survey_settings& settings,
                                                  const std::atomic<bool>* stop) {
    survey_task_result row;
    row.design_index = task.design_index;
    row.design_name = task.design_name;
    row.clone = task.clone;
    row.seed = task.seed;
    try {
        const resolved_system sys =
            resolve_clone(*task.design_, task.clone, task.seed, settings.nudge);
        run_options opts;
        opts.span_s = settings.span_s;
        opts.orbits = settings.span_s ? std::nullopt : settings.orbits;
        opts.integrator = settings.integrator;
        opts.samples = settings.samples;
        opts.megno = settings.megno;
        opts.seed = task.seed;
        run_driver run(sys, opts);
        if (!run.advance(stop)) return std::nullopt;
        const run_outcome o = run.outcome();
        const verdict v = decide_verdict(o);
        row.verdict = verdict_name(v.kind);
        row.span_s = o.span_s;
        row.simulated_s = o.simulated_s;
        row.reference_period_s = o.reference_period_s;
        row.energy_error = o.max_energy_error;
        for (const auto& b : o.bodies) row.max_e = std::max(row.max_e, b.e_max);
        double end = o.simulated_s;
        if (!o.events.empty()) {
            const run_event& first = o.events.front();
            row.first_event = event_name(first.kind);
            row.first_event_time_s = first.t_s;
            auto name = [&](int k) {
                return k >= 0 && static_cast<std::size_t>(k) < o.body_names.size()
                           ? o.body_names[static_cast<std::size_t>(k)]
                           : std::string();
            };
            row.first_event_bodies = name(first.body);
            if (first.other >= 0) row.first_event_bodies += "-" + name(first.other);
            end = first.t_s;
        }
        row.orbits_survived = o.reference_period_s > 0 ? end / o.reference_period_s : 0.0;
    } catch (const error& e) {
        // A design the check passed but the run cannot take (e.g. a star alone).
        row.verdict = verdict_name(verdict_kind::unreliable);
        row.note = e.what();
    }
    return row;
}

namespace {

json optional_number(const std::optional<double>& x) {
    return x ? json(*x) : json();
}
std::optional<double> number_or_empty(const json& j) {
    if (j.is_null()) return std::nullopt;
    return j.get<double>();
}

[[noreturn]] void bad_line(std::string_view what, const std::exception& e) {
    throw input_error(source_location{"<survey journal>"},
                      fmt::format("a {} line does not read back: {}", what, e.what()));
}

} // namespace

std::string survey_result_to_json(const survey_task_result& r) {
    json j = {{"type", "task"},
              {"design", r.design_index},
              {"name", r.design_name},
              {"clone", r.clone},
              {"seed", r.seed},
              {"verdict", r.verdict},
              {"first_event", r.first_event},
              {"first_event_bodies", r.first_event_bodies},
              {"first_event_time_s", optional_number(r.first_event_time_s)},
              {"orbits_survived", r.orbits_survived},
              {"max_e", r.max_e},
              {"energy_error", r.energy_error},
              {"span_s", r.span_s},
              {"simulated_s", r.simulated_s},
              {"reference_period_s", r.reference_period_s},
              {"note", r.note}};
    return j.dump(-1, ' ', false, json::error_handler_t::replace);
}

survey_task_result survey_result_from_json(std::string_view line) {
    try {
        const json j = json::parse(line);
        survey_task_result r;
        r.design_index = j.at("design").get<std::uint64_t>();
        r.design_name = j.at("name").get<std::string>();
        r.clone = j.at("clone").get<std::uint64_t>();
        r.seed = j.at("seed").get<std::uint64_t>();
        r.verdict = j.at("verdict").get<std::string>();
        r.first_event = j.at("first_event").get<std::string>();
        r.first_event_bodies = j.at("first_event_bodies").get<std::string>();
        r.first_event_time_s = number_or_empty(j.at("first_event_time_s"));
        r.orbits_survived = j.at("orbits_survived").get<double>();
        r.max_e = j.at("max_e").get<double>();
        r.energy_error = j.at("energy_error").get<double>();
        r.span_s = j.at("span_s").get<double>();
        r.simulated_s = j.at("simulated_s").get<double>();
        r.reference_period_s = j.at("reference_period_s").get<double>();
        r.note = j.at("note").get<std::string>();
        return r;
    } catch (const json::exception& e) {
        bad_line("task", e);
    }
}

std::string survey_task_to_json(const survey_task& t) {
    const json j = {{"design", t.design_index},
                    {"clone", t.clone},
                    {"seed", t.seed},
                    {"name", t.design_name},
                    {"design_json", design_to_json(*t.design_)}};
    return j.dump(-1, ' ', false, json::error_handler_t::replace);
}

survey_task survey_task_from_json(std::string_view line) {
    survey_task t;
    std::string text;
    try {
        const json j = json::parse(line);
        t.design_index = j.at("design").get<std::uint64_t>();
        t.clone = j.at("clone").get<std::uint64_t>();
        t.seed = j.at("seed").get<std::uint64_t>();
        t.design_name = j.at("name").get<std::string>();
        text = j.at("design_json").get<std::string>();
    } catch (const json::exception& e) {
        bad_line("task message", e);
    }
    t.design_ = std::make_shared<const design>(parse_design(text, design_format::json, "<task>"));
    return t;
}

std::string survey_design_to_json(const survey_design_record& r) {
    json findings = json::array();
    for (const auto& f : r.findings)
        findings.push_back({{"level", std::string(severity_name(f.level))},
                            {"code", f.code},
                            {"body", f.body},
                            {"message", f.message}});
    const json j = {{"type", "design"},   {"design", r.design_index}, {"name", r.name},
                    {"source", r.source}, {"valid", r.valid},         {"findings", findings}};
    return j.dump(-1, ' ', false, json::error_handler_t::replace);
}

survey_design_record survey_design_from_json(std::string_view line) {
    try {
        const json j = json::parse(line);
        survey_design_record r;
        r.design_index = j.at("design").get<std::uint64_t>();
        r.name = j.at("name").get<std::string>();
        r.source = j.at("source").get<std::string>();
        r.valid = j.at("valid").get<bool>();
        for (const auto& f : j.at("findings")) {
            finding x;
            const auto level = f.at("level").get<std::string>();
            x.level = level == "error"     ? severity::error
                      : level == "warning" ? severity::warning
                                           : severity::note;
            x.code = f.at("code").get<std::string>();
            x.body = f.at("body").get<std::string>();
            x.message = f.at("message").get<std::string>();
            r.findings.push_back(std::move(x));
        }
        return r;
    } catch (const json::exception& e) {
        bad_line("design", e);
    }
}

} // namespace moonwright
