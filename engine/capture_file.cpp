// The HDF5 layout of a capture experiment (docs/capture.md), written through result_file.
#include "engine/capture_file.hpp"

#include "engine/constants.hpp"
#include "engine/result_file.hpp"

#include <cmath>

namespace moonwright {

namespace {

using rf = record_field;

/// Fields of one member, prefixed "m1_" or "m2_".
void member_fields(std::vector<record_field>& f, const std::string& p) {
    f.push_back({p + "captured", rf::type::integer, "1"});
    f.push_back({p + "kept", rf::type::integer, "1"});
    f.push_back({p + "episodes", rf::type::integer, "1"});
    f.push_back({p + "longest_capture", rf::type::real, "s"});
    f.push_back({p + "fate", rf::type::text, "", 16});
    f.push_back({p + "final_a", rf::type::real, "RH"});
    f.push_back({p + "final_e", rf::type::real, "1"});
    f.push_back({p + "final_i", rf::type::real, "deg"});
}
void member_values(std::vector<record_value>& v, const capture_member_result* m) {
    const double nan = std::nan("");
    if (m == nullptr) {
        v.insert(v.end(), {std::int64_t{-1}, std::int64_t{-1}, std::int64_t{-1}, nan,
                           std::string("none"), nan, nan, nan});
        return;
    }
    v.insert(v.end(), {std::int64_t{m->captured ? 1 : 0}, std::int64_t{m->kept ? 1 : 0},
                       std::int64_t{m->episodes}, m->longest_s, m->fate, m->a_hill, m->e,
                       m->i_rad / constants::deg});
}

} // namespace

void write_capture_file(const std::string& path, const design& d, const capture_options& o,
                        const capture_result& r, const capture_file_meta& meta) {
    result_file f(path, result_file::mode::create);
    const capture_setting& s = r.setting;
    const capture_summary& sm = r.summary;

    f.create_group("/run");
    f.set_attribute("/run", "command", std::string("capture"));
    f.set_attribute("/run", "version", meta.version);
    f.set_attribute("/run", "design_name", d.name);
    f.set_attribute("/run", "planet", o.planet);
    f.set_attribute("/run", "mechanism", std::string(capture_mechanism_name(o.mechanism)));
    f.set_attribute("/run", "integrator", std::string("radau"));
    f.set_attribute("/run", "radau_epsilon", o.radau_epsilon);
    f.set_attribute("/run", "seed", static_cast<std::int64_t>(o.seed));
    f.set_attribute("/run", "trials_requested", static_cast<std::int64_t>(o.trials));
    f.set_attribute("/run", "jobs", static_cast<std::int64_t>(o.jobs));
    f.set_attribute("/run", "intruder", meta.intruder_text);
    f.set_attribute("/run", "pair", meta.pair_text);
    f.set_attribute("/run", "envelope", meta.envelope_text);
    f.set_attribute("/run", "span_s", s.span_s);
    f.set_attribute("/run", "hill_radius_m", s.hill_radius_m);
    f.set_attribute("/run", "planet_radius_m", s.planet_radius_m);
    f.set_attribute("/run", "planet_period_s", s.planet_period_s);
    f.set_attribute("/run", "start_m", s.start_m);
    f.set_attribute("/run", "range_min_m", s.range_min_m);
    f.set_attribute("/run", "range_max_m", s.range_max_m);
    f.set_attribute(
        "/run", "range_kind",
        std::string(o.intruder.range_is_pericentre ? "pericentre" : "impact_parameter"));
    f.set_attribute("/run", "envelope_cutoff_m", s.envelope_cutoff_m);
    f.set_attribute("/run", "wall_time_s", meta.wall_time_s);
    f.set_attribute("/run", "finished", std::int64_t{r.trials.size() == o.trials ? 1 : 0});

    f.create_group("/design");
    f.write_text("/design/source", d.source_text,
                 "The design file as given (" + d.source_name + ")");

    f.create_group("/capture");
    std::vector<record_field> fields{
        {"trial", rf::type::integer, "1"},      {"seed", rf::type::integer, "1"},
        {"outcome", rf::type::text, "", 16},    {"impact_parameter", rf::type::real, "m"},
        {"pericentre", rf::type::real, "m"},    {"vinf", rf::type::real, "m/s"},
        {"min_distance", rf::type::real, "m"},  {"end_time", rf::type::real, "s"},
        {"jacobi", rf::type::real, "m^2/s^2"},  {"jacobi_l1", rf::type::real, "m^2/s^2"},
        {"pair_split", rf::type::integer, "1"}, {"collided_with", rf::type::text, "", 48},
        {"moons_hit", rf::type::integer, "1"},  {"moons_unbound", rf::type::integer, "1"},
        {"moon_max_de", rf::type::real, "1"},
    };
    member_fields(fields, "m1_");
    member_fields(fields, "m2_");
    f.create_record_table("/capture/trials", fields,
                          "One record per trial: drawn geometry, outcome (flyby, temporary, kept, "
                          "exchange, impact, moon-collision, failed), each member's captures and "
                          "final planetocentric orbit (m2_ fields -1/NaN for a single intruder)");
    for (const auto& t : r.trials) {
        std::vector<record_value> v{static_cast<std::int64_t>(t.trial),
                                    static_cast<std::int64_t>(t.seed),
                                    t.outcome,
                                    t.b_m,
                                    t.q_m,
                                    t.vinf_m_s,
                                    t.min_distance_m,
                                    t.end_s,
                                    t.jacobi,
                                    t.jacobi_l1,
                                    std::int64_t{t.pair_split ? 1 : 0},
                                    t.collided_with,
                                    std::int64_t{t.moons_hit},
                                    std::int64_t{t.moons_unbound},
                                    t.moon_max_de};
        member_values(v, t.members.empty() ? nullptr : &t.members[0]);
        member_values(v, t.members.size() > 1 ? &t.members[1] : nullptr);
        f.append_record("/capture/trials", v);
    }

    const std::string g = "/capture";
    f.set_attribute(g, "trials", static_cast<std::int64_t>(sm.trials));
    f.set_attribute(g, "captured", static_cast<std::int64_t>(sm.captured));
    f.set_attribute(g, "kept", static_cast<std::int64_t>(sm.kept));
    f.set_attribute(g, "capture_probability", sm.capture_probability.estimate);
    f.set_attribute(g, "capture_probability_lower", sm.capture_probability.lower);
    f.set_attribute(g, "capture_probability_upper", sm.capture_probability.upper);
    f.set_attribute(g, "keep_probability", sm.keep_probability.estimate);
    f.set_attribute(g, "keep_probability_lower", sm.keep_probability.lower);
    f.set_attribute(g, "keep_probability_upper", sm.keep_probability.upper);
    f.set_attribute(g, "interval", std::string("Wilson score, 95%"));
    f.set_attribute(g, "impacts", static_cast<std::int64_t>(sm.impacts));
    f.set_attribute(g, "moon_collisions", static_cast<std::int64_t>(sm.moon_collisions));
    f.set_attribute(g, "pair_splits", static_cast<std::int64_t>(sm.pair_splits));
    f.set_attribute(g, "exchanges", static_cast<std::int64_t>(sm.exchanges));
    f.set_attribute(g, "kept_prograde", static_cast<std::int64_t>(sm.kept_prograde));
    f.set_attribute(g, "kept_retrograde", static_cast<std::int64_t>(sm.kept_retrograde));
    f.set_attribute(g, "moons_hit", static_cast<std::int64_t>(sm.moons_hit));
    f.set_attribute(g, "moons_unbound", static_cast<std::int64_t>(sm.moons_unbound));

    f.create_group("/figures");
    f.write_array("/figures/capture_durations", sm.durations_s, {sm.durations_s.size()}, "s",
                  "Duration of every capture episode of every member (kept ones cut at the end "
                  "of the span): the data of a histogram");
    std::vector<double> ae;
    std::vector<double> aei;
    for (std::size_t k = 0; k < sm.final_a_hill.size(); ++k) {
        ae.push_back(sm.final_a_hill[k]);
        ae.push_back(sm.final_e[k]);
        aei.push_back(sm.final_i_rad[k] / constants::deg);
    }
    f.write_array("/figures/final_a_e", ae, {sm.final_a_hill.size(), 2}, "RH, 1",
                  "Final planetocentric semi-major axis (column 0, Hill radii) and eccentricity "
                  "(column 1) of every kept member: the data of a scatter plot");
    f.set_attribute("/figures/final_a_e", "columns", std::string("a,e"));
    f.write_array("/figures/final_inclination", aei, {aei.size()}, "deg",
                  "Final inclination of every kept member to the planet's orbital plane, same "
                  "order as final_a_e (> 90 deg retrograde)");
    f.flush();
}

} // namespace moonwright
