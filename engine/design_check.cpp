// The analytic design check: derived quantities and findings; the rules are listed with their
// sources in docs/check.md and beside each formula in analytic_rules.hpp.
#include "engine/design_check.hpp"

#include "engine/check_tidal_fate.hpp"
#include "engine/constants.hpp"
#include "engine/orbit_distance.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>

namespace moonwright {

namespace c = constants;

std::string_view severity_name(severity s) {
    switch (s) {
    case severity::error:
        return "error";
    case severity::warning:
        return "warning";
    case severity::note:
        return "note";
    }
    return "note";
}

std::string_view shape_class_name(shape_class s) {
    switch (s) {
    case shape_class::sphere:
        return "sphere";
    case shape_class::oblate:
        return "oblate";
    case shape_class::prolate:
        return "prolate";
    case shape_class::triaxial:
        return "triaxial";
    }
    return "sphere";
}

std::string format_significant(double v, int digits) {
    if (!std::isfinite(v)) return "-";
    const double mag = std::abs(v);
    if (v == 0.0) return "0";
    if (mag < 1e-3 || mag >= 1e9) return fmt::format("{:.{}g}", v, digits);
    // Round to the significant digits first, then print with just enough decimals.
    const int exponent = static_cast<int>(std::floor(std::log10(mag)));
    const int decimals = std::max(0, digits - 1 - exponent);
    std::string out = fmt::format("{:.{}f}", v, decimals);
    if (out.find('.') != std::string::npos) {
        while (out.back() == '0') out.pop_back();
        if (out.back() == '.') out.pop_back();
    }
    return out;
}

bool check_report::has_errors() const {
    return count(severity::error) > 0;
}

int check_report::count(severity s) const {
    return static_cast<int>(std::count_if(findings.begin(), findings.end(),
                                          [&](const finding& f) { return f.level == s; }));
}

namespace {

/// A length for a message: AU from 0.1 AU (15 million km) up, km below.
std::string len(double m) {
    if (std::abs(m) >= 0.1 * c::au) return format_significant(m / c::au) + " AU";
    return format_significant(m / 1e3) + " km";
}
std::string mass(double kg) {
    return fmt::format("{:.4g} kg", kg);
}
std::string dens(double kg_m3) {
    return format_significant(kg_m3 / 1e3, 3) + " g/cm3";
}
std::string deg(double rad) {
    return format_significant(rad / c::deg) + " deg";
}
std::string km(double m) {
    return format_significant(m / 1e3) + " km";
}
std::string dur(double s) {
    if (s >= 2.0 * c::year) return format_significant(s / c::year) + " yr";
    if (s >= 2.0 * c::day) return format_significant(s / c::day) + " d";
    return format_significant(s / c::hour) + " h";
}

class checker {
  public:
    explicit checker(const resolved_system& sys) : sys_(sys), per_body_(sys.bodies.size()) {}

    check_report run() {
        check_report r;
        r.design = sys_.name;
        r.seed = sys_.seed;
        for (const auto& b : sys_.bodies) r.bodies.push_back(derive(b));
        for (const auto& b : sys_.bodies) body_findings(b, r.bodies[static_cast<size_t>(b.index)]);
        for (const auto& b : sys_.bodies) sibling_findings(b, r.bodies);
        add_tidal_fate_findings(sys_, r.bodies, per_body_);
        for (auto& list : per_body_) {
            std::stable_sort(list.begin(), list.end(), [](const finding& x, const finding& y) {
                return static_cast<int>(x.level) < static_cast<int>(y.level);
            });
            for (auto& f : list) r.findings.push_back(std::move(f));
        }
        return r;
    }

  private:
    const resolved_system& sys_;
    std::vector<std::vector<finding>> per_body_;

    const resolved_body& at(int idx) const { return sys_.bodies[static_cast<size_t>(idx)]; }
    void add(const resolved_body& b, severity s, std::string code, std::string message) {
        per_body_[static_cast<size_t>(b.index)].push_back(
            finding{s, std::move(code), b.name, std::move(message)});
    }

