// Builds the stability-map figure from a map result: plain data for heat_map() or line_plot().
#include "tools/report/map_figure.hpp"

#include "engine/analytic_rules.hpp"

#include <cmath>
#include <fmt/format.h>

namespace moonwright::report {

namespace {

std::string axis_label(const map_axis& ax) {
    std::string unit = ax.unit == "RH"   ? "parent Hill radii"
                       : ax.unit == "Rp" ? "parent radii"
                       : ax.unit == "1"  ? ""
                                         : ax.unit;
    const std::string name = ax.field == "mean_anomaly" ? "mean anomaly" : ax.field;
    return unit.empty() ? fmt::format("{} of {}", name, ax.body)
                        : fmt::format("{} of {} ({})", name, ax.body, unit);
}

std::vector<double> axis_values(const map_axis& ax) {
    std::vector<double> v(ax.n);
    for (std::size_t i = 0; i < ax.n; ++i) v[i] = ax.value(i);
    return v;
}

/// Cell edges from cell centres (a single cell gets a width of 1 % of its value, or 1).
std::vector<double> edges(const std::vector<double>& c) {
    std::vector<double> e(c.size() + 1);
    if (c.size() == 1) {
        const double h = c[0] != 0 ? 0.01 * std::abs(c[0]) : 0.5;
        return {c[0] - h, c[0] + h};
    }
    for (std::size_t i = 1; i < c.size(); ++i) e[i] = 0.5 * (c[i - 1] + c[i]);
    e[0] = c[0] - (e[1] - c[0]);
    e[c.size()] = c.back() + (c.back() - e[c.size() - 1]);
    return e;
}

bool inside(double v, const std::vector<double>& e) {
    return std::isfinite(v) && v >= e.front() && v <= e.back();
}

/// The moon's limits as lines across an `a` axis, in that axis's unit.
void add_limits(std::vector<overlay_curve>& out, const map_result& r, const map_axis& a_axis,
                const std::vector<double>& a_edges, bool a_is_x, const map_axis* e_axis,
                const std::vector<double>& e_edges) {
    const map_references& ref = r.references;
    if (!ref.moon || ref.body != a_axis.body || !(ref.metres_per_unit > 0)) return;
    auto line = [&](double v, const std::string& label) {
        if (!(v > 0) || !inside(v, a_edges)) return;
        out.push_back(a_is_x ? overlay_curve::vertical(v, label)
                             : overlay_curve::horizontal(v, label));
    };
    const std::string sense = ref.retrograde ? "retrograde" : "prograde";
    if (e_axis) {
        // Domingos, Winter & Yokoyama (2006): a_crit / R_H as a function of the moon's e.
        std::vector<double> xs, ys;
        for (int k = 0; k <= 100; ++k) {
            const double e = e_edges.front() + (e_edges.back() - e_edges.front()) * k / 100.0;
            if (e < 0 || e >= 1) continue;
            const double f = stability_limit_fraction(ref.e_planet, e, ref.retrograde);
            const double a = f * ref.dwy_hill_m / ref.metres_per_unit;
            if (!(f > 0) || !inside(a, a_edges)) continue;
            xs.push_back(a_is_x ? a : e);
            ys.push_back(a_is_x ? e : a);
        }
        if (xs.size() >= 2)
            out.push_back(
                overlay_curve::polyline(xs, ys, fmt::format("Domingos et al. 2006 ({})", sense)));
    } else {
        line(ref.stability_m / ref.metres_per_unit,
             fmt::format("Domingos et al. 2006 ({})", sense));
    }
    line(ref.roche_fluid_m / ref.metres_per_unit, "fluid Roche limit");
    line(ref.hill_radius_m / ref.metres_per_unit, "Hill radius");
}

} // namespace

figure map_figure(const map_result& r, const std::string& title, map_quantity q) {
    const double p = r.reference_period_s;
    auto value = [&](std::size_t c) {
        return q == map_quantity::megno ? r.mean_megno[c] : r.survival_s[c] / p;
    };
    const std::string z_label = q == map_quantity::megno
                                    ? "mean MEGNO"
                                    : fmt::format("survival ({} orbits)", r.reference_body);
    const map_axis& ax0 = r.axes.at(0);
    const auto x0 = axis_values(ax0);
    const auto e0 = edges(x0);

    if (r.axes.size() == 1) {
        line_plot_data d;
        d.title_ = title;
        d.x_label_ = axis_label(ax0);
        d.x_ = x0;
        d.panel_.y_label_ = z_label;
        series s;
        s.label_ = z_label;
        for (std::size_t c = 0; c < r.cells(); ++c) s.y_.push_back(value(c));
        d.panel_.series_.push_back(std::move(s));
        if (ax0.field == "a") add_limits(d.panel_.overlays_, r, ax0, e0, true, nullptr, {});
        return d;
    }

    // Axis 0 varies slowest in the grids; the heat map puts axis 0 on x and axis 1 on y.
    const map_axis& ax1 = r.axes[1];
    const auto x1 = axis_values(ax1);
    const auto e1 = edges(x1);
    heat_map_data d;
    d.title_ = title;
    d.x_label_ = axis_label(ax0);
    d.y_label_ = axis_label(ax1);
    d.colour_bar_label_ = z_label;
    d.x_ = e0;
    d.y_ = e1;
    d.edges_ = true;
    d.z_.assign(ax1.n, std::vector<double>(ax0.n));
    for (std::size_t i = 0; i < ax0.n; ++i)
        for (std::size_t j = 0; j < ax1.n; ++j) d.z_[j][i] = value(i * ax1.n + j);
    if (q == map_quantity::survival) {
        d.z_min_ = 0;
        d.z_max_ = r.span_s / p;
    }
    const bool same_body = ax0.body == ax1.body;
    if (ax0.field == "a")
        add_limits(d.overlays_, r, ax0, e0, true, same_body && ax1.field == "e" ? &ax1 : nullptr,
                   e1);
    else if (ax1.field == "a")
        add_limits(d.overlays_, r, ax1, e1, false, ax0.field == "e" ? &ax0 : nullptr, e0);
    return d;
}

} // namespace moonwright::report
