// Invented sample data for every figure kind, shared by the figure tests and the browser test.
#pragma once

#include "tools/report/figures.hpp"

#include <cmath>
#include <numbers>

namespace moonwright::report::samples {

// A made-up stability map: survival time (log10 yr) against a (planet radii) and e, with a
// made-up limit curve. The numbers only need shape, not physics.
inline heat_map_data heat_map_sample() {
    heat_map_data d;
    d.title_ = "Survival over a and e (invented planet Tarrow b)";
    d.x_label_ = "semi-major axis a (planet radii)";
    d.y_label_ = "eccentricity e";
    d.colour_bar_label_ = "log10 survival time (yr)";
    const int nx = 40, ny = 25;
    for (int i = 0; i < nx; ++i) d.x_.push_back(5.0 + 95.0 * (i + 0.5) / nx); // centres
    for (int j = 0; j < ny; ++j) d.y_.push_back(0.02 + 0.6 * j / (ny - 1));   // centres
    for (int j = 0; j < ny; ++j) {
        std::vector<double> row;
        for (int i = 0; i < nx; ++i) {
            const double a = 5.0 + 95.0 * (i + 0.5) / nx, e = 0.02 + 0.6 * j / (ny - 1);
            const double edge = 70.0 * (1.0 - 1.1 * e);
            row.push_back(a < edge ? 6.0 : std::max(0.0, 6.0 - 0.25 * (a - edge)));
        }
        d.z_.push_back(row);
    }
    d.z_[3][4] = std::nan(""); // one cell without data
    std::vector<double> lx, ly;
    for (int k = 0; k <= 20; ++k) {
        const double e = 0.6 * k / 20.0;
        lx.push_back(70.0 * (1.0 - 1.1 * e));
        ly.push_back(e);
    }
    d.overlays_.push_back(overlay_curve::polyline(lx, ly, "analytic limit (invented)"));
    d.overlays_.push_back(overlay_curve::vertical(8.0, "Roche limit"));
    d.overlays_.push_back(overlay_curve::vertical(95.0, "Hill radius"));
    return d;
}

inline time_series_data time_series_sample() {
    time_series_data d;
    d.title_ = "Orbital elements of the invented moons Vessa and Orl";
    d.x_label_ = "time t (yr)";
    const int n = 300;
    for (int k = 0; k < n; ++k) d.t_.push_back(1000.0 * k / (n - 1));
    series_panel pa{"a (planet radii)", false, {}, {}};
    series_panel pe{"eccentricity e", false, {}, {}};
    series_panel pm{"MEGNO <Y>", false, {}, {}};
    for (int m = 0; m < 2; ++m) {
        series sa{m == 0 ? "Vessa" : "Orl", {}, {}, {}}, se = sa, sm = sa;
        for (int k = 0; k < n; ++k) {
            const double t = d.t_[static_cast<std::size_t>(k)];
            const double a = (m == 0 ? 20.0 : 34.0) + 0.3 * std::sin(t / (30.0 + 10 * m));
            sa.y_.push_back(a);
            sa.y_min_.push_back(a - 0.4);
            sa.y_max_.push_back(a + 0.4);
            se.y_.push_back(0.05 + 0.03 * m + 0.02 * std::sin(t / 70.0 + m));
            sm.y_.push_back(m == 0 ? 2.0 - 1.0 / (1.0 + 0.05 * t) : 0.004 * t + 1.0);
        }
        pa.series_.push_back(sa);
        pe.series_.push_back(se);
        pm.series_.push_back(sm);
    }
    pm.overlays_.push_back(overlay_curve::horizontal(2.0, "MEGNO = 2 (regular motion)"));
    d.panels_ = {pa, pe, pm};
    return d;
}

inline line_plot_data line_plot_sample() {
    line_plot_data d;
    d.title_ = "Survival time over a 1-D scan of a";
    d.x_label_ = "semi-major axis a (planet radii)";
    d.panel_.y_label_ = "survival time (yr)";
    d.panel_.log_y_ = true;
    series s{"median of 8 clones", {}, {}, {}};
    for (int k = 0; k < 60; ++k) {
        const double a = 10.0 + k;
        d.x_.push_back(a);
        const double v = a < 50.0 ? 1e6 : 1e6 * std::pow(10.0, -(a - 50.0) / 4.0);
        s.y_.push_back(v);
        s.y_min_.push_back(v / 3.0);
        s.y_max_.push_back(std::min(1e6, v * 3.0));
    }
    d.panel_.series_.push_back(s);
    d.panel_.overlays_.push_back(overlay_curve::vertical(50.0, "analytic limit (invented)"));
    return d;
}

inline bar_chart_data bars_sample() {
    return {"Verdicts over 240 generated designs",
            "designs",
            {"stable", "chaotic", "unstable", "unreliable"},
            {141, 37, 58, 4}};
}

inline survival_plot_data survival_sample() {
    survival_plot_data d;
    d.title_ = "Kaplan-Meier survival of 64 clones";
    d.x_label_ = "time t (yr)";
    survival_curve c{"clones of Vessa", {0.0}, {1.0}, {1.0}, {1.0}, 1e5, {}};
    double s = 1.0;
    for (int k = 1; k <= 20; ++k) {
        s *= 0.97;
        c.t_.push_back(3000.0 * k + 500.0 * (k % 3));
        c.survival_.push_back(s);
        c.lower_.push_back(std::max(0.0, s - 0.08));
        c.upper_.push_back(std::min(1.0, s + 0.06));
    }
    c.censored_ = {12000.0, 41000.0, 1e5}; // clones followed no longer (e.g. the span's end)
    d.curves_.push_back(c);
    return d;
}

inline orbit_diagram_data orbit_sample() {
    orbit_diagram_data d;
    d.title_ = "Moons of the invented planet Tarrow b, seen from above";
    d.parent_label_ = "Tarrow b";
    const double rp = 7.0e7; // m
    d.parent_radius_m_ = rp;
    d.length_unit_m_ = rp;
    d.length_unit_label_ = "planet radii";
    d.orbits_.push_back({"Vessa", 20.0 * rp, 0.05, 0.3});
    d.orbits_.push_back({"Orl", 34.0 * rp, 0.25, 2.0});
    d.circles_.push_back({"Hill radius", 95.0 * rp, reference_circle::kind::hill});
    d.circles_.push_back(
        {"stability limit (invented)", 45.0 * rp, reference_circle::kind::stability});
    d.circles_.push_back({"Roche limit", 2.4 * rp, reference_circle::kind::roche});
    return d;
}

inline scatter_data scatter_sample() {
    scatter_data d;
    d.title_ = "Final orbits of captured bodies";
    d.x_label_ = "a (planet radii)";
    d.y_label_ = "eccentricity e";
    scatter_group perm{"permanent", {}, {}}, temp{"temporary", {}, {}};
    for (int k = 0; k < 80; ++k) {
        const double u = std::fmod(k * 0.618034, 1.0), v = std::fmod(k * 0.414214, 1.0);
        auto& g = k % 3 == 0 ? temp : perm;
        g.x_.push_back(10.0 + 80.0 * u);
        g.y_.push_back(0.1 + 0.8 * v * (k % 3 == 0 ? 1.0 : 0.6));
    }
    d.groups_ = {perm, temp};
    d.overlays_.push_back(overlay_curve::vertical(95.0, "Hill radius"));
    return d;
}

inline histogram_data histogram_sample() {
    histogram_data d;
    d.title_ = "Distribution of closest approaches";
    d.x_label_ = "closest approach (mutual Hill radii)";
    for (int k = 0; k < 500; ++k) {
        const double u = std::fmod(k * 0.618034, 1.0), v = std::fmod(k * 0.754878, 1.0);
        // A Box-Muller draw (Box & Muller 1958) from two low-discrepancy numbers.
        d.values_.push_back(8.0 + 2.0 * std::sqrt(-2.0 * std::log(1.0 - 0.999 * u)) *
                                      std::cos(2.0 * std::numbers::pi * v));
    }
    d.values_.push_back(std::nan(""));
    d.bins_ = 25;
    return d;
}

} // namespace moonwright::report::samples