    body_check derive(const resolved_body& b) const {
        body_check k;
        k.name = b.name;
        k.kind = b.kind;
        k.mass_kg = b.mass_kg;
        k.radius_m = b.radius_m;
        k.density_kg_m3 = b.density_kg_m3;
        k.surface_gravity_m_s2 = surface_gravity(b.mass_kg, b.radius_m);
        k.surface_gravity_g = k.surface_gravity_m_s2 / c::standard_gravity;
        k.escape_velocity_m_s = escape_velocity(b.mass_kg, b.radius_m);
        k.mass_from = b.mass_from;
        k.j2 = b.j2;
        k.j2_derived = b.j2_derived;
        if (b.semi_axes_m) {
            const auto& ax = *b.semi_axes_m;
            k.shape = classify_shape(ax[0], ax[1], ax[2]);
        }
        if (b.kind != body_kind::star)
            k.rounding_radius_m = b.density_kg_m3 < icy_density_below_kg_m3
                                      ? rounding_radius_ice_m
                                      : rounding_radius_rock_m;
        if (b.parent < 0 || !b.orbit) return k;

        const resolved_body& p = at(b.parent);
        const resolved_orbit& o = *b.orbit;
        k.parent = p.name;
        k.a_m = o.a_m;
        k.e = o.e;
        k.i_rad = o.i_rad;
        k.retrograde = o.retrograde;
        k.pericentre_m = o.a_m * (1.0 - o.e);
        k.apocentre_m = o.a_m * (1.0 + o.e);
        k.period_s = kepler_period(o.a_m, p.mass_kg, b.mass_kg);
        k.hill_radius_m = hill_radius(o.a_m, o.e, b.mass_kg, p.mass_kg);
        k.roche_limit_fluid_m = roche_limit_fluid(p.radius_m, p.density_kg_m3, b.density_kg_m3);
        k.roche_limit_fluid_rotating_m =
            roche_limit_fluid_rotating(p.radius_m, p.density_kg_m3, b.density_kg_m3);
        k.roche_limit_rigid_m = roche_limit_rigid(p.radius_m, p.density_kg_m3, b.density_kg_m3);
        if (p.parent >= 0 && p.orbit) {
            const resolved_body& gp = at(p.parent);
            k.stability_limit_m =
                stability_limit(p.orbit->a_m, p.orbit->e, p.mass_kg, gp.mass_kg, o.e, o.retrograde);
            k.parent_hill_radius_m = hill_radius(p.orbit->a_m, p.orbit->e, p.mass_kg, gp.mass_kg);
        }
        if (p.rotation_period_s)
            k.synchronous_orbit_m = synchronous_orbit_radius(p.mass_kg, *p.rotation_period_s);
        k.barycentre_offset_m = o.a_m * b.mass_kg / (p.mass_kg + b.mass_kg);
        k.double_body = *k.barycentre_offset_m > p.radius_m;

        // Next sibling outward (children are sorted innermost first).
        const auto& sib = p.children;
        const auto pos = std::find(sib.begin(), sib.end(), b.index);
        if (pos != sib.end() && pos + 1 != sib.end()) {
            const resolved_body& n = at(*(pos + 1));
            sibling_relation rel;
            rel.other = n.name;
            rel.other_index = n.index;
            rel.mutual_hill_radius_m =
                mutual_hill_radius(o.a_m, n.orbit->a_m, b.mass_kg, n.mass_kg, p.mass_kg);
            rel.mutual_hill_spacing =
                mutual_hill_spacing(o.a_m, n.orbit->a_m, b.mass_kg, n.mass_kg, p.mass_kg);
            rel.period_ratio = kepler_period(n.orbit->a_m, p.mass_kg, n.mass_kg) / *k.period_s;
            rel.near = nearest_commensurability(rel.period_ratio, commensurability_tolerance);
            rel.min_orbit_distance_m = minimum_orbit_distance(o, *n.orbit);
            k.next_sibling = rel;
        }
        return k;
    }

