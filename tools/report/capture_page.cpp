// The report page of a `moonwright capture` result: reads the HDF5 layout of docs/capture.md and
// lays out the probabilities, the duration histogram, the final a-e scatter and the metadata.
#include "tools/report/capture_page.hpp"

#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/error.hpp"
#include "tools/report/capture_figures.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace moonwright::report {

namespace {

namespace c = moonwright::constants;

[[noreturn]] void not_capture(const result_file& f, const std::string& what) {
    throw input_error(source_location{f.path()},
                      fmt::format("not a complete capture result: {}", what));
}

stored_capture read_contents(const result_file& f) {
    stored_capture s;
    s.path = f.path();
    if (!f.exists("/run") || !f.has_attribute("/run", "command"))
        not_capture(f, "/run@command is missing (was it written by moonwright?)");
    const std::string command = f.string_attribute("/run", "command");
    if (command != "capture")
        not_capture(f, "/run@command is '" + command + "', expected 'capture'");
    if (!f.exists("/capture")) not_capture(f, "/capture is missing");
    s.version = f.string_attribute("/run", "version");
    s.design_name = f.string_attribute("/run", "design_name");
    s.planet = f.string_attribute("/run", "planet");
    s.mechanism = f.string_attribute("/run", "mechanism");
    s.integrator = f.string_attribute("/run", "integrator");
    s.intruder = f.string_attribute("/run", "intruder");
    s.pair = f.string_attribute("/run", "pair");
    s.envelope = f.string_attribute("/run", "envelope");
    s.seed = static_cast<std::uint64_t>(f.integer_attribute("/run", "seed"));
    s.trials_requested = f.integer_attribute("/run", "trials_requested");
    s.span_s = f.real_attribute("/run", "span_s");
    s.hill_radius_m = f.real_attribute("/run", "hill_radius_m");
    s.planet_radius_m = f.real_attribute("/run", "planet_radius_m");
    s.planet_period_s = f.real_attribute("/run", "planet_period_s");
    s.wall_time_s = f.real_attribute("/run", "wall_time_s");
    s.finished = f.integer_attribute("/run", "finished") != 0;

    const std::string g = "/capture";
    s.trials = f.integer_attribute(g, "trials");
    s.captured = f.integer_attribute(g, "captured");
    s.kept = f.integer_attribute(g, "kept");
    s.capture_p = f.real_attribute(g, "capture_probability");
    s.capture_lo = f.real_attribute(g, "capture_probability_lower");
    s.capture_hi = f.real_attribute(g, "capture_probability_upper");
    s.keep_p = f.real_attribute(g, "keep_probability");
    s.keep_lo = f.real_attribute(g, "keep_probability_lower");
    s.keep_hi = f.real_attribute(g, "keep_probability_upper");
    s.interval = f.string_attribute(g, "interval");
    s.impacts = f.integer_attribute(g, "impacts");
    s.moon_collisions = f.integer_attribute(g, "moon_collisions");
    s.pair_splits = f.integer_attribute(g, "pair_splits");
    s.exchanges = f.integer_attribute(g, "exchanges");
    s.kept_prograde = f.integer_attribute(g, "kept_prograde");
    s.kept_retrograde = f.integer_attribute(g, "kept_retrograde");
    s.moons_hit = f.integer_attribute(g, "moons_hit");
    s.moons_unbound = f.integer_attribute(g, "moons_unbound");

    if (!f.exists("/figures/capture_durations"))
        not_capture(f, "/figures/capture_durations is missing");
    s.durations_s = f.read_array("/figures/capture_durations");
    if (!f.exists("/figures/final_a_e")) not_capture(f, "/figures/final_a_e is missing");
    const std::vector<double> ae = f.read_array("/figures/final_a_e");
    if (ae.size() % 2 != 0) not_capture(f, "/figures/final_a_e does not hold N x 2 values");
    for (std::size_t k = 0; k + 1 < ae.size(); k += 2) {
        s.final_a_rh.push_back(ae[k]);
        s.final_e.push_back(ae[k + 1]);
    }
    if (f.exists("/figures/final_inclination"))
        s.final_inclination_deg = f.read_array("/figures/final_inclination");
    if (s.final_inclination_deg.size() != s.final_a_rh.size())
        not_capture(f, "/figures/final_inclination does not have one value per kept member");
    return s;
}

std::string percent(double p) {
    return format_significant(100.0 * p, 3) + "\u00a0%";
}
std::string probability(double p, double lo, double hi) {
    return fmt::format("{} ({} to {})", percent(p), percent(lo), percent(hi));
}

} // namespace

stored_capture read_capture_result(const result_file& f) {
    try {
        return read_contents(f);
    } catch (const io_error& e) {
        throw input_error(source_location{f.path()},
                          std::string("cannot read the capture result: ") + e.what());
    }
}

