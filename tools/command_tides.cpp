// `moonwright tides`: the long-term tidal fate of a design, as text, JSON, HDF5 and a figure.
#include "engine/design_loader.hpp"
#include "engine/resolved_system.hpp"
#include "engine/tides_report.hpp"
#include "engine/tides_result.hpp"
#include "engine/units.hpp"
#include "tools/commands.hpp"
#include "tools/report/tides_figure.hpp"

#include <cstdio>
#include <fmt/format.h>

namespace moonwright::cli {

namespace {

const source_location command_line{"command line", 0, 0};

/// The --span option: a time quantity, a bare number in Gyr, > 0.
double parse_span(const std::string& text) {
    const std::string expected =
        "a positive time such as 2Gyr, 500 Myr or 1e8 yr (a bare number is in Gyr)";
    quantity q;
    try {
        q = parse_quantity(text, dimension::time, "Gyr");
    } catch (const quantity_error&) {
        throw input_error(command_line, "--span", "\"" + text + "\"", expected);
    }
    if (!(q.value > 0)) throw input_error(command_line, "--span", "\"" + text + "\"", expected);
    return q.value;
}

/// Where a body was written, for messages (the design file, or just its name).
source_location body_place(const design& d, const std::string& name) {
    const auto it = d.where.find(body_field(name, ""));
    if (it != d.where.end()) return it->second;
    return {d.source_name, 0, 0};
}

/// The tidal model needs a spinning planet (and a time lag for the lag model): say what to
/// write before any evolution runs.
void require_tidal_data(const design& d, const resolved_system& sys, tide_model model) {
    const resolved_body* first_planet = nullptr;
    bool any_spin = false;
    for (const auto& b : sys.bodies) {
        if (b.kind != body_kind::planet) continue;
        if (!first_planet) first_planet = &b;
        const bool spins = b.rotation_period_s && *b.rotation_period_s != 0;
        any_spin = any_spin || spins;
        if (spins && model == tide_model::constant_time_lag && !(b.time_lag_s && *b.time_lag_s > 0))
            throw input_error(body_place(d, b.name), body_field(b.name, "time_lag"), "nothing",
                              fmt::format("a time lag for --model lag: write time_lag = \"600 s\" "
                                          "(in place of Q) in the [[body]] table of '{}', or use "
                                          "--model q",
                                          b.name));
    }
    if (!first_planet)
        throw input_error({d.source_name, 0, 0}, "body", "no planet",
                          "a planet orbiting the star: the tidal evolution follows a planet, its "
                          "spin and its moons");
    if (!any_spin)
        throw input_error(body_place(d, first_planet->name),
                          body_field(first_planet->name, "rotation_period"), "nothing",
                          fmt::format("a rotation period for the tidal evolution: write "
                                      "rotation_period = \"24 h\" (the planet's sidereal day) in "
                                      "the [[body]] table of '{}'",
                                      first_planet->name));
}

} // namespace

int command_tides(const tides_options& o) {
    tidal_options opt;
    std::string options_text = "--model " + o.model;
    if (o.span) {
        opt.span_s = parse_span(*o.span);
        options_text += " --span " + *o.span;
    }
    if (o.samples < 2 || o.samples > 1'000'000)
        throw input_error(command_line, "--samples", std::to_string(o.samples),
                          "2 to 1,000,000 rows for the time series");
    opt.samples = o.samples;
    options_text += " --samples " + std::to_string(o.samples);
    opt.model = o.model == "lag" ? tide_model::constant_time_lag : tide_model::constant_q;

    const design d = read_design(o.design_path, o.stdin_format);
    const resolved_system sys = resolve(d, o.seed);
    require_tidal_data(d, sys, opt.model);
    const tides_report r = analyze_tides(sys, opt);

    // Files first, so that exit 4 means nothing was reported as done.
    if (o.out_path) {
        if (o.plot_path && *o.plot_path == *o.out_path)
            throw input_error(command_line, "--plot", *o.plot_path,
                              "a file name other than the --out file");
        write_tides_file(*o.out_path, r, {d.source_text, o.version, sys.seed, options_text});
    }
    // Each file is either complete or absent; a failure of the second leaves the first.
    // write_figure draws into a temporary file beside the target and renames it when complete.
    if (o.plot_path)
        report::write_figure(report::tides_figure(r),
                             {*o.plot_path, report::figure_format::png, 1000, 700});
    const std::string out = o.json ? render_tides_json(r) + "\n" : render_tides_text(r);
    std::fwrite(out.data(), 1, out.size(), stdout);
    return static_cast<int>(exit_code::ok);
}

} // namespace moonwright::cli
