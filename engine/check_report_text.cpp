// Human-readable check report: aligned tables with units in the headers, findings by severity.
#include "engine/constants.hpp"
#include "engine/design_check.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace moonwright {

namespace {

namespace c = constants;

/// A plain-text table: the first `left` columns are left-aligned, the rest right-aligned.
struct text_table {
    std::vector<std::string> header;
    std::vector<std::vector<std::string>> rows;
    size_t left = 1;

    std::string render() const {
        std::vector<size_t> width(header.size(), 0);
        for (size_t k = 0; k < header.size(); ++k) width[k] = header[k].size();
        for (const auto& r : rows)
            for (size_t k = 0; k < r.size(); ++k) width[k] = std::max(width[k], r[k].size());
        auto line = [&](const std::vector<std::string>& cells) {
            std::string out = " ";
            for (size_t k = 0; k < cells.size(); ++k) {
                const size_t pad = width[k] - cells[k].size();
                out += "  ";
                if (k < left)
                    out += cells[k] + std::string(pad, ' ');
                else
                    out += std::string(pad, ' ') + cells[k];
            }
            while (!out.empty() && out.back() == ' ') out.pop_back();
            return out + "\n";
        };
        std::string out = line(header);
        std::vector<std::string> rule;
        for (size_t w : width) rule.emplace_back(w, '-');
        out += line(rule);
        for (const auto& r : rows) out += line(r);
        return out;
    }
};

/// A unit for a column of lengths: AU when its largest value reaches 0.01 AU, km otherwise.
struct length_unit {
    const char* name;
    double size;
};
length_unit pick_length(const std::vector<std::optional<double>>& values) {
    double big = 0;
    for (const auto& v : values)
        if (v) big = std::max(big, std::abs(*v));
    if (big >= 0.01 * c::au) return {"AU", c::au};
    return {"km", 1e3};
}
length_unit pick_time(const std::vector<std::optional<double>>& values) {
    double big = 0;
    for (const auto& v : values)
        if (v) big = std::max(big, *v);
    if (big >= 2.0 * c::year) return {"yr", c::year};
    if (big >= 2.0 * c::day) return {"d", c::day};
    return {"h", c::hour};
}

std::string num(std::optional<double> v, double unit = 1.0, int digits = 4) {
    if (!v || !std::isfinite(*v)) return "-";
    return format_significant(*v / unit, digits);
}

std::string bodies_table(const check_report& r) {
    text_table t;
    t.left = 3;
    t.header = {"body",           "kind",
                "parent",         "mass [kg]",
                "radius [km]",    "density [g/cm3]",
                "gravity [m/s2]", "gravity [g]",
                "v_esc [km/s]",   "J2"};
    for (const auto& b : r.bodies) {
        t.rows.push_back({b.name, std::string(body_kind_name(b.kind)),
                          b.parent.empty() ? "-" : b.parent, fmt::format("{:.4g}", b.mass_kg),
                          num(b.radius_m, 1e3), num(b.density_kg_m3, 1e3, 3),
                          num(b.surface_gravity_m_s2, 1, 3), num(b.surface_gravity_g, 1, 3),
                          num(b.escape_velocity_m_s, 1e3, 3),
                          b.j2 == 0 ? "-" : num(b.j2, 1, 3) + (b.j2_derived ? "*" : "")});
    }
    return t.render();
}

/// One orbit table per parent, so each column's unit suits that subsystem.
std::string orbits_table(const check_report& r, const std::string& parent) {
    std::vector<const body_check*> rows;
    for (const auto& b : r.bodies)
        if (b.parent == parent && b.a_m) rows.push_back(&b);
    auto column = [&](auto member) {
        std::vector<std::optional<double>> v;
        for (const auto* b : rows) v.push_back(b->*member);
        return v;
    };
    const auto ua = pick_length(column(&body_check::a_m));
    const auto up = pick_time(column(&body_check::period_s));
    const auto uh = pick_length(column(&body_check::hill_radius_m));
    const auto ur = pick_length(column(&body_check::roche_limit_fluid_m));
    const auto us = pick_length(column(&body_check::stability_limit_m));
    const auto uy = pick_length(column(&body_check::synchronous_orbit_m));
    text_table t;
    t.header = {"body",
                fmt::format("a [{}]", ua.name),
                "e",
                "i [deg]",
                fmt::format("period [{}]", up.name),
                fmt::format("Hill radius [{}]", uh.name),
                fmt::format("Roche fluid [{}]", ur.name),
                fmt::format("Roche rotating [{}]", ur.name),
                fmt::format("Roche rigid [{}]", ur.name),
                fmt::format("stability limit [{}]", us.name),
                fmt::format("synchronous orbit [{}]", uy.name)};
    for (const auto* b : rows) {
        t.rows.push_back({b->name, num(b->a_m, ua.size), num(b->e, 1, 3),
                          num(*b->i_rad / c::deg, 1, 4), num(b->period_s, up.size),
                          num(b->hill_radius_m, uh.size), num(b->roche_limit_fluid_m, ur.size),
                          num(b->roche_limit_fluid_rotating_m, ur.size),
                          num(b->roche_limit_rigid_m, ur.size), num(b->stability_limit_m, us.size),
                          num(b->synchronous_orbit_m, uy.size)});
    }
    std::string out = t.render();
    // Neighbours in the same subsystem.
    text_table n;
    std::vector<std::optional<double>> dists;
    for (const auto* b : rows)
        if (b->next_sibling) dists.push_back(b->next_sibling->min_orbit_distance_m);
    if (dists.empty()) return out;
    const auto ud = pick_length(dists);
    n.left = 2;
    n.header = {"inner",        "outer",    "spacing [mutual Hill radii]",
                "period ratio", "near p:q", fmt::format("closest orbit approach [{}]", ud.name)};
    for (const auto* b : rows) {
        if (!b->next_sibling) continue;
        const auto& s = *b->next_sibling;
        n.rows.push_back({b->name, s.other, num(s.mutual_hill_spacing, 1, 3),
                          num(s.period_ratio, 1, 5),
                          s.near ? fmt::format("{}:{}", s.near->p, s.near->q) : "-",
                          num(s.min_orbit_distance_m, ud.size)});
    }
    return out + "\n" + n.render();
}

} // namespace

