// Builds the tides report from a resolved design and renders it as text and JSON.
#include "engine/tides_report.hpp"

#include "engine/constants.hpp"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <cmath>

namespace moonwright {

namespace {

namespace c = constants;
constexpr double arcsec_per_rad = 180.0 * 3600.0 / c::pi;

double arcsec_per_yr(double rad_s) {
    return rad_s * arcsec_per_rad * c::year + 0.0;
}

std::string km(double m) {
    // Thousands separated by commas: "384,400 km".
    const auto v = static_cast<long long>(std::llround(m / 1e3));
    std::string digits = std::to_string(v < 0 ? -v : v), out;
    for (size_t k = 0; k < digits.size(); ++k) {
        if (k > 0 && (digits.size() - k) % 3 == 0) out += ',';
        out += digits[k];
    }
    return (v < 0 ? "-" : "") + out + " km";
}

std::string period_words(double s) {
    if (!std::isfinite(s)) return "no rotation";
    const double a = std::abs(s);
    std::string v =
        a < 2 * c::day ? fmt::format("{:.3g} h", a / c::hour) : fmt::format("{:.3g} d", a / c::day);
    return s < 0 ? v + " (retrograde)" : v;
}

const char* model_name(tide_model m) {
    return m == tide_model::constant_q ? "constant Q" : "constant time lag";
}
const char* span_name(span_rule r) {
    switch (r) {
    case span_rule::given:
        return "given";
    case span_rule::star_age:
        return "the star's age";
    case span_rule::main_sequence_lifetime:
        return "the star's main-sequence lifetime";
    }
    return "";
}

nlohmann::ordered_json num_or_null(double v) {
    return std::isfinite(v) ? nlohmann::ordered_json(v) : nlohmann::ordered_json(nullptr);
}

} // namespace

std::string describe_duration(double s) {
    const double yr = s / c::year;
    if (std::abs(yr) < 1e3) return fmt::format("{:.3g} yr", yr);
    if (std::abs(yr) < 1e6) return fmt::format("{:.3g} kyr", yr / 1e3);
    if (std::abs(yr) < 1e9) return fmt::format("{:.3g} Myr", yr / 1e6);
    return fmt::format("{:.3g} Gyr", yr / 1e9);
}

tides_report analyze_tides(const resolved_system& sys, const tidal_options& opt) {
    tides_report r;
    r.system_name = sys.name;
    r.model = opt.model;
    const auto& b = sys.bodies;
    // Secular frequencies of each star's planets (one star in a design).
    for (const auto& body : b) {
        if (body.kind != body_kind::star) continue;
        std::vector<secular_planet> sp;
        for (int ci : body.children) {
            if (!b[ci].orbit) continue;
            sp.push_back({b[ci].name, b[ci].mass_kg, b[ci].orbit->a_m, {}});
            r.secular_planets.push_back(b[ci].name);
        }
        if (!sp.empty()) r.secular = laplace_lagrange(body.mass_kg, sp);
        break;
    }
    for (size_t k = 0; k < b.size(); ++k) {
        const auto& pl = b[k];
        if (pl.kind != body_kind::planet) continue;
        if (!pl.rotation_period_s || *pl.rotation_period_s == 0) {
            r.skipped.push_back("planet '" + pl.name +
                                "' has no rotation period: no tidal evolution or precession");
            continue;
        }
        tidal_evolution ev = evolve_tides(sys, static_cast<int>(k), opt);
        if (pl.j2 > 0 && pl.parent >= 0 && pl.orbit) {
            planet_spin_axis ax;
            ax.planet_name = pl.name;
            ax.planet_index = static_cast<int>(k);
            ax.obliquity_assumed = !pl.obliquity_rad;
            ax.obliquity_rad = pl.obliquity_rad.value_or(0.0);
            ax.moment_of_inertia_factor = ev.moment_of_inertia_factor;
            std::vector<precession_moon> pm;
            for (int ci : pl.children)
                if (b[ci].orbit)
                    pm.push_back({b[ci].name, b[ci].mass_kg, b[ci].orbit->a_m, b[ci].orbit->e,
                                  b[ci].orbit->i_rad});
            ax.precession = precession_constant(c::two_pi / *pl.rotation_period_s, pl.j2,
                                                ev.moment_of_inertia_factor, pl.mass_kg,
                                                pl.radius_m, ax.obliquity_rad, b[pl.parent].mass_kg,
                                                pl.orbit->a_m, pl.orbit->e, pm);
            if (r.secular)
                ax.warnings = obliquity_resonances(ax.precession, *r.secular, r.resonance_fraction);
            r.spin_axes.push_back(std::move(ax));
        } else {
            r.skipped.push_back("planet '" + pl.name +
                                "' has no J2: no spin-axis precession computed");
        }
        r.evolutions.push_back(std::move(ev));
    }
    return r;
}

std::vector<tidal_fate_event> tides_fate_events(const tides_report& r) {
    std::vector<tidal_fate_event> out;
    auto add = [&](const std::string& body, const char* kind, double t, std::string line) {
        out.push_back({body, kind, t, std::move(line)});
    };
    for (const auto& ev : r.evolutions) {
        const std::string span = describe_duration(ev.span_s);
        for (const auto& m : ev.moons) {
            if (m.double_sync_time_s)
                add(m.name, "double_synchronous_lock", *m.double_sync_time_s,
                    fmt::format("planet '{}' and moon '{}' reach double synchronous lock in {} "
                                "(day = month = {})",
                                ev.planet_name, m.name, describe_duration(*m.double_sync_time_s),
                                period_words(m.double_sync_period_s)));
            if (m.lock_broken_time_s)
                add(m.name, "lock_broken", *m.lock_broken_time_s,
                    fmt::format("the lock of planet '{}' to moon '{}' breaks after {}",
                                ev.planet_name, m.name, describe_duration(*m.lock_broken_time_s)));
            switch (m.fate) {
            case moon_fate::roche_limit: {
                const char* kind = m.inner_limit_is_surface ? "planet_surface" : "roche_limit";
                if (*m.fate_time_s == 0) {
                    add(m.name, kind, 0.0,
                        fmt::format("moon '{}' starts inside {} ({}): it cannot exist there",
                                    m.name,
                                    m.inner_limit_is_surface ? "its planet" : "the Roche limit",
                                    km(m.inner_limit_m)));
                    break;
                }
                add(m.name, kind, *m.fate_time_s,
                    fmt::format("moon '{}' reaches {} ({}) in {}", m.name,
                                m.inner_limit_is_surface
                                    ? "the surface of its planet"
                                    : (m.roche_is_fluid ? "the fluid Roche limit"
                                                        : "the rigid Roche limit"),
                                km(m.inner_limit_m), describe_duration(*m.fate_time_s)));
                break;
            }
            case moon_fate::stability_limit:
                if (*m.fate_time_s == 0) {
                    add(m.name, "stability_limit", 0.0,
                        fmt::format("moon '{}' starts beyond the stability limit ({})", m.name,
                                    km(m.stability_limit_m)));
                    break;
                }
                add(m.name, "stability_limit", *m.fate_time_s,
                    fmt::format(
                        "moon '{}' migrates past the stability limit ({}) in {} and is lost",
                        m.name, km(m.stability_limit_m), describe_duration(*m.fate_time_s)));
                break;
            case moon_fate::survives:
                add(m.name, "survives", ev.t_end_s,
                    fmt::format("moon '{}' survives the {} span: a goes from {} to {}", m.name,
                                span, km(m.a0_m), km(m.a_end_m)));
                break;
            }
        }
        if (ev.star_lock_time_s)
            add(ev.planet_name, "star_lock", *ev.star_lock_time_s,
                fmt::format("the day of planet '{}' becomes as long as its year in {}",
                            ev.planet_name, describe_duration(*ev.star_lock_time_s)));
        if (ev.stopped_early)
            add(ev.planet_name, "stopped_early", ev.t_end_s,
                fmt::format("the tidal run of planet '{}' stopped early at {}", ev.planet_name,
                            describe_duration(ev.t_end_s)));
    }
    for (const auto& ax : r.spin_axes)
        for (const auto& w : ax.warnings)
            add(ax.planet_name, "obliquity_resonance", 0.0,
                fmt::format("the spin axis of planet '{}' precesses at {:.3g}\"/yr{}, within "
                            "{:.0f}% of the nodal frequency f{} = {:.3g}\"/yr: its obliquity may "
                            "be chaotic",
                            ax.planet_name, arcsec_per_yr(w.precession_rad_s),
                            w.with_moons ? "" : " without its moons", 100 * w.relative_gap,
                            w.mode + 1, arcsec_per_yr(w.nodal_rad_s)));
    return out;
}

std::vector<std::string> tides_fate_lines(const tides_report& r) {
    std::vector<std::string> out;
    for (auto& e : tides_fate_events(r)) out.push_back(std::move(e.line));
    return out;
}

std::string render_tides_text(const tides_report& r, int max_rows) {
    std::string s =
        fmt::format("Tidal fate of '{}' ({} tides)\n", r.system_name, model_name(r.model));
    for (const auto& ev : r.evolutions) {
        s += fmt::format("\nplanet '{}' around '{}': span {} ({}){}\n", ev.planet_name,
                         ev.star_name, describe_duration(ev.span_s), span_name(ev.span_from),
                         ev.stopped_early ? ", stopped early at " + describe_duration(ev.t_end_s)
                                          : "");
        s += fmt::format("  tides: k2 = {:.3g}, Q = {:.3g}{}; C/(M R^2) = {:.4g}\n",
                         ev.planet_tides.k2, ev.planet_tides.q,
                         ev.model == tide_model::constant_time_lag
                             ? fmt::format(", time lag = {:.3g} s", ev.planet_tides.time_lag_s)
                             : "",
                         ev.moment_of_inertia_factor);
        s += fmt::format("  day: {} at the start, {} at the end; dOmega/dt = {:.3g} rad/s^2\n",
                         period_words(ev.spin_period0_s), period_words(ev.spin_period_end_s),
                         ev.initial_spin_rate_change_rad_s2);
        for (const auto& m : ev.moons) {
            s += fmt::format("  moon '{}': m = {:.4g} kg, a = {}, e = {:.4g}{}\n", m.name,
                             m.mass_kg, km(m.a0_m), m.e0, m.retrograde ? ", retrograde" : "");
            s += fmt::format("    da/dt = {:.3g} cm/yr, de/dt = {:.3g} per Gyr now\n",
                             m.initial_da_dt_m_s * 100 * c::year, m.initial_de_dt_per_s * c::Gyr);
            s += fmt::format("    inner limit {} ({}), synchronous orbit {}, stability limit {}\n",
                             km(m.inner_limit_m),
                             m.inner_limit_is_surface
                                 ? "planet's surface"
                                 : (m.roche_is_fluid ? "fluid Roche" : "rigid Roche"),
                             km(m.synchronous_orbit_m), km(m.stability_limit_m));
            s += fmt::format("    its own spin locks in {} from a {} day (Gladman et al. 1996{})\n",
                             describe_duration(m.despin_time_s),
                             period_words(m.initial_spin_period_s),
                             m.initial_spin_assumed ? "; initial day assumed" : "");
        }
        if (ev.max_moon_mass_kg)
            s += fmt::format(
                "  largest moon kept for {} (Barnes & O'Brien 2002, f = {:.3g}): {:.3g} kg = "
                "{:.3g} Earth masses\n",
                describe_duration(ev.span_s), ev.max_moon_mass_f, *ev.max_moon_mass_kg,
                *ev.max_moon_mass_kg / c::M_earth);
        if (max_rows > 0 && !ev.series.empty()) {
            s += "  time series (t, day, then a and e of each moon):\n";
            const size_t n = ev.series.size();
            const size_t stride = std::max<size_t>(1, (n + static_cast<size_t>(max_rows) - 1) /
                                                          static_cast<size_t>(max_rows));
            for (size_t k = 0; k < n; k += stride) {
                const auto& row = ev.series[k];
                s += fmt::format("    {:>10}  {:>12}", describe_duration(row.t_s),
                                 period_words(row.planet_spin_period_s));
                for (size_t i = 0; i < row.a_m.size(); ++i)
                    s += std::isfinite(row.a_m[i])
                             ? fmt::format("  {:>14} e={:.3g}", km(row.a_m[i]), row.e[i])
                             : fmt::format("  {:>14}", "lost");
                s += "\n";
            }
        }
        for (const auto& note : ev.notes) s += "  assumed: " + note + "\n";
    }
    if (r.secular) {
        s += "\nsecular frequencies (Laplace-Lagrange):";
        for (double g : r.secular->g_rad_s) s += fmt::format(" g = {:.4g}\"/yr", arcsec_per_yr(g));
        s += ";";
        for (double f : r.secular->f_rad_s) s += fmt::format(" f = {:.4g}\"/yr", arcsec_per_yr(f));
        s += "\n";
    }
    for (const auto& ax : r.spin_axes) {
        const auto& p = ax.precession;
        s += fmt::format(
            "spin axis of '{}': obliquity {:.4g} deg{}; precession constant {:.4g}\"/yr ({:.4g}"
            "\"/yr without moons); precession rate {:.4g}\"/yr, period {:.4g} kyr\n",
            ax.planet_name, ax.obliquity_rad / c::deg, ax.obliquity_assumed ? " (assumed)" : "",
            arcsec_per_yr(p.alpha_rad_s), arcsec_per_yr(p.alpha_no_moons_rad_s),
            arcsec_per_yr(p.rate_rad_s),
            p.rate_rad_s > 0 ? c::two_pi / p.rate_rad_s / c::year / 1e3 : 0.0);
    }
    s += "\nfates:\n";
    for (const auto& line : tides_fate_lines(r)) s += "  " + line + "\n";
    for (const auto& line : r.skipped) s += "  note: " + line + "\n";
    return s;
}

std::string render_tides_json(const tides_report& r, bool with_series) {
    using json = nlohmann::ordered_json;
    json j;
    j["system"] = r.system_name;
    j["tide_model"] = r.model == tide_model::constant_q ? "constant_q" : "constant_time_lag";
    j["planets"] = json::array();
    for (const auto& ev : r.evolutions) {
        json p;
        p["name"] = ev.planet_name;
        p["star"] = ev.star_name;
        p["span_s"] = ev.span_s;
        p["span_from"] = ev.span_from == span_rule::given      ? "given"
                         : ev.span_from == span_rule::star_age ? "star_age"
                                                               : "main_sequence_lifetime";
        p["t_end_s"] = ev.t_end_s;
        p["stopped_early"] = ev.stopped_early;
        p["steps"] = ev.steps;
        p["k2"] = ev.planet_tides.k2;
        p["tidal_q"] = ev.planet_tides.q;
        p["time_lag_s"] = ev.planet_tides.time_lag_s;
        p["moment_of_inertia_factor"] = ev.moment_of_inertia_factor;
        p["spin_period_start_s"] = num_or_null(ev.spin_period0_s);
        p["spin_period_end_s"] = num_or_null(ev.spin_period_end_s);
        p["spin_rate_change_start_rad_s2"] = ev.initial_spin_rate_change_rad_s2;
        p["star_lock_time_s"] = ev.star_lock_time_s ? json(*ev.star_lock_time_s) : json(nullptr);
        p["max_moon_mass_kg"] = ev.max_moon_mass_kg ? json(*ev.max_moon_mass_kg) : json(nullptr);
        p["max_moon_mass_hill_fraction"] = ev.max_moon_mass_f;
        p["moons"] = json::array();
        for (const auto& m : ev.moons) {
            json mj;
            mj["name"] = m.name;
            mj["mass_kg"] = m.mass_kg;
            mj["retrograde"] = m.retrograde;
            mj["k2"] = m.tides.k2;
            mj["tidal_q"] = m.tides.q;
            mj["a_start_m"] = m.a0_m;
            mj["e_start"] = m.e0;
            mj["a_end_m"] = num_or_null(m.a_end_m);
            mj["e_end"] = num_or_null(m.e_end);
            mj["da_dt_start_m_s"] = m.initial_da_dt_m_s;
            mj["de_dt_start_per_s"] = m.initial_de_dt_per_s;
            mj["inner_limit_m"] = m.inner_limit_m;
            mj["inner_limit"] = m.inner_limit_is_surface
                                    ? "planet_surface"
                                    : (m.roche_is_fluid ? "fluid_roche" : "rigid_roche");
            mj["synchronous_orbit_m"] = m.synchronous_orbit_m;
            mj["stability_limit_m"] = m.stability_limit_m;
            mj["fate"] = m.fate == moon_fate::survives      ? "survives"
                         : m.fate == moon_fate::roche_limit ? "roche_limit"
                                                            : "stability_limit";
            mj["fate_time_s"] = m.fate_time_s ? json(*m.fate_time_s) : json(nullptr);
            mj["double_sync_time_s"] =
                m.double_sync_time_s ? json(*m.double_sync_time_s) : json(nullptr);
            mj["double_sync_period_s"] =
                m.double_sync_time_s ? json(m.double_sync_period_s) : json(nullptr);
            mj["despin_time_s"] = m.despin_time_s;
            p["moons"].push_back(mj);
        }
        p["assumptions"] = ev.notes;
        if (with_series) {
            json t = json::array(), day = json::array();
            std::vector<json> a(ev.moons.size(), json::array()), e(ev.moons.size(), json::array());
            for (const auto& row : ev.series) {
                t.push_back(row.t_s);
                day.push_back(num_or_null(row.planet_spin_period_s));
                for (size_t i = 0; i < ev.moons.size(); ++i) {
                    a[i].push_back(num_or_null(row.a_m[i]));
                    e[i].push_back(num_or_null(row.e[i]));
                }
            }
            json ser;
            ser["t_s"] = t;
            ser["spin_period_s"] = day;
            ser["moons"] = json::array();
            for (size_t i = 0; i < ev.moons.size(); ++i)
                ser["moons"].push_back({{"name", ev.moons[i].name}, {"a_m", a[i]}, {"e", e[i]}});
            p["series"] = ser;
        }
        j["planets"].push_back(p);
    }
    if (r.secular) {
        json s;
        s["planets"] = r.secular_planets;
        json g = json::array(), f = json::array();
        for (double v : r.secular->g_rad_s) g.push_back(arcsec_per_yr(v));
        for (double v : r.secular->f_rad_s) f.push_back(arcsec_per_yr(v));
        s["g_arcsec_per_yr"] = g;
        s["f_arcsec_per_yr"] = f;
        j["secular_frequencies"] = s;
    }
    j["spin_axes"] = json::array();
    for (const auto& ax : r.spin_axes) {
        json a;
        a["planet"] = ax.planet_name;
        a["obliquity_deg"] = ax.obliquity_rad / c::deg;
        a["obliquity_assumed"] = ax.obliquity_assumed;
        a["precession_constant_arcsec_per_yr"] = arcsec_per_yr(ax.precession.alpha_rad_s);
        a["precession_constant_without_moons_arcsec_per_yr"] =
            arcsec_per_yr(ax.precession.alpha_no_moons_rad_s);
        a["precession_rate_arcsec_per_yr"] = arcsec_per_yr(ax.precession.rate_rad_s);
        a["precession_rate_without_moons_arcsec_per_yr"] =
            arcsec_per_yr(ax.precession.rate_no_moons_rad_s);
        a["laplace_radius_m"] = ax.precession.laplace_radius_m;
        a["resonance_warnings"] = json::array();
        for (const auto& w : ax.warnings)
            a["resonance_warnings"].push_back(
                {{"mode", w.mode + 1},
                 {"nodal_frequency_arcsec_per_yr", arcsec_per_yr(w.nodal_rad_s)},
                 {"precession_rate_arcsec_per_yr", arcsec_per_yr(w.precession_rad_s)},
                 {"relative_gap", w.relative_gap},
                 {"with_moons", w.with_moons}});
        j["spin_axes"].push_back(a);
    }
    j["resonance_fraction"] = r.resonance_fraction;
    j["fates"] = tides_fate_lines(r);
    j["notes"] = r.skipped;
    return j.dump(2);
}

} // namespace moonwright
