// HDF5 layout of a tides run (documented in docs/tides.md), written through a partial file.
#include "engine/tides_result.hpp"

#include "engine/error.hpp"
#include "engine/result_file.hpp"

#include <algorithm>
#include <cstdint>
#include <filesystem>
#include <limits>
#include <string>
#include <vector>

namespace moonwright {

namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();

std::string joined(const std::vector<std::string>& names) {
    std::string out;
    for (const auto& n : names) out += (out.empty() ? "" : ",") + n;
    return out;
}

const char* model_key(tide_model m) {
    return m == tide_model::constant_q ? "constant_q" : "constant_time_lag";
}
const char* span_key(span_rule s) {
    switch (s) {
    case span_rule::given:
        return "given";
    case span_rule::star_age:
        return "star_age";
    case span_rule::main_sequence_lifetime:
        return "main_sequence_lifetime";
    }
    return "given";
}

void write_series(result_file& f, const tides_report& r) {
    // Every planet is sampled on the same grid (same span, same sample count); a run that
    // stopped early has fewer rows, padded here with NaN.
    const tidal_evolution* longest = &r.evolutions.front();
    for (const auto& ev : r.evolutions)
        if (ev.series.size() > longest->series.size()) longest = &ev;
    const std::size_t rows = longest->series.size();
    std::vector<double> t;
    for (const auto& row : longest->series) t.push_back(row.t_s);
    f.write_array("/tides/time", t, {rows}, "s", "time since the start of the tidal evolution");

    const std::size_t np = r.evolutions.size();
    std::vector<std::string> planets, moons, moon_planets;
    std::vector<double> spin(rows * np, nan);
    std::size_t nm = 0;
    for (const auto& ev : r.evolutions) nm += ev.moons.size();
    std::vector<double> a(rows * nm, nan), e(rows * nm, nan);
    std::size_t col = 0;
    for (std::size_t p = 0; p < np; ++p) {
        const auto& ev = r.evolutions[p];
        planets.push_back(ev.planet_name);
        for (std::size_t k = 0; k < ev.series.size() && k < rows; ++k) {
            const auto& row = ev.series[k];
            spin[k * np + p] = row.planet_spin_period_s;
            for (std::size_t i = 0; i < ev.moons.size(); ++i) {
                a[k * nm + col + i] = row.a_m[i];
                e[k * nm + col + i] = row.e[i];
            }
        }
        for (const auto& m : ev.moons) {
            moons.push_back(m.name);
            moon_planets.push_back(ev.planet_name);
        }
        col += ev.moons.size();
    }
    f.write_array("/tides/planet_spin_period", spin, {rows, np}, "s",
                  "sidereal rotation period of each planet (column), negative for retrograde "
                  "spin, NaN after an early stop");
    f.set_attribute("/tides/planet_spin_period", "columns", joined(planets));
    if (nm == 0) return;
    f.write_array("/tides/moon_a", a, {rows, nm}, "m",
                  "semi-major axis of each moon (column) around its planet, NaN once lost");
    f.set_attribute("/tides/moon_a", "columns", joined(moons));
    f.set_attribute("/tides/moon_a", "planets", joined(moon_planets));
    f.write_array("/tides/moon_e", e, {rows, nm}, "1",
                  "eccentricity of each moon (column) around its planet, NaN once lost");
    f.set_attribute("/tides/moon_e", "columns", joined(moons));
    f.set_attribute("/tides/moon_e", "planets", joined(moon_planets));
}

void write_fates(result_file& f, const tides_report& r) {
    const std::vector<record_field> fields = {
        {"body", record_field::type::text, "", 64},
        {"fate", record_field::type::text, "", 32},
        {"time", record_field::type::real, "s", 0},
        {"detail", record_field::type::text, "", 240},
    };
    f.create_record_table("/tides/fates", fields,
                          "every fate and lock: body, kind (survives, roche_limit, "
                          "planet_surface, stability_limit, double_synchronous_lock, lock_broken, "
                          "star_lock, stopped_early, obliquity_resonance), time since the start "
                          "and the plain-words line");
    for (const auto& ev : tides_fate_events(r))
        f.append_record("/tides/fates", {ev.body, ev.kind, ev.time_s, ev.line});
}

void write_spin_axes(result_file& f, const tides_report& r) {
    if (r.secular) {
        f.write_array("/tides/secular_g", r.secular->g_rad_s, {r.secular->g_rad_s.size()}, "rad/s",
                      "Laplace-Lagrange apsidal eigenfrequencies g of the star's planets "
                      "(Murray & Dermott 1999, Sec. 7.2-7.4), ascending");
        f.write_array("/tides/secular_f", r.secular->f_rad_s, {r.secular->f_rad_s.size()}, "rad/s",
                      "Laplace-Lagrange nodal eigenfrequencies f of the star's planets "
                      "(Murray & Dermott 1999, Sec. 7.2-7.4), ascending, one is zero");
        f.set_attribute("/tides/secular_g", "planets", joined(r.secular_planets));
        f.set_attribute("/tides/secular_f", "planets", joined(r.secular_planets));
    }
    if (r.spin_axes.empty()) return;
    std::vector<std::string> names;
    std::vector<double> alpha, alpha0, rate, rate0, obliquity;
    for (const auto& ax : r.spin_axes) {
        names.push_back(ax.planet_name);
        alpha.push_back(ax.precession.alpha_rad_s);
        alpha0.push_back(ax.precession.alpha_no_moons_rad_s);
        rate.push_back(ax.precession.rate_rad_s);
        rate0.push_back(ax.precession.rate_no_moons_rad_s);
        obliquity.push_back(ax.obliquity_rad);
    }
    const std::size_t n = names.size();
    f.write_array("/tides/precession_constant", alpha, {n}, "rad/s",
                  "precession constant of each planet's spin axis with its moons (Kinoshita "
                  "1977 form; docs/tides.md)");
    f.write_array("/tides/precession_constant_without_moons", alpha0, {n}, "rad/s",
                  "precession constant of each planet's spin axis from the star alone");
    f.write_array("/tides/precession_rate", rate, {n}, "rad/s",
                  "precession rate of each planet's spin axis, alpha cos(obliquity), with moons");
    f.write_array("/tides/precession_rate_without_moons", rate0, {n}, "rad/s",
                  "precession rate of each planet's spin axis from the star alone");
    f.write_array("/tides/obliquity", obliquity, {n}, "rad",
                  "obliquity used for each planet (0 when the design gives none)");
    for (const char* p :
         {"/tides/precession_constant", "/tides/precession_constant_without_moons",
          "/tides/precession_rate", "/tides/precession_rate_without_moons", "/tides/obliquity"})
        f.set_attribute(p, "planets", joined(names));
}

void write_all(const std::string& path, const tides_report& r, const tides_run_info& info) {
    result_file f(path, result_file::mode::create);
    f.write_text("/design/text", info.design_text, "the design file as given");
    f.create_group("/run");
    f.set_attribute("/run", "command", std::string("tides"));
    f.set_attribute("/run", "version", info.version);
    // Seeds are unsigned 64-bit: kept exact as decimal text.
    f.set_attribute("/run", "seed", std::to_string(info.seed));
    f.set_attribute("/run", "options", info.command_line);
    f.create_group("/tides");
    f.set_attribute("/tides", "system", r.system_name);
    f.set_attribute("/tides", "model", std::string(model_key(r.model)));
    if (!r.evolutions.empty()) {
        const auto& ev = r.evolutions.front();
        f.set_attribute("/tides", "span_s", ev.span_s);
        f.set_attribute("/tides", "span_from", std::string(span_key(ev.span_from)));
        write_series(f, r);
    }
    std::string notes;
    for (const auto& n : r.skipped) notes += (notes.empty() ? "" : "\n") + n;
    f.set_attribute("/tides", "notes", notes);
    write_fates(f, r);
    write_spin_axes(f, r);
    f.flush();
}

} // namespace

void write_tides_file(const std::string& path, const tides_report& r, const tides_run_info& info) {
    const std::string partial = path + ".partial";
    try {
        write_all(partial, r, info); // the file is closed when write_all returns
    } catch (...) {
        std::error_code ec;
        std::filesystem::remove(partial, ec);
        throw;
    }
    std::error_code ec;
    std::filesystem::rename(partial, path, ec);
    if (ec) {
        std::filesystem::remove(partial, ec);
        throw io_error("cannot write result file '" + path + "': " + ec.message());
    }
}

} // namespace moonwright