std::string render_check_text(const check_report& r) {
    std::string out = fmt::format("Design check: {} (seed {})\n\nBodies\n", r.design, r.seed);
    out += bodies_table(r);
    bool any_derived = false;
    for (const auto& b : r.bodies) any_derived = any_derived || b.j2_derived;
    if (any_derived) out += "  * J2 derived from the rotation period\n";
    for (const auto& p : r.bodies) {
        const bool has_children =
            std::any_of(r.bodies.begin(), r.bodies.end(),
                        [&](const body_check& b) { return b.parent == p.name; });
        if (!has_children) continue;
        out += fmt::format("\nOrbits around {}\n", p.name);
        out += orbits_table(r, p.name);
    }
    const severity order[] = {severity::error, severity::warning, severity::note};
    const char* titles[] = {"Errors", "Warnings", "Notes"};
    for (int k = 0; k < 3; ++k) {
        const int n = r.count(order[k]);
        if (n == 0) continue;
        out += fmt::format("\n{} ({})\n", titles[k], n);
        for (const auto& f : r.findings)
            if (f.level == order[k])
                out += fmt::format("  [{}] {}: {}\n", f.code, f.body, f.message);
    }
    out += fmt::format("\nSummary: {} error{}, {} warning{}, {} note{}\n", r.count(severity::error),
                       r.count(severity::error) == 1 ? "" : "s", r.count(severity::warning),
                       r.count(severity::warning) == 1 ? "" : "s", r.count(severity::note),
                       r.count(severity::note) == 1 ? "" : "s");
    return out;
}

} // namespace moonwright
