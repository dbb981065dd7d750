// The report page of a `moonwright map` result: reads the HDF5 layout of docs/map.md and lays out
// the edge or surviving fraction, the figures, the axes, the design and the run metadata.
#include "tools/report/map_report.hpp"

#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"
#include "tools/report/map_figure.hpp"
#include "tools/report/quantity_text.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <map>
#include <utility>

namespace moonwright::report {

namespace {

namespace c = moonwright::constants;

[[noreturn]] void not_a_map(const result_file& f, const std::string& what) {
    throw input_error(source_location{f.path()},
                      fmt::format("not a complete map result: {}", what));
}

std::vector<double> grid(const result_file& f, const std::string& path, std::size_t cells) {
    if (!f.exists(path)) not_a_map(f, path + " is missing");
    std::vector<double> v = f.read_array(path);
    if (v.size() != cells)
        not_a_map(f, fmt::format("{} holds {} values, expected {}", path, v.size(), cells));
    return v;
}

design parse_stored(const std::string& text, const std::string& source) {
    const auto first = text.find_first_not_of(" \t\r\n");
    const bool json = first != std::string::npos && text[first] == '{';
    return parse_design(text, json ? design_format::json : design_format::toml, source);
}

stored_map read_contents(const result_file& f) {
    stored_map m;
    m.path = f.path();
    if (!f.exists("/run") || !f.has_attribute("/run", "command"))
        not_a_map(f, "/run@command is missing (was it written by moonwright?)");
    const std::string command = f.string_attribute("/run", "command");
    if (command != "map") not_a_map(f, "/run@command is '" + command + "', expected 'map'");
    if (!f.exists("/design/text")) not_a_map(f, "/design/text is missing");
    m.design_text = f.read_text("/design/text");
    m.design_name = f.string_attribute("/run", "design_name");
    m.version = f.string_attribute("/run", "version");
    m.integrator = f.string_attribute("/run", "integrator");
    m.seed = static_cast<std::uint64_t>(f.integer_attribute("/run", "seed"));
    m.jobs = f.integer_attribute("/run", "jobs");
    m.orbits = f.real_attribute("/run", "orbits");
    map_result& r = m.result;
    r.reference_body = f.string_attribute("/run", "reference_body");
    r.reference_period_s = f.real_attribute("/run", "reference_period_s");
    r.span_s = f.real_attribute("/run", "span_s");
    if (!(r.reference_period_s > 0)) not_a_map(f, "/run@reference_period_s is not positive");

    // The axes come back from their specifications, checked against the stored design.
    const std::string source = f.path() + ":/design/text";
    design d;
    try {
        d = parse_stored(m.design_text, source);
    } catch (const input_error& e) {
        not_a_map(f, std::string("the stored design does not load: ") + e.what());
    }
    for (int a = 0; a < 2; ++a) {
        const std::string p = fmt::format("/map/axis{}", a);
        if (!f.exists(p)) break;
        map_axis ax = parse_map_axis(f.string_attribute(p, "spec"), d, p + "@spec");
        const std::vector<double> values = f.read_array(p);
        if (values.size() != ax.n)
            not_a_map(
                f, fmt::format("{} holds {} values, its specification {}", p, values.size(), ax.n));
        r.axes.push_back(std::move(ax));
    }
    if (r.axes.empty()) not_a_map(f, "/map/axis0 is missing");
    std::size_t cells = 1;
    for (const auto& ax : r.axes) cells *= ax.n;

    r.mean_megno = grid(f, "/map/mean_megno", cells);
    r.survival_s = grid(f, "/map/survival_time", cells);
    r.span_cell_s = grid(f, "/map/span", cells);
    r.max_e = grid(f, "/map/max_e", cells);
    for (double v : grid(f, "/map/survived", cells)) r.survived.push_back(v != 0 ? 1 : 0);
    for (double v : grid(f, "/map/first_event", cells))
        r.first_event.push_back(static_cast<int>(std::lround(v)));
    if (f.has_attribute("/map/first_event", "legend"))
        m.event_legend = f.string_attribute("/map/first_event", "legend");

    try {
        r.references = map_references_for(d, r.axes, m.seed);
    } catch (const input_error& e) {
        not_a_map(f, std::string("the stored design does not resolve: ") + e.what());
    }
    auto stored = [&](const std::string& name, double& into) {
        const std::string p = "/map/references/" + name;
        if (!f.exists(p)) return;
        const std::vector<double> v = f.read_array(p);
        if (v.size() == 1) into = v[0];
    };
    stored("hill_radius", r.references.hill_radius_m);
    stored("stability_limit", r.references.stability_m);
    stored("roche_limit_fluid", r.references.roche_fluid_m);
    if (f.exists("/map/edge")) {
        const std::vector<double> e = f.read_array("/map/edge");
        if (e.size() != 1) not_a_map(f, "/map/edge does not hold one value");
        r.edge = e[0];
        r.last_surviving = f.real_attribute("/map/edge", "last_surviving");
        r.first_failing = f.real_attribute("/map/edge", "first_failing");
    }
    const resolved_system sys = resolve(d, m.seed);
    for (const auto& b : sys.bodies)
        m.bodies.push_back(fmt::format("{} ({})", b.name, body_kind_name(b.kind)));
    return m;
}

/// A length as the check report writes it: AU from 0.1 AU up, km below; value and unit.
std::pair<std::string, std::string> length(double m) {
    if (std::abs(m) >= 0.1 * c::au) return {format_significant(m / c::au, 4), "AU"};
    return {format_significant(m / 1e3, 4), "km"};
}
std::string unit_words(const std::string& unit) {
    if (unit == "RH") return "fraction of the parent's Hill radius";
    if (unit == "Rp") return "multiples of the parent's radius";
    if (unit == "1") return "plain number";
    return unit;
}

/// Cell counts by first event, named from the stored legend ("-1 none, 0 close_approach, ...").
std::map<int, std::string> legend_names(const std::string& legend) {
    std::map<int, std::string> names;
    std::size_t at = 0;
    while (at < legend.size()) {
        const std::size_t end = std::min(legend.find(',', at), legend.size());
        const std::string item = legend.substr(at, end - at);
        const std::size_t first = item.find_first_not_of(' ');
        if (first != std::string::npos) {
            const std::size_t space = item.find(' ', first);
            if (space != std::string::npos) {
                try {
                    names[std::stoi(item.substr(first, space - first))] = item.substr(space + 1);
                } catch (const std::exception&) {
                    // a malformed legend item: the code is shown as a number instead
                }
            }
        }
        at = end + 1;
    }
    return names;
}

verdict_banner banner(const stored_map& m) {
    const map_result& r = m.result;
    std::size_t alive = 0;
    for (int s : r.survived)
        if (s != 0) ++alive;
    const double fraction = static_cast<double>(alive) / static_cast<double>(r.cells());
    const std::string survived_line = fmt::format(
        "{} of {} cells survived {} orbits of {} ({} %).", alive, r.cells(),
        format_significant(m.orbits, 4), r.reference_body, format_significant(100.0 * fraction, 3));
    verdict_banner b;
    b.tone_ = verdict_tone::neutral;
    const map_axis& ax0 = r.axes[0];
    const map_references& ref = r.references;
    const bool limit = ref.moon && ref.body == ax0.body && ref.stability_m > 0 &&
                       ref.metres_per_unit > 0 && ax0.field == "a";
    if (r.edge) {
        b.word_ = "edge";
        b.summary_ = fmt::format("Edge at {} of {}", with_unit(*r.edge, ax0.unit), ax0.body);
        if (limit)
            b.summary_ += fmt::format("; Domingos, Winter & Yokoyama (2006): {} ({}, e = {}).",
                                      with_unit(ref.stability_m / ref.metres_per_unit, ax0.unit),
                                      ref.retrograde ? "retrograde" : "prograde",
                                      format_significant(ref.e_moon, 3));
        else
            b.summary_ += ".";
        b.reasons_.push_back(fmt::format(
            "Every cell up to {} survived; the cell at {} was the first to fail; the edge is "
            "their midpoint.",
            with_unit(*r.last_surviving, ax0.unit), with_unit(*r.first_failing, ax0.unit)));
        if (limit)
            b.reasons_.push_back(fmt::format(
                "The empirical edge is {} % of the published limit.",
                format_significant(100.0 * *r.edge * ref.metres_per_unit / ref.stability_m, 3)));
        b.reasons_.push_back(survived_line);
    } else {
        b.word_ = "map";
        b.summary_ = survived_line;
        if (r.axes.size() == 1 && ax0.field == "a")
            b.reasons_.push_back(alive == r.cells()
                                     ? "No cell failed, so the scan shows no edge."
                                     : "The first cell failed, or failures are not a single "
                                       "outer band, so no edge is given.");
        if (limit)
            b.reasons_.push_back(
                fmt::format("Domingos, Winter & Yokoyama (2006) limit for {}: {}.", ax0.body,
                            with_unit(ref.stability_m / ref.metres_per_unit, ax0.unit)));
    }
    return b;
}

} // namespace

stored_map read_map_result(const result_file& f) {
    try {
        return read_contents(f);
    } catch (const io_error& e) {
        throw input_error(source_location{f.path()},
                          std::string("cannot read the map result: ") + e.what());
    }
}

report_page build_map_page(const stored_map& m) {
    const map_result& r = m.result;
    report_page out;
    std::string varied;
    for (const auto& ax : r.axes)
        varied += (varied.empty() ? "" : " × ") + ax.body + "." + ax.field;
    out.page_ =
        html_report("Stability map: " + m.design_name,
                    fmt::format("{} · {} cells · {} orbits of {} · seed {}", varied, r.cells(),
                                format_significant(m.orbits, 4), r.reference_body, m.seed));
    out.page_.verdict(banner(m));

    html_section figs("figures", "Survival and chaos");
    const std::string kind = r.axes.size() == 1 ? "curve" : "heat map";
    add_figure(out, figs, "map-survival",
               map_figure(r, "Survival time, " + m.design_name, map_quantity::survival),
               fmt::format("Survival time of each cell in orbits of {} (the span is {}); "
                           "analytic limits drawn where they fall inside the range.",
                           r.reference_body, format_significant(m.orbits, 4)),
               fmt::format("A {} of survival time over {}.", kind, varied));
    bool any_megno = false;
    for (double v : r.mean_megno) any_megno = any_megno || std::isfinite(v);
    if (any_megno)
        add_figure(out, figs, "map-megno",
                   map_figure(r, "Mean MEGNO, " + m.design_name, map_quantity::megno),
                   "Time-averaged MEGNO at the end of each cell's run: 2 for regular motion, "
                   "growing for chaotic motion.",
                   fmt::format("A {} of mean MEGNO over {}.", kind, varied));
    else
        figs.paragraph("No cell has a MEGNO value, so there is no MEGNO figure.");
    out.page_.section(figs);

    html_section axes("axes", "Axes");
    data_table t{"The varied fields (axis 0 varies slowest in the stored grids)",
                 {"axis", "field", "from", "to", "cells", "unit", "specification"},
                 {},
                 {}};
    for (std::size_t a = 0; a < r.axes.size(); ++a) {
        const map_axis& ax = r.axes[a];
        t.rows_.push_back({std::to_string(a), ax.body + "." + ax.field,
                           format_significant(ax.from, 6), format_significant(ax.to, 6),
                           std::to_string(ax.n), unit_words(ax.unit), ax.text});
    }
    axes.table(t);
    out.page_.section(axes);

    html_section outcomes("outcomes", "How the cells ended");
    std::map<int, std::size_t> counts;
    for (int code : r.first_event) ++counts[code];
    const auto names = legend_names(m.event_legend);
    data_table o{"Cells by first event", {"first event", "cells"}, {}, {}};
    for (const auto& [code, n] : counts) {
        const auto it = names.find(code);
        o.rows_.push_back(
            {it != names.end() ? it->second : fmt::format("code {}", code), std::to_string(n)});
    }
    outcomes.table(o);
    out.page_.section(outcomes);

    html_section ds("design", "The design");
    std::string list;
    for (const auto& b : m.bodies) list += (list.empty() ? "" : ", ") + b;
    ds.paragraph(fmt::format("Design '{}' as written before any field was varied: {} bodies: {}.",
                             m.design_name, m.bodies.size(), list));
    const map_references& ref = r.references;
    if (ref.moon) {
        std::vector<key_value> kv;
        kv.push_back({"moon", ref.body, "", ref.retrograde ? "retrograde" : "prograde"});
        auto row = [&](const std::string& what, double metres, const std::string& note) {
            const auto [v, u] = length(metres);
            kv.push_back({what, v, u, note});
        };
        row("Hill radius of its planet", ref.hill_radius_m, "at pericentre");
        if (ref.stability_m > 0)
            row("stability limit", ref.stability_m, "Domingos, Winter & Yokoyama (2006)");
        if (ref.roche_fluid_m > 0) row("fluid Roche limit", ref.roche_fluid_m, "");
        ds.key_values("Analytic references for the varied moon", kv);
    }
    out.page_.section(ds);

    html_section run("run", "The run");
    std::vector<key_value> kv;
    kv.push_back({"integrator", m.integrator, "", "MEGNO on in every cell"});
    kv.push_back({"span", format_significant(m.orbits, 4), "orbits",
                  fmt::format("of {}, period {}; {}", r.reference_body,
                              duration(r.reference_period_s), duration(r.span_s))});
    kv.push_back({"cells", std::to_string(r.cells()), "", ""});
    kv.push_back({"seed", std::to_string(m.seed), "", "drawn angles and MEGNO deviation"});
    kv.push_back({"worker threads", std::to_string(m.jobs), "", "results do not depend on it"});
    kv.push_back({"moonwright version", m.version, "", ""});
    kv.push_back({"result file", m.path, "", ""});
    run.key_values("Run settings and metadata", kv);
    out.page_.section(run);
    out.page_.footer(fmt::format("moonwright {} · map report of {} · design {} · seed {}",
                                 m.version, m.path, m.design_name, m.seed));
    return out;
}

} // namespace moonwright::report
