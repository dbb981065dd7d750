// Writes and reads the run result layout (docs/results.md) through result_file.
#include "engine/run_file.hpp"

#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/result_file.hpp"

#include <cmath>
#include <filesystem>
#include <fmt/format.h>
#include <system_error>
#include <unistd.h>

namespace moonwright {

namespace {

/// One element series: name, member of run_sample, units and words.
struct series_spec {
    const char* name;
    std::vector<double> run_sample::*member;
    const char* units;
    const char* description;
};

const series_spec element_series[] = {
    {"a", &run_sample::a, "m", "osculating semi-major axis relative to the parent subsystem"},
    {"e", &run_sample::e, "1", "osculating eccentricity"},
    {"i", &run_sample::i, "rad", "inclination to the parent's orbital plane (planets: x-y plane)"},
    {"node", &run_sample::node, "rad",
     "longitude of the ascending node in the parent's orbit frame"},
    {"peri", &run_sample::peri, "rad", "argument of pericentre"},
    {"mean_anomaly", &run_sample::mean_anomaly, "rad", "mean anomaly (NaN when unbound)"},
    {"a_min", &run_sample::a_min, "m", "smallest a since the previous sample"},
    {"a_max", &run_sample::a_max, "m", "largest a since the previous sample"},
    {"e_min", &run_sample::e_min, "1", "smallest e since the previous sample"},
    {"e_max", &run_sample::e_max, "1", "largest e since the previous sample"},
    {"i_min", &run_sample::i_min, "rad", "smallest i since the previous sample"},
    {"i_max", &run_sample::i_max, "rad", "largest i since the previous sample"},
};

struct scalar_spec {
    const char* name;
    double run_sample::*member;
    const char* units;
    const char* description;
};

const scalar_spec scalar_series[] = {
    {"time", &run_sample::t_s, "s", "time of each sample since the start"},
    {"energy_error", &run_sample::energy_error, "1", "relative error of the total energy"},
    {"angular_momentum_error", &run_sample::angular_momentum_error, "1",
     "relative error of the total angular momentum"},
    {"megno", &run_sample::megno, "1", "MEGNO Y(t) (Cincotta & Simo 2000); NaN when off"},
    {"mean_megno", &run_sample::mean_megno, "1", "time-averaged MEGNO <Y>(t); NaN when off"},
};

const std::vector<record_field> event_fields = {
    {"time", record_field::type::real, "s"},
    {"kind", record_field::type::text, "", 24},
    {"body", record_field::type::integer, "1"},
    {"other", record_field::type::integer, "1"},
    {"body_name", record_field::type::text, "", 48},
    {"other_name", record_field::type::text, "", 48},
    {"distance", record_field::type::real, "m"},
    {"threshold", record_field::type::real, "m"},
    {"detail", record_field::type::text, "", 160},
};

event_kind parse_event_kind(const std::string& s) {
    for (event_kind k :
         {event_kind::close_approach, event_kind::collision, event_kind::parent_impact,
          event_kind::roche_crossing, event_kind::escape, event_kind::numerical_failure})
        if (s == event_name(k)) return k;
    throw input_error(source_location{"<result file>"}, "events.kind", s, "a known event kind");
}

void write_contents(result_file& f, const design& d, const run_driver& run,
                    const run_metadata& meta, const verdict* v, bool with_checkpoint) {
    const resolved_system& sys = run.system();
    const std::size_t n = sys.bodies.size();
    auto name_of = [&](int k) {
        return k >= 0 && static_cast<std::size_t>(k) < n
                   ? sys.bodies[static_cast<std::size_t>(k)].name
                   : std::string();
    };

    f.write_text("/design/text", d.source_text, "the design file as written");
    f.set_attribute("/design/text", "format", meta.design_format);
    f.set_attribute("/design/text", "source", d.source_name);

    f.create_record_table(
        "/bodies",
        {{"name", record_field::type::text, "", 48},
         {"kind", record_field::type::text, "", 12},
         {"parent", record_field::type::integer, "1"},
         {"mass", record_field::type::real, "kg"},
         {"radius", record_field::type::real, "m"},
         {"density", record_field::type::real, "kg/m3"}},
        "the bodies in index order (parents before children); parent -1 for the star");
    std::vector<std::vector<record_value>> body_rows;
    for (const auto& b : sys.bodies)
        body_rows.push_back({b.name, std::string(body_kind_name(b.kind)), std::int64_t{b.parent},
                             b.mass_kg, b.radius_m, b.density_kg_m3});
    f.append_records("/bodies", body_rows);

    const auto& samples = run.samples();
    const std::size_t rows = samples.size();
    std::vector<std::string> names;
    for (const auto& b : sys.bodies) names.push_back(b.name);
    for (const auto& s : element_series) {
        const std::string path = std::string("/series/") + s.name;
        f.create_table(path, n, s.units,
                       std::string(s.description) + "; one column per body (see /bodies), star NaN",
                       names);
        std::vector<double> data;
        data.reserve(rows * n);
        for (const auto& row : samples)
            data.insert(data.end(), (row.*s.member).begin(), (row.*s.member).end());
        f.append_rows(path, data);
    }
    for (const auto& s : scalar_series) {
        const std::string path = std::string("/series/") + s.name;
        f.create_table(path, 1, s.units, s.description);
        std::vector<double> data;
        data.reserve(rows);
        for (const auto& row : samples) data.push_back(row.*s.member);
        f.append_rows(path, data);
    }

    f.create_record_table("/pairs",
                          {{"body_a", record_field::type::integer, "1"},
                           {"body_b", record_field::type::integer, "1"},
                           {"name_a", record_field::type::text, "", 48},
                           {"name_b", record_field::type::text, "", 48},
                           {"min_distance", record_field::type::real, "m"},
                           {"time", record_field::type::real, "s"},
                           {"mutual_hill_radius", record_field::type::real, "m"},
                           {"min_distance_hill", record_field::type::real, "1"}},
                          "closest approach of every sibling pair (mutual Hill radius > 0) and of "
                          "every body to its parent (mutual Hill radius 0)");
    std::vector<std::vector<record_value>> pair_rows;
    for (const auto& p : run.pairs())
        pair_rows.push_back(
            {std::int64_t{p.a}, std::int64_t{p.b}, name_of(p.a), name_of(p.b), p.min_distance_m,
             p.t_s, p.mutual_hill_m,
             p.mutual_hill_m > 0 ? p.min_distance_m / p.mutual_hill_m : std::nan("")});
    f.append_records("/pairs", pair_rows);

    f.create_record_table("/events", event_fields, "events in time order");
    std::vector<std::vector<record_value>> event_rows;
    for (const auto& e : run.events())
        event_rows.push_back({e.t_s, std::string(event_name(e.kind)), std::int64_t{e.body},
                              std::int64_t{e.other}, name_of(e.body), name_of(e.other),
                              e.distance_m, e.threshold_m, e.detail});
    f.append_records("/events", event_rows);

    const run_options& o = run.options();
    f.create_group("/run");
    f.set_attribute("/run", "command", std::string("run"));
    f.set_attribute("/run", "version", meta.version);
    f.set_attribute("/run", "integrator", o.integrator);
    f.set_attribute("/run", "step_s", run.step_s());
    f.set_attribute("/run", "seed", static_cast<std::int64_t>(meta.seed));
    f.set_attribute("/run", "span_s", run.span_s());
    f.set_attribute("/run", "samples", static_cast<std::int64_t>(o.samples));
    f.set_attribute("/run", "megno", std::int64_t{o.megno ? 1 : 0});
    f.set_attribute("/run", "continue_after_event", std::int64_t{o.continue_after_event ? 1 : 0});
    f.set_attribute("/run", "close_approach_hill", o.close_approach_hill);
    f.set_attribute("/run", "escape_hill", o.escape_hill);
    f.set_attribute("/run", "energy_failure", o.energy_failure);
    f.set_attribute("/run", "option_step_s", o.integration.step);
    f.set_attribute("/run", "option_period_fraction", o.integration.period_fraction);
    f.set_attribute("/run", "option_pericentre_fraction", o.integration.pericentre_fraction);
    f.set_attribute("/run", "option_corrector_order", std::int64_t{o.integration.corrector_order});
    f.set_attribute("/run", "option_modified_kick",
                    std::int64_t{o.integration.modified_kick ? 1 : 0});
    f.set_attribute("/run", "option_tolerance", o.integration.tolerance);
    f.set_attribute("/run", "option_radau_epsilon", o.integration.radau_epsilon);
    f.set_attribute("/run", "wall_time_s", meta.wall_time_s);
    f.set_attribute("/run", "simulated_s", run.time_s() - samples.front().t_s);
    f.set_attribute("/run", "finished", std::int64_t{run.finished() ? 1 : 0});
    const run_outcome out = run.outcome();
    f.set_attribute("/run", "reference_body", out.reference_body);
    f.set_attribute("/run", "reference_period_s", out.reference_period_s);

    if (v != nullptr) {
        f.create_group("/verdict");
        f.set_attribute("/verdict", "verdict", std::string(verdict_name(v->kind)));
        f.set_attribute("/verdict", "headline", v->headline);
        std::string reasons;
        for (const auto& r : v->reasons) reasons += (reasons.empty() ? "" : "\n") + r;
        f.set_attribute("/verdict", "reasons", reasons);
        f.set_attribute("/verdict", "max_energy_error", out.max_energy_error);
        f.set_attribute("/verdict", "mean_megno", out.mean_megno ? *out.mean_megno : std::nan(""));
        f.set_attribute("/verdict", "lyapunov_time_s",
                        out.lyapunov_time_s ? *out.lyapunov_time_s : std::nan(""));
    }
    if (with_checkpoint) {
        const std::vector<double> state = run.save_checkpoint();
        f.write_array("/checkpoint/state", state, {state.size()}, "1",
                      "opaque run state for moonwright run --resume");
    }
}

} // namespace

void write_run_file(const std::string& path, const design& d, const run_driver& run,
                    const run_metadata& meta, const verdict* final_verdict, bool with_checkpoint) {
    const std::string tmp = fmt::format("{}.tmp{}", path, static_cast<long>(::getpid()));
    std::error_code ec;
    try {
        {
            result_file f(tmp, result_file::mode::create);
            write_contents(f, d, run, meta, final_verdict, with_checkpoint);
            f.flush();
        }
        std::filesystem::rename(tmp, path, ec);
        if (ec)
            throw io_error(fmt::format("cannot write result file '{}': {}", path, ec.message()));
    } catch (...) {
        std::filesystem::remove(tmp, ec);
        throw;
    }
}

run_resume_data read_run_resume(const std::string& path) {
    if (!std::filesystem::exists(path))
        throw input_error(source_location{path}, "there is no such result file to resume");
    run_resume_data r;
    result_file f(path, result_file::mode::read);
    if (!f.exists("/checkpoint/state"))
        throw input_error(source_location{path},
                          "this result file has no checkpoint: the run finished, or it was not "
                          "written by moonwright run");
    const std::string text = f.read_text("/design/text");
    r.meta_.design_format = f.string_attribute("/design/text", "format");
    const std::string source = f.string_attribute("/design/text", "source");
    r.design_ = parse_design(
        text, r.meta_.design_format == "json" ? design_format::json : design_format::toml, source);
    r.meta_.version = f.string_attribute("/run", "version");
    r.meta_.seed = static_cast<std::uint64_t>(f.integer_attribute("/run", "seed"));
    r.meta_.wall_time_s = f.real_attribute("/run", "wall_time_s");
    run_options& o = r.options_;
    o.integrator = f.string_attribute("/run", "integrator");
    o.span_s = f.real_attribute("/run", "span_s");
    o.samples = static_cast<std::size_t>(f.integer_attribute("/run", "samples"));
    o.megno = f.integer_attribute("/run", "megno") != 0;
    o.seed = r.meta_.seed;
    o.continue_after_event = f.integer_attribute("/run", "continue_after_event") != 0;
    o.close_approach_hill = f.real_attribute("/run", "close_approach_hill");
    o.escape_hill = f.real_attribute("/run", "escape_hill");
    o.energy_failure = f.real_attribute("/run", "energy_failure");
    o.integration.step = f.real_attribute("/run", "option_step_s");
    o.integration.period_fraction = f.real_attribute("/run", "option_period_fraction");
    o.integration.pericentre_fraction = f.real_attribute("/run", "option_pericentre_fraction");
    o.integration.corrector_order =
        static_cast<int>(f.integer_attribute("/run", "option_corrector_order"));
    o.integration.modified_kick = f.has_attribute("/run", "option_modified_kick") &&
                                  f.integer_attribute("/run", "option_modified_kick") != 0;
    o.integration.tolerance = f.real_attribute("/run", "option_tolerance");
    o.integration.radau_epsilon = f.real_attribute("/run", "option_radau_epsilon");
    r.checkpoint_ = f.read_array("/checkpoint/state");

    const std::size_t rows = f.rows("/series/time");
    const std::size_t n = f.columns("/series/a");
    r.samples_.resize(rows);
    for (const auto& s : element_series) {
        const std::vector<double> data = f.read_array(std::string("/series/") + s.name);
        for (std::size_t k = 0; k < rows; ++k)
            (r.samples_[k].*s.member)
                .assign(data.begin() + static_cast<std::ptrdiff_t>(k * n),
                        data.begin() + static_cast<std::ptrdiff_t>((k + 1) * n));
    }
    for (const auto& s : scalar_series) {
        const std::vector<double> data = f.read_array(std::string("/series/") + s.name);
        for (std::size_t k = 0; k < rows; ++k) r.samples_[k].*s.member = data[k];
    }
    for (const auto& rec : f.read_records("/events")) {
        run_event e;
        e.t_s = std::get<double>(rec[0]);
        e.kind = parse_event_kind(std::get<std::string>(rec[1]));
        e.body = static_cast<int>(std::get<std::int64_t>(rec[2]));
        e.other = static_cast<int>(std::get<std::int64_t>(rec[3]));
        e.distance_m = std::get<double>(rec[6]);
        e.threshold_m = std::get<double>(rec[7]);
        e.detail = std::get<std::string>(rec[8]);
        r.events_.push_back(std::move(e));
    }
    return r;
}

} // namespace moonwright
