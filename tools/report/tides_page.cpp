// The report page of a `moonwright tides` result: reads the HDF5 layout of docs/tides.md, evolves
// the stored design again for the a(t) figure and lays out fates, figure and precession numbers.
#include "tools/report/tides_page.hpp"

#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"
#include "tools/report/tides_figure.hpp"

#include <cmath>
#include <fmt/format.h>
#include <variant>

namespace moonwright::report {

namespace {

namespace c = moonwright::constants;

[[noreturn]] void not_tides(const result_file& f, const std::string& what) {
    throw input_error(source_location{f.path()},
                      fmt::format("not a complete tides result: {}", what));
}

std::vector<std::string> split(const std::string& s, char sep) {
    std::vector<std::string> out;
    std::size_t at = 0;
    while (at <= s.size() && !s.empty()) {
        const std::size_t end = std::min(s.find(sep, at), s.size());
        out.push_back(s.substr(at, end - at));
        at = end + 1;
    }
    return out;
}

bool is_loss(const std::string& kind) {
    return kind == "roche_limit" || kind == "planet_surface" || kind == "stability_limit";
}

stored_tides read_contents(const result_file& f) {
    stored_tides t;
    t.path = f.path();
    if (!f.exists("/run") || !f.has_attribute("/run", "command"))
        not_tides(f, "/run@command is missing (was it written by moonwright?)");
    const std::string command = f.string_attribute("/run", "command");
    if (command != "tides") not_tides(f, "/run@command is '" + command + "', expected 'tides'");
    if (!f.exists("/design/text")) not_tides(f, "/design/text is missing");
    if (!f.exists("/tides")) not_tides(f, "/tides is missing");
    t.design_text = f.read_text("/design/text");
    t.version = f.string_attribute("/run", "version");
    t.options = f.string_attribute("/run", "options");
    const std::string seed = f.string_attribute("/run", "seed");
    try {
        t.seed = std::stoull(seed);
    } catch (const std::exception&) {
        not_tides(f, "/run@seed '" + seed + "' is not a whole number");
    }
    t.system = f.string_attribute("/tides", "system");
    t.model = f.string_attribute("/tides", "model");
    if (f.has_attribute("/tides", "span_s")) t.span_s = f.real_attribute("/tides", "span_s");
    if (f.has_attribute("/tides", "span_from"))
        t.span_from = f.string_attribute("/tides", "span_from");
    t.notes = f.string_attribute("/tides", "notes");

    if (!f.exists("/tides/fates")) not_tides(f, "/tides/fates is missing");
    for (const auto& rec : f.read_records("/tides/fates")) {
        if (rec.size() < 4) not_tides(f, "/tides/fates has fewer than 4 fields");
        const auto* body = std::get_if<std::string>(&rec[0]);
        const auto* kind = std::get_if<std::string>(&rec[1]);
        const auto* time = std::get_if<double>(&rec[2]);
        const auto* line = std::get_if<std::string>(&rec[3]);
        if (!body || !kind || !time || !line) not_tides(f, "/tides/fates has a malformed row");
        t.fates.push_back({*body, *kind, *time, *line});
    }

    if (f.exists("/tides/precession_constant")) {
        const auto names = split(f.string_attribute("/tides/precession_constant", "planets"), ',');
        auto col = [&](const char* p) {
            const std::vector<double> v = f.read_array(p);
            if (v.size() != names.size())
                not_tides(
                    f, fmt::format("{} holds {} values for {} planets", p, v.size(), names.size()));
            return v;
        };
        const auto a = col("/tides/precession_constant");
        const auto a0 = col("/tides/precession_constant_without_moons");
        const auto r = col("/tides/precession_rate");
        const auto r0 = col("/tides/precession_rate_without_moons");
        const auto ob = col("/tides/obliquity");
        for (std::size_t k = 0; k < names.size(); ++k)
            t.spin_axes.push_back({names[k], a[k], a0[k], r[k], r0[k], ob[k]});
    }

    // The figure needs the moons' limits, which the file does not hold: evolve again.
    try {
        const auto first = t.design_text.find_first_not_of(" \t\r\n");
        const bool json = first != std::string::npos && t.design_text[first] == '{';
        const design d =
            parse_design(t.design_text, json ? design_format::json : design_format::toml,
                         f.path() + ":/design/text");
        tidal_options opt;
        opt.model =
            t.model == "constant_time_lag" ? tide_model::constant_time_lag : tide_model::constant_q;
        if (t.span_s > 0) opt.span_s = t.span_s;
        if (f.exists("/tides/time")) {
            const std::size_t rows = f.read_array("/tides/time").size();
            if (rows >= 2) opt.samples = static_cast<int>(rows);
        }
        t.rerun = analyze_tides(resolve(d, t.seed), opt);
    } catch (const moonwright::error& e) {
        t.rerun_problem = e.what();
    }
    return t;
}

std::string arcsec_per_yr(double rad_s) {
    // rad/s to arcsec/yr: 1 rad = 180/pi deg, 1 deg = 3600 arcsec, Julian year.
    return format_significant(rad_s / c::deg * 3600.0 * c::year, 4);
}

verdict_banner banner(const stored_tides& t) {
    verdict_banner b;
    std::size_t lost = 0, moons = 0;
    for (const auto& fe : t.fates) {
        if (is_loss(fe.kind)) ++lost;
        if (is_loss(fe.kind) || fe.kind == "survives") ++moons;
        b.reasons_.push_back(fe.line);
    }
    const std::string span = t.span_s > 0 ? describe_duration(t.span_s) : std::string("the span");
    if (t.fates.empty()) {
        b.word_ = "no fates";
        b.summary_ = "No planet of this design could be evolved, so there are no fates.";
        b.tone_ = verdict_tone::neutral;
    } else if (lost > 0) {
        b.word_ = "moon lost";
        b.summary_ = fmt::format("{} of {} moon{} lost within {}.", lost, moons,
                                 moons == 1 ? " is" : "s are", span);
        b.tone_ = verdict_tone::bad;
    } else {
        b.word_ = "moons survive";
        b.summary_ = moons == 1  ? fmt::format("The moon survives {} of tides.", span)
                     : moons > 0 ? fmt::format("All {} moons survive {} of tides.", moons, span)
                                 : fmt::format("No moon is lost over {} of tides.", span);
        b.tone_ = verdict_tone::good;
    }
    return b;
}

} // namespace

stored_tides read_tides_result(const result_file& f) {
    try {
        return read_contents(f);
    } catch (const io_error& e) {
        throw input_error(source_location{f.path()},
                          std::string("cannot read the tides result: ") + e.what());
    }
}

report_page build_tides_page(const stored_tides& t) {
    report_page out;
    out.page_ = html_report("Tides report: " + t.system,
                            fmt::format("model {} · span {} · seed {}", t.model,
                                        t.span_s > 0 ? describe_duration(t.span_s) : "-", t.seed));
    out.page_.verdict(banner(t));

    html_section fig("evolution", "Semi-major axes over time");
    if (t.rerun) {
        add_figure(out, fig, "tides-a", tides_figure(*t.rerun),
                   "Each moon's semi-major axis against time with its inner limit and its "
                   "stability limit (Domingos, Winter & Yokoyama 2006). Drawn from the stored "
                   "design evolved again with the stored seed, model, span and sample count; "
                   "the fates below are the stored ones.",
                   "Log-log plot of each moon's semi-major axis in km against time in years.");
    } else {
        fig.paragraph("The stored design could not be evolved again, so there is no figure: " +
                      t.rerun_problem);
    }
    out.page_.section(fig);

    html_section fates("fates", "Fates and locks");
    data_table ft{"Every fate and lock, as stored", {"body", "fate", "when", "in words"}, {}, {}};
    for (const auto& fe : t.fates)
        ft.rows_.push_back({fe.body, fe.kind, describe_duration(fe.time_s), fe.line});
    if (ft.rows_.empty())
        fates.paragraph("The file holds no fate.");
    else
        fates.table(ft);
    if (!t.notes.empty()) fates.paragraph("Left out: " + t.notes);
    out.page_.section(fates);

    html_section prec("precession", "Spin-axis precession");
    if (t.spin_axes.empty()) {
        prec.paragraph("No planet has both a rotation period and J2 > 0, so there is no "
                       "precession constant.");
    } else {
        data_table pt{"Precession of each planet's spin axis",
                      {"planet", "alpha with moons", "alpha star alone", "rate with moons",
                       "rate star alone", "obliquity"},
                      {"", "arcsec/yr", "arcsec/yr", "arcsec/yr", "arcsec/yr", "deg"},
                      {}};
        for (const auto& s : t.spin_axes)
            pt.rows_.push_back({s.planet, arcsec_per_yr(s.alpha_rad_s),
                                arcsec_per_yr(s.alpha_no_moons_rad_s), arcsec_per_yr(s.rate_rad_s),
                                arcsec_per_yr(s.rate_no_moons_rad_s),
                                format_significant(s.obliquity_rad / c::deg, 4)});
        prec.table(pt);
    }
    out.page_.section(prec);

    html_section run("run", "The run");
    run.key_values("Run settings and metadata",
                   {{"model", t.model, "", ""},
                    {"span", t.span_s > 0 ? format_significant(t.span_s / c::year, 4) : "-", "yr",
                     t.span_from},
                    {"options", t.options, "", ""},
                    {"seed", std::to_string(t.seed), "", ""},
                    {"moonwright version", t.version, "", ""},
                    {"result file", t.path, "", ""}});
    out.page_.section(run);
    out.page_.footer(fmt::format("moonwright {} · tides report of {} · system {} · seed {}",
                                 t.version, t.path, t.system, t.seed));
    return out;
}

} // namespace moonwright::report