report_page build_capture_page(const stored_capture& s) {
    report_page out;
    out.page_ = html_report("Capture experiment: " + s.design_name,
                            fmt::format("planet {} · mechanism {} · {} trials · seed {}", s.planet,
                                        s.mechanism, s.trials, s.seed));
    verdict_banner b;
    b.word_ = "capture";
    b.tone_ = verdict_tone::neutral;
    b.summary_ =
        fmt::format("Captured in {} of {} trials: {}; kept to the end in {}: {} ({}).", s.captured,
                    s.trials, probability(s.capture_p, s.capture_lo, s.capture_hi), s.kept,
                    probability(s.keep_p, s.keep_lo, s.keep_hi), s.interval);
    if (s.kept > 0)
        b.reasons_.push_back(fmt::format("Of the kept members, {} are prograde and {} retrograde.",
                                         s.kept_prograde, s.kept_retrograde));
    if (s.impacts > 0) b.reasons_.push_back(fmt::format("{} intruders hit the planet.", s.impacts));
    if (s.moon_collisions > 0 || s.moons_hit > 0 || s.moons_unbound > 0)
        b.reasons_.push_back(fmt::format("Existing moons: {} collisions, {} hit, {} unbound.",
                                         s.moon_collisions, s.moons_hit, s.moons_unbound));
    if (!s.finished)
        b.reasons_.push_back(
            fmt::format("Unfinished: {} of {} trials ran.", s.trials, s.trials_requested));
    out.page_.verdict(b);

    html_section figs("figures", "Durations and final orbits");
    // The figures come from capture_figures(), fed with a summary rebuilt from /figures.
    capture_result cr;
    cr.summary.durations_s = s.durations_s;
    cr.summary.final_a_hill = s.final_a_rh;
    cr.summary.final_e = s.final_e;
    for (double deg : s.final_inclination_deg) cr.summary.final_i_rad.push_back(deg * c::deg);
    const auto [hist, scat] = capture_figures(cr);
    if (s.durations_s.empty())
        figs.paragraph("No capture episode: there is no duration histogram.");
    else
        add_figure(out, figs, "capture-durations", hist,
                   fmt::format("How long each capture episode lasted ({} episodes; the span is "
                               "{} yr).",
                               s.durations_s.size(), format_significant(s.span_s / c::year, 4)),
                   "Histogram of capture episode durations in years.");
    if (s.final_a_rh.empty())
        figs.paragraph("No member was kept to the end: there is no final a-e scatter.");
    else
        add_figure(out, figs, "capture-final-a-e", scat,
                   "Semi-major axis (in the planet's Hill radius) and eccentricity of every "
                   "member still bound at the end, prograde and retrograde apart.",
                   "Scatter of final semi-major axis against eccentricity.");
    out.page_.section(figs);

    html_section outcomes("outcomes", "Outcomes");
    outcomes.key_values(
        "Counts over all trials",
        {{"trials", std::to_string(s.trials), "", fmt::format("of {} asked", s.trials_requested)},
         {"captured", std::to_string(s.captured), "",
          probability(s.capture_p, s.capture_lo, s.capture_hi)},
         {"kept", std::to_string(s.kept), "", probability(s.keep_p, s.keep_lo, s.keep_hi)},
         {"kept prograde", std::to_string(s.kept_prograde), "", ""},
         {"kept retrograde", std::to_string(s.kept_retrograde), "", ""},
         {"planet impacts", std::to_string(s.impacts), "", ""},
         {"moon collisions", std::to_string(s.moon_collisions), "", ""},
         {"pair splits", std::to_string(s.pair_splits), "", ""},
         {"exchanges", std::to_string(s.exchanges), "", ""},
         {"moons hit", std::to_string(s.moons_hit), "", ""},
         {"moons unbound", std::to_string(s.moons_unbound), "", ""}});
    out.page_.section(outcomes);

    html_section run("run", "The run");
    std::vector<key_value> kv{
        {"planet", s.planet, "", ""},
        {"mechanism", s.mechanism, "", ""},
        {"intruder", s.intruder, "", "as given"},
        {"integrator", s.integrator, "", ""},
        {"span", format_significant(s.span_s / c::year, 4), "yr", ""},
        {"Hill radius of the planet", format_significant(s.hill_radius_m / 1e3, 4), "km", ""},
        {"planet radius", format_significant(s.planet_radius_m / 1e3, 4), "km", ""},
        {"planet period", format_significant(s.planet_period_s / c::year, 4), "yr", ""},
        {"seed", std::to_string(s.seed), "", ""},
        {"wall time", format_significant(s.wall_time_s, 3), "s", ""},
        {"moonwright version", s.version, "", ""},
        {"result file", s.path, "", ""}};
    if (!s.pair.empty()) kv.insert(kv.begin() + 3, key_value{"pair", s.pair, "", "as given"});
    if (!s.envelope.empty())
        kv.insert(kv.begin() + 3, key_value{"envelope", s.envelope, "", "as given"});
    run.key_values("Run settings and metadata", kv);
    out.page_.section(run);
    out.page_.footer(fmt::format("moonwright {} · capture report of {} · design {} · seed {}",
                                 s.version, s.path, s.design_name, s.seed));
    return out;
}

} // namespace moonwright::report
