// Builds the tides figure from a tides report: plain data for time_series(), no PLplot here.
#include "tools/report/tides_figure.hpp"

#include "engine/constants.hpp"

#include <cmath>
#include <fmt/format.h>
#include <limits>

namespace moonwright::report {

namespace {

namespace c = constants;

/// Adds a horizontal line unless one within 0.5 % of it is there already (log axis: only
/// positive values can be drawn).
void add_limit(series_panel& panel, double km, const std::string& label) {
    if (!(km > 0) || !std::isfinite(km)) return;
    for (const auto& o : panel.overlays_)
        if (std::abs(o.value_ / km - 1.0) < 0.005) return;
    panel.overlays_.push_back(overlay_curve::horizontal(km, label));
}

} // namespace

figure tides_figure(const tides_report& r) {
    time_series_data d;
    d.title_ = fmt::format("Tidal evolution of {} ({} tides)", r.system_name,
                           r.model == tide_model::constant_q ? "constant Q" : "constant time lag");
    d.x_label_ = "t (yr)";
    d.log_x_ = true;
    if (r.evolutions.empty()) return d;

    // All planets share one sample grid; the longest series gives the time axis.
    const tidal_evolution* longest = &r.evolutions.front();
    for (const auto& ev : r.evolutions)
        if (ev.series.size() > longest->series.size()) longest = &ev;
    std::vector<std::size_t> rows; // rows with t > 0
    for (std::size_t k = 0; k < longest->series.size(); ++k)
        if (longest->series[k].t_s > 0) {
            rows.push_back(k);
            d.t_.push_back(longest->series[k].t_s / c::year);
        }
    const double nan = std::numeric_limits<double>::quiet_NaN();

    bool any_moons = false;
    for (const auto& ev : r.evolutions) {
        if (ev.moons.empty()) continue;
        any_moons = true;
        series_panel panel;
        panel.y_label_ = fmt::format("a around {} (km)", ev.planet_name);
        panel.log_y_ = true;
        for (std::size_t i = 0; i < ev.moons.size(); ++i) {
            const auto& m = ev.moons[i];
            series s;
            s.label_ = m.name;
            for (std::size_t k : rows)
                s.y_.push_back(k < ev.series.size() ? ev.series[k].a_m[i] / 1e3 : nan);
            panel.series_.push_back(std::move(s));
        }
        for (const auto& m : ev.moons) {
            const char* inner = m.inner_limit_is_surface ? "surface"
                                                         : (m.roche_is_fluid ? "fluid Roche limit"
                                                                             : "rigid Roche limit");
            add_limit(panel, m.inner_limit_m / 1e3, fmt::format("{} of {}", inner, m.name));
            add_limit(panel, m.stability_limit_m / 1e3,
                      fmt::format("stability limit of {}", m.name));
        }
        d.panels_.push_back(std::move(panel));
    }
    if (any_moons) return d;
    for (const auto& ev : r.evolutions) {
        series_panel panel;
        panel.y_label_ = fmt::format("day of {} (h)", ev.planet_name);
        series s;
        s.label_ = ev.planet_name;
        for (std::size_t k : rows)
            s.y_.push_back(
                k < ev.series.size() ? std::abs(ev.series[k].planet_spin_period_s) / c::hour : nan);
        panel.series_.push_back(std::move(s));
        d.panels_.push_back(std::move(panel));
    }
    return d;
}

} // namespace moonwright::report