    void body_findings(const resolved_body& b, const body_check& k) {
        if (b.j2_derived && b.rotation_period_s)
            add(b, severity::note, "j2_derived",
                fmt::format("J2 = {:.4g} was derived from the rotation period {} with a fluid "
                            "Love number of {} (J2 = k q / 3, q = w^2 R^3 / GM): write j2 in the "
                            "design to set it yourself.",
                            b.j2, dur(*b.rotation_period_s),
                            fluid_love_number(b.mass_kg, b.density_kg_m3)));
        if (k.shape) {
            const auto& ax = *b.semi_axes_m;
            add(b, severity::note, "irregular_shape",
                fmt::format("{} is a {} body of {} x {} x {} (volume-equivalent radius {}).",
                            b.name, shape_class_name(*k.shape), km(ax[0]), km(ax[1]), km(ax[2]),
                            km(b.radius_m)));
        }
        if (k.rounding_radius_m) {
            const bool icy = b.density_kg_m3 < icy_density_below_kg_m3;
            const double thr = *k.rounding_radius_m;
            if (b.semi_axes_m && b.radius_m > thr && *k.shape != shape_class::sphere)
                add(b, severity::note, "too_big_to_stay_irregular",
                    fmt::format("{}'s volume-equivalent radius {} is above about {}, where {} "
                                "bodies pull themselves round (common practice): give it a "
                                "radius instead of semi-axes, or shrink it below {}.",
                                b.name, km(b.radius_m), km(thr), icy ? "icy" : "rocky", km(thr)));
            if (!b.semi_axes_m && b.radius_m < thr &&
                (b.kind == body_kind::moon || b.kind == body_kind::submoon))
                add(b, severity::note, "too_small_to_be_round",
                    fmt::format("{} (radius {}) is below about {}, where {} bodies usually stay "
                                "irregular (common practice): consider giving it three semi-axes.",
                                b.name, km(b.radius_m), km(thr), icy ? "icy" : "rocky"));
        }
        if (b.parent < 0 || !b.orbit) return;

        const resolved_body& p = at(b.parent);
        const resolved_orbit& o = *b.orbit;
        const double q = *k.pericentre_m, big_q = *k.apocentre_m;

        if (b.mass_kg > p.mass_kg)
            add(b, severity::error, "heavier_than_parent",
                fmt::format("{} ({}) is heavier than {} ({}), which it is meant to orbit: swap "
                            "the two, or make {} lighter than {}.",
                            b.name, mass(b.mass_kg), p.name, mass(p.mass_kg), b.name,
                            mass(p.mass_kg)));
        const double touch = p.radius_m + b.radius_m;
        if (q < touch)
            add(b, severity::error, "pericentre_inside_parent",
                fmt::format("{}'s pericentre {} is less than {}'s radius plus its own ({}): "
                            "the two would touch. Raise a to more than {}{}.",
                            b.name, len(q), p.name, len(touch), len(touch / (1.0 - o.e)),
                            o.e > 0 ? " or lower e" : ""));
        if (q < *k.roche_limit_fluid_m) {
            const double needed = p.density_kg_m3 * std::pow(2.44 * p.radius_m / q, 3);
            add(b, severity::error, "inside_roche_limit",
                fmt::format("{}'s pericentre {} lies inside the fluid Roche limit of {}, {} "
                            "(2.44 Rp (rho_p / rho_s)^(1/3), Roche 1849): tides would tear a "
                            "fluid body apart. Move it out to a > {}{}, or make it denser than "
                            "{} (now {}).",
                            b.name, len(q), p.name, len(*k.roche_limit_fluid_m),
                            len(*k.roche_limit_fluid_m / (1.0 - o.e)),
                            o.e > 0 ? " (or lower e)" : "", dens(needed), dens(b.density_kg_m3)));
        }
        if (k.parent_hill_radius_m && big_q > *k.parent_hill_radius_m) {
            const double rh = *k.parent_hill_radius_m;
            const double e_max = rh / o.a_m - 1.0;
            add(b, severity::error, "beyond_hill_radius",
                fmt::format("{}'s apocentre {} lies beyond {}'s Hill radius {} (at {}'s "
                            "pericentre): {} would pull it away. Bring a below {}{}.",
                            b.name, len(big_q), p.name, len(rh), p.name, at(p.parent).name,
                            len(rh / (1.0 + o.e)),
                            e_max > 0 ? fmt::format(" or lower e below {:.3g}", e_max) : ""));
        }
        if (k.stability_limit_m) {
            const double lim = *k.stability_limit_m;
            const char* sense = o.retrograde ? "retrograde" : "prograde";
            const double e_p = p.orbit->e;
            if (lim <= 0.0) {
                add(b, severity::warning, "no_stable_orbit",
                    fmt::format("with {}'s e = {:.3g} and {}'s e = {:.3g}, the fit of Domingos, "
                                "Winter & Yokoyama (2006) leaves no stable {} orbit: lower the "
                                "eccentricities.",
                                p.name, e_p, b.name, o.e, sense));
            } else if (o.a_m > lim) {
                std::string alt;
                if (!o.retrograde) {
                    const double retro = stability_limit(p.orbit->a_m, e_p, p.mass_kg,
                                                         at(p.parent).mass_kg, o.e, true);
                    if (retro > o.a_m)
                        alt = fmt::format(", or make it retrograde (limit {})", len(retro));
                }
                add(b, severity::warning, "beyond_stability_limit",
                    fmt::format("{}'s a = {} is beyond the {} stability limit {} ({:.3g} of {}'s "
                                "Hill radius for e_p = {:.3g}, e = {:.3g}; Domingos, Winter & "
                                "Yokoyama 2006): moons there are usually lost. Move it inside "
                                "{}{}.",
                                b.name, len(o.a_m), sense, len(lim),
                                stability_limit_fraction(e_p, o.e, o.retrograde), p.name, e_p, o.e,
                                len(lim), alt));
            }
        }

        if (o.drawn[0] || o.drawn[1] || o.drawn[2] || o.drawn[3]) {
            static constexpr const char* names[] = {"i", "node", "peri", "mean anomaly"};
            const double values[] = {o.i_rad, o.node_rad, o.peri_rad, o.mean_anomaly_rad};
            std::string list;
            for (int n = 0; n < 4; ++n) {
                if (!o.drawn[static_cast<size_t>(n)]) continue;
                if (!list.empty()) list += ", ";
                list += fmt::format("{} = {}", names[n], deg(values[n]));
            }
            add(b, severity::note, "angles_drawn",
                fmt::format("drawn from seed {}: {}. Write them in the design to fix them, or "
                            "give another seed.",
                            sys_.seed, list));
        }
        if (k.double_body)
            add(b, severity::note, "double_body",
                fmt::format("the barycentre of {} and {} lies {} from {}'s centre, outside its "
                            "radius {}: the pair is a double body.",
                            p.name, b.name, len(*k.barycentre_offset_m), p.name, len(p.radius_m)));
        if (o.retrograde) {
            add(b, severity::note, "retrograde_tidal_decay",
                fmt::format("{} orbits retrograde: tides raised on {} shrink such an orbit "
                            "whatever its distance; give {} a prograde orbit if it must last.",
                            b.name, p.name, b.name));
        } else if (k.synchronous_orbit_m && o.a_m < *k.synchronous_orbit_m) {
            add(b, severity::note, "inside_synchronous_orbit",
                fmt::format("{} orbits inside {}'s synchronous orbit ({}, rotation period {}): "
                            "tides raised on {} will shrink its orbit; move it beyond {} to "
                            "have it migrate outward instead.",
                            b.name, p.name, len(*k.synchronous_orbit_m), dur(*p.rotation_period_s),
                            p.name, len(*k.synchronous_orbit_m)));
        }
    }

    void sibling_findings(const resolved_body& b, const std::vector<body_check>& checks) {
        const body_check& k = checks[static_cast<size_t>(b.index)];
        if (!k.next_sibling) return;
        const sibling_relation& rel = *k.next_sibling;
        const resolved_body& n = at(rel.other_index);
        const resolved_body& p = at(b.parent);
        const double a1 = b.orbit->a_m;

        // Outer a giving a spacing of s mutual Hill radii: a2 = a1 (1 + x) / (1 - x),
        // x = s h / 2, h = ((m1 + m2) / 3M)^(1/3) (from the definition of the spacing).
        auto a_for = [&](double s) -> std::string {
            const double x = s * std::cbrt((b.mass_kg + n.mass_kg) / (3.0 * p.mass_kg)) / 2.0;
            if (x >= 1.0) return "no distance (the pair is too heavy for its parent)";
            return len(a1 * (1.0 + x) / (1.0 - x));
        };
        if (rel.mutual_hill_spacing < gladman_hill_stable_spacing) {
            add(n, severity::warning, "spacing_hill_unstable",
                fmt::format("{} and {} are {:.3g} mutual Hill radii apart (one is {}): under "
                            "2 sqrt(3) = 3.46 two orbits are not Hill stable (Gladman 1993). "
                            "Move {} out to a > {} (about 10 mutual Hill radii, a > {}, for "
                            "long-term survival).",
                            b.name, n.name, rel.mutual_hill_spacing, len(rel.mutual_hill_radius_m),
                            n.name, a_for(gladman_hill_stable_spacing),
                            a_for(chambers_long_term_spacing)));
        } else if (rel.mutual_hill_spacing < chambers_long_term_spacing) {
            add(n, severity::warning, "spacing_long_term_unstable",
                fmt::format("{} and {} are {:.3g} mutual Hill radii apart (one is {}): systems "
                            "spaced under about 10 tend to go unstable over long spans "
                            "(Chambers, Wetherill & Boss 1996). Move {} out to a > {}, or "
                            "integrate the design to see whether it survives.",
                            b.name, n.name, rel.mutual_hill_spacing, len(rel.mutual_hill_radius_m),
                            n.name, a_for(chambers_long_term_spacing)));
        }
        if (rel.min_orbit_distance_m < rel.mutual_hill_radius_m) {
            const bool touch = rel.min_orbit_distance_m < b.radius_m + n.radius_m;
            add(n, severity::warning, "orbits_intersect",
                fmt::format(
                    "the orbits of {} and {} come within {} of each other, less than "
                    "their mutual Hill radius {}{}: close encounters{} are likely. Move "
                    "{}'s pericentre ({}) well beyond {}'s apocentre ({}), or lower the "
                    "eccentricities.",
                    b.name, n.name, len(rel.min_orbit_distance_m), len(rel.mutual_hill_radius_m),
                    touch ? " (they cross)" : "", touch ? " and collisions" : "", n.name,
                    len(n.orbit->a_m * (1.0 - n.orbit->e)), b.name, len(a1 * (1.0 + b.orbit->e))));
        }
        if (rel.near)
            add(n, severity::note, "near_commensurability",
                fmt::format("the periods of {} and {} are in the ratio {:.4f}, {:.2f}% from "
                            "{}:{}: a resonance can pump eccentricities or protect the pair; "
                            "integrate the design to see which.",
                            n.name, b.name, rel.period_ratio, 100.0 * rel.near->offset, rel.near->p,
                            rel.near->q));
    }
};

} // namespace

check_report run_check(const resolved_system& sys) {
    return checker(sys).run();
}

} // namespace moonwright
