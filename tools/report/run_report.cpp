// The report page of a `moonwright run` result: reads the HDF5 layout of docs/results.md and
// lays out the verdict, the design, figures, events and run metadata with units on every number.
#include "tools/report/run_report.hpp"
#include "tools/report/quantity_text.hpp"

#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <map>
#include <numeric>
#include <variant>

namespace moonwright::report {

namespace {

namespace c = moonwright::constants;

// ----------------------------------------------------------------------------------------------
// Reading

[[noreturn]] void not_a_run(const result_file& f, const std::string& what) {
    throw input_error(source_location{f.path()},
                      fmt::format("not a complete run result: {}", what));
}

double real_of(const result_file& f, const record_value& v, const std::string& field) {
    if (const auto* d = std::get_if<double>(&v)) return *d;
    not_a_run(f, field + " is not a real number");
}
int int_of(const result_file& f, const record_value& v, const std::string& field) {
    if (const auto* k = std::get_if<std::int64_t>(&v)) return static_cast<int>(*k);
    not_a_run(f, field + " is not an integer");
}
std::string text_of(const result_file& f, const record_value& v, const std::string& field) {
    if (const auto* s = std::get_if<std::string>(&v)) return *s;
    not_a_run(f, field + " is not text");
}

std::vector<std::vector<record_value>> records(const result_file& f, const std::string& path,
                                               std::size_t fields) {
    if (!f.exists(path)) not_a_run(f, path + " is missing");
    auto rows = f.read_records(path);
    for (const auto& r : rows)
        if (r.size() < fields)
            not_a_run(f, fmt::format("{} has {} fields, expected {}", path, r.size(), fields));
    return rows;
}

std::vector<double> table(const result_file& f, const std::string& path, std::size_t rows,
                          std::size_t cols) {
    if (!f.exists(path)) not_a_run(f, path + " is missing");
    std::vector<double> v = f.read_array(path);
    if (v.size() != rows * cols)
        not_a_run(f,
                  fmt::format("{} holds {} values, expected {} x {}", path, v.size(), rows, cols));
    return v;
}

run_result read_contents(const result_file& f) {
    run_result r;
    r.path = f.path();
    if (!f.exists("/run") || !f.has_attribute("/run", "command"))
        not_a_run(f, "/run@command is missing (was it written by moonwright?)");
    r.command = f.string_attribute("/run", "command");
    if (r.command != "run") not_a_run(f, "/run@command is '" + r.command + "', expected 'run'");

    if (!f.exists("/design/text")) not_a_run(f, "/design/text is missing");
    r.design_text = f.read_text("/design/text");
    r.design_format = f.string_attribute("/design/text", "format");
    r.design_source = f.string_attribute("/design/text", "source");

    for (const auto& rec : records(f, "/bodies", 6)) {
        run_body b;
        b.name = text_of(f, rec[0], "/bodies.name");
        b.kind = text_of(f, rec[1], "/bodies.kind");
        b.parent = int_of(f, rec[2], "/bodies.parent");
        b.mass_kg = real_of(f, rec[3], "/bodies.mass");
        b.radius_m = real_of(f, rec[4], "/bodies.radius");
        b.density_kg_m3 = real_of(f, rec[5], "/bodies.density");
        r.bodies.push_back(std::move(b));
    }
    const std::size_t n = r.bodies.size();
    if (n == 0) not_a_run(f, "/bodies is empty");
    for (const auto& b : r.bodies)
        if (b.parent >= static_cast<int>(n) || b.parent < -1)
            not_a_run(f, "/bodies.parent of '" + b.name + "' is out of range");

    if (!f.exists("/series/time")) not_a_run(f, "/series/time is missing");
    r.samples = f.rows("/series/time");
    if (r.samples == 0) not_a_run(f, "/series/time has no rows");
    const std::size_t k = r.samples;
    r.t_s = table(f, "/series/time", k, 1);
    struct element {
        const char* name;
        std::vector<double> run_result::*member;
    };
    for (const element& el :
         {element{"a", &run_result::a}, element{"e", &run_result::e}, element{"i", &run_result::i},
          element{"node", &run_result::node}, element{"peri", &run_result::peri},
          element{"a_min", &run_result::a_min}, element{"a_max", &run_result::a_max},
          element{"e_min", &run_result::e_min}, element{"e_max", &run_result::e_max},
          element{"i_min", &run_result::i_min}, element{"i_max", &run_result::i_max}})
        r.*el.member = table(f, std::string("/series/") + el.name, k, n);
    r.energy_error = table(f, "/series/energy_error", k, 1);
    r.megno = table(f, "/series/megno", k, 1);
    r.mean_megno = table(f, "/series/mean_megno", k, 1);

    for (const auto& rec : records(f, "/pairs", 7)) {
        run_pair p;
        p.a = int_of(f, rec[0], "/pairs.body_a");
        p.b = int_of(f, rec[1], "/pairs.body_b");
        p.name_a = text_of(f, rec[2], "/pairs.name_a");
        p.name_b = text_of(f, rec[3], "/pairs.name_b");
        p.min_distance_m = real_of(f, rec[4], "/pairs.min_distance");
        p.t_s = real_of(f, rec[5], "/pairs.time");
        p.mutual_hill_m = real_of(f, rec[6], "/pairs.mutual_hill_radius");
        if (p.a < 0 || p.b < 0 || p.a >= static_cast<int>(n) || p.b >= static_cast<int>(n))
            not_a_run(f, "/pairs names a body out of range");
        r.pairs.push_back(std::move(p));
    }
    for (const auto& rec : records(f, "/events", 9)) {
        run_event_row e;
        e.t_s = real_of(f, rec[0], "/events.time");
        e.kind = text_of(f, rec[1], "/events.kind");
        e.body = int_of(f, rec[2], "/events.body");
        e.other = int_of(f, rec[3], "/events.other");
        e.body_name = text_of(f, rec[4], "/events.body_name");
        e.other_name = text_of(f, rec[5], "/events.other_name");
        e.distance_m = real_of(f, rec[6], "/events.distance");
        e.threshold_m = real_of(f, rec[7], "/events.threshold");
        e.detail = text_of(f, rec[8], "/events.detail");
        r.events.push_back(std::move(e));
    }

    r.version = f.string_attribute("/run", "version");
    r.integrator = f.string_attribute("/run", "integrator");
    r.step_s = f.real_attribute("/run", "step_s");
    r.seed = static_cast<std::uint64_t>(f.integer_attribute("/run", "seed"));
    r.span_s = f.real_attribute("/run", "span_s");
    r.megno_on = f.integer_attribute("/run", "megno") != 0;
    r.continue_after_event = f.integer_attribute("/run", "continue_after_event") != 0;
    r.close_approach_hill = f.real_attribute("/run", "close_approach_hill");
    r.escape_hill = f.real_attribute("/run", "escape_hill");
    r.energy_failure = f.real_attribute("/run", "energy_failure");
    r.wall_time_s = f.real_attribute("/run", "wall_time_s");
    r.simulated_s = f.real_attribute("/run", "simulated_s");
    r.finished = f.integer_attribute("/run", "finished") != 0;
    r.reference_body = f.string_attribute("/run", "reference_body");
    r.reference_period_s = f.real_attribute("/run", "reference_period_s");

    if (f.exists("/verdict")) {
        r.verdict = f.string_attribute("/verdict", "verdict");
        r.headline = f.string_attribute("/verdict", "headline");
        const std::string reasons = f.string_attribute("/verdict", "reasons");
        std::size_t at = 0;
        while (at < reasons.size()) {
            const std::size_t end = std::min(reasons.find('\n', at), reasons.size());
            if (end > at) r.reasons.push_back(reasons.substr(at, end - at));
            at = end + 1;
        }
        r.max_energy_error = f.real_attribute("/verdict", "max_energy_error");
        const double mm = f.real_attribute("/verdict", "mean_megno");
        if (std::isfinite(mm)) r.verdict_mean_megno = mm;
        const double ly = f.real_attribute("/verdict", "lyapunov_time_s");
        if (std::isfinite(ly)) r.lyapunov_time_s = ly;
    }
    return r;
}

// ----------------------------------------------------------------------------------------------
// Formatting: every number leaves here with its unit.

/// A number for a table column whose unit is in the header (right-aligned, never wrapped).
std::string num(double v, int digits = 4) {
    return grouped(format_significant(v, digits), " ");
}
std::string km(double m) {
    return with_unit(m / 1e3, "km");
}
/// A length in AU from 0.1 AU up, in km below (as the check report does).
std::string length(double m) {
    if (!std::isfinite(m)) return "-";
    if (std::abs(m) >= 0.1 * c::au) return with_unit(m / c::au, "AU");
    return km(m);
}
std::string opt_km(const std::optional<double>& m) {
    return m && *m > 0 ? km(*m) : "-";
}

verdict_tone tone_of(const std::string& v) {
    if (v == "stable") return verdict_tone::good;
    if (v == "unstable") return verdict_tone::bad;
    if (v == "chaotic" || v == "unreliable") return verdict_tone::caution;
    return verdict_tone::neutral;
}

/// Builds the page and keeps each figure's PNG for --figures.
class page_builder {
  public:
    explicit page_builder(report_page& out) : out_(out) {}

    void add(html_section& s, const std::string& id, const figure& f, const std::string& caption,
             const std::string& alt, int w, int h) {
        add_figure(out_, s, id, f, caption, alt, w, h);
    }

  private:
    report_page& out_;
};

struct context {
    const run_result& r;
    std::optional<check_report> check;
    std::string check_problem; ///< why the stored design could not be checked
    std::string system_name;

    [[nodiscard]] std::size_t n() const { return r.bodies.size(); }
    [[nodiscard]] const body_check* check_of(std::size_t body) const {
        if (!check || body >= check->bodies.size()) return nullptr;
        const body_check& b = check->bodies[body];
        return b.name == r.bodies[body].name ? &b : nullptr;
    }
    [[nodiscard]] std::vector<std::size_t> children(int parent) const {
        std::vector<std::size_t> out;
        for (std::size_t k = 0; k < n(); ++k)
            if (r.bodies[k].parent == parent) out.push_back(k);
        // Innermost first, by the starting semi-major axis.
        std::sort(out.begin(), out.end(),
                  [&](std::size_t x, std::size_t y) { return r.at(r.a, 0, x) < r.at(r.a, 0, y); });
        return out;
    }
    /// Parents whose satellites get element plots and orbit diagrams: every body with children
    /// except the star, or the star alone when the design has no moons.
    [[nodiscard]] std::vector<int> parents() const {
        std::vector<int> out;
        for (std::size_t k = 0; k < n(); ++k)
            if (r.bodies[k].parent >= 0 && !children(static_cast<int>(k)).empty())
                out.push_back(static_cast<int>(k));
        if (out.empty() && !children(0).empty()) out.push_back(0);
        return out;
    }
    [[nodiscard]] bool is_star(int k) const {
        return r.bodies[static_cast<std::size_t>(k)].parent < 0;
    }
    [[nodiscard]] std::string name(int k) const {
        return k >= 0 && static_cast<std::size_t>(k) < n()
                   ? r.bodies[static_cast<std::size_t>(k)].name
                   : std::string();
    }
};

/// Axis unit of lengths around a parent: its radius for planets and moons, the AU for the star.
struct length_axis {
    double unit_m;
    std::string label; ///< e.g. "Teodora radii"
};
length_axis axis_around(const context& cx, int parent) {
    const run_body& p = cx.r.bodies[static_cast<std::size_t>(parent)];
    if (cx.is_star(parent) || !(p.radius_m > 0)) return {c::au, "AU"};
    return {p.radius_m, p.name + " radii"};
}

/// The time axis of the figures: years, or days for a run shorter than a year (tick labels
/// such as "0.02" with a separate "x10^-2" read badly).
struct time_axis {
    double unit_s;
    std::string label, word; ///< e.g. "t (yr)" and "years"
};
time_axis pick_time_axis(const run_result& r) {
    if (r.t_s.back() < c::year) return {c::day, "t (d)", "days"};
    return {c::year, "t (yr)", "years"};
}
/// A warning for captions when the run stopped so early that few samples exist.
std::string few_samples(const run_result& r) {
    if (r.samples >= 10) return "";
    return fmt::format(" Only {} samples were recorded (samples are spread over the span asked "
                       "for, and the run stopped at {}), so the curves are coarse or a single "
                       "point.",
                       r.samples, duration(r.t_s.back()));
}
std::vector<double> times(const run_result& r, const time_axis& ta) {
    std::vector<double> t(r.samples);
    for (std::size_t k = 0; k < r.samples; ++k) t[k] = r.t_s[k] / ta.unit_s;
    return t;
}

std::vector<double> column(const run_result& r, const std::vector<double>& s, std::size_t body,
                           double scale) {
    std::vector<double> out(r.samples);
    for (std::size_t k = 0; k < r.samples; ++k) out[k] = r.at(s, k, body) / scale;
    return out;
}

// ----------------------------------------------------------------------------------------------
// Sections

verdict_banner banner(const run_result& r) {
    if (!r.verdict)
        return {"unfinished",
                "This file holds a run that has not finished (a checkpoint): there is no verdict "
                "yet. Finish it with moonwright run --resume.",
                {fmt::format("Integrated {} of {}.", duration(r.simulated_s), duration(r.span_s))},
                verdict_tone::neutral};
    return {*r.verdict, r.headline, r.reasons, tone_of(*r.verdict)};
}

html_section design_section(const context& cx) {
    const run_result& r = cx.r;
    html_section s("design", "The design");
    s.paragraph(fmt::format(
        "Design '{}' ({}), as stored in the result file. Drawn angles use the run's seed {}. "
        "The quantities below are derived again from the stored design by the analytic check.",
        r.design_source, r.design_format, r.seed));

    data_table bodies{"Bodies and derived quantities",
                      {"body", "kind", "orbits", "mass", "radius", "density", "surface gravity",
                       "surface gravity"},
                      {"", "", "", "kg", "km", "g/cm³", "m/s²", "g"},
                      {}};
    for (std::size_t k = 0; k < cx.n(); ++k) {
        const run_body& b = r.bodies[k];
        const body_check* bc = cx.check_of(k);
        bodies.rows_.push_back({b.name, b.kind, b.parent >= 0 ? cx.name(b.parent) : "-",
                                fmt::format("{:.4g}", b.mass_kg), num(b.radius_m / 1e3),
                                num(b.density_kg_m3 / 1e3, 3),
                                bc ? num(bc->surface_gravity_m_s2, 3) : "-",
                                bc ? num(bc->surface_gravity_g, 3) : "-"});
    }
    s.table(bodies);

    if (cx.check) {
        data_table orbits{"Orbits and limits (lengths in km; a planet's a in AU)",
                          {"body", "a", "e", "i", "period", "Hill radius", "Roche limit (fluid)",
                           "Roche limit (rigid)", "stability limit"},
                          {"", "", "", "deg", "", "", "", "", ""},
                          {}};
        for (std::size_t k = 0; k < cx.n(); ++k) {
            const body_check* bc = cx.check_of(k);
            if (bc == nullptr || !bc->a_m) continue;
            orbits.rows_.push_back(
                {bc->name + (bc->retrograde ? " (retrograde)" : ""),
                 bc->kind == body_kind::planet ? length(*bc->a_m) : km(*bc->a_m),
                 bc->e ? num(*bc->e, 3) : "-", bc->i_rad ? num(*bc->i_rad / c::deg, 3) : "-",
                 bc->period_s ? duration(*bc->period_s) : "-", opt_km(bc->hill_radius_m),
                 opt_km(bc->roche_limit_fluid_m), opt_km(bc->roche_limit_rigid_m),
                 bc->stability_limit_m
                     ? (*bc->stability_limit_m > 0 ? km(*bc->stability_limit_m)
                                                   : std::string("no stable orbit"))
                     : "-"});
        }
        s.table(orbits);
        s.paragraph(
            "Hill radius: at the body's own pericentre. Roche limits: of this body around its "
            "parent (fluid and rigid). Stability limit: the widest stable orbit around the "
            "parent for this body's eccentricity and sense (Domingos, Winter & Yokoyama 2006).");

        std::vector<finding> items;
        for (const auto& fd : cx.check->findings) items.push_back(page_finding(fd, cx.system_name));
        s.findings(fmt::format("Findings of the analytic check: {} errors, {} warnings, {} notes",
                               cx.check->count(moonwright::severity::error),
                               cx.check->count(moonwright::severity::warning),
                               cx.check->count(moonwright::severity::note)),
                   items);
    } else {
        s.paragraph("The stored design could not be checked again: " + cx.check_problem);
    }
    return s;
}

void elements_figures(const context& cx, page_builder& pb, html_section& s) {
    const run_result& r = cx.r;
    const time_axis ta = pick_time_axis(r);
    const std::vector<double> t = times(r, ta);
    for (int p : cx.parents()) {
        const length_axis ax = axis_around(cx, p);
        series_panel pa{"a (" + ax.label + ")", false, {}, {}};
        series_panel pe{"e", false, {}, {}};
        series_panel p_i{"i (deg)", false, {}, {}};
        std::string names;
        for (std::size_t m : cx.children(p)) {
            const std::string& nm = r.bodies[m].name;
            names += (names.empty() ? "" : ", ") + nm;
            pa.series_.push_back({nm, column(r, r.a, m, ax.unit_m),
                                  column(r, r.a_min, m, ax.unit_m),
                                  column(r, r.a_max, m, ax.unit_m)});
            pe.series_.push_back({nm, column(r, r.e, m, 1.0), column(r, r.e_min, m, 1.0),
                                  column(r, r.e_max, m, 1.0)});
            p_i.series_.push_back({nm, column(r, r.i, m, c::deg), column(r, r.i_min, m, c::deg),
                                   column(r, r.i_max, m, c::deg)});
        }
        time_series_data d;
        d.title_ = "Orbits around " + cx.name(p) + ": a, e and i against time";
        d.x_label_ = ta.label;
        d.t_ = t;
        d.panels_ = {pa, pe, p_i};
        const std::string frame =
            cx.is_star(p) ? "the reference plane" : "the plane of " + cx.name(p) + "'s orbit";
        pb.add(s, "fig-elements-" + std::to_string(p), d,
               fmt::format("Semi-major axis a (in {}), eccentricity e and inclination i (to {}, "
                           "in degrees) of {} against time in {}. Lines are the samples; the "
                           "shaded bands are the smallest and largest values between samples.",
                           ax.label, frame, names, ta.word) +
                   few_samples(r),
               "Three stacked plots of a, e and i against time for the satellites of " + cx.name(p),
               1000, 900);
    }
}

void approach_section(const context& cx, page_builder& pb, html_section& s) {
    const run_result& r = cx.r;
    std::vector<const run_pair*> siblings, parent_rows;
    for (const auto& p : r.pairs) (p.mutual_hill_m > 0 ? siblings : parent_rows).push_back(&p);
    const double gladman = 2.0 * std::sqrt(3.0);

    if (siblings.empty()) {
        s.paragraph("No body shares its parent with another, so there are no sibling pairs to "
                    "compare with their mutual Hill radius.");
    } else {
        std::sort(siblings.begin(), siblings.end(), [](const run_pair* x, const run_pair* y) {
            return x->min_distance_m / x->mutual_hill_m < y->min_distance_m / y->mutual_hill_m;
        });
        const auto spacing = [&](const run_pair& p) {
            return std::abs(r.at(r.a, 0, static_cast<std::size_t>(p.b)) -
                            r.at(r.a, 0, static_cast<std::size_t>(p.a))) /
                   p.mutual_hill_m;
        };
        // At most 8 pairs get their own marker (that many marker shapes); more share one.
        constexpr std::size_t max_groups = 8;
        scatter_data d;
        d.title_ = "Closest approach of each sibling pair";
        d.x_label_ = "spacing at the start, |a₂ − a₁| (mutual Hill radii)";
        d.y_label_ = "closest (mutual Hill radii)";
        double lo = 1.0, hi = gladman;
        for (std::size_t k = 0; k < siblings.size(); ++k) {
            const run_pair& p = *siblings[k];
            const double y = p.min_distance_m / p.mutual_hill_m, x = spacing(p);
            lo = std::min(lo, y);
            hi = std::max(hi, y);
            if (k < max_groups || siblings.size() <= max_groups)
                d.groups_.push_back({p.name_a + " – " + p.name_b, {x}, {y}});
            else {
                if (d.groups_.size() == max_groups) d.groups_.push_back({"other pairs", {}, {}});
                d.groups_.back().x_.push_back(x);
                d.groups_.back().y_.push_back(y);
            }
        }
        // A linear axis reads most easily; only a very wide range needs a log axis.
        d.log_y_ = lo > 0 && hi / lo > 100.0;
        d.overlays_.push_back(overlay_curve::horizontal(
            r.close_approach_hill,
            fmt::format("{} mutual Hill {}: close-approach event", num(r.close_approach_hill, 3),
                        r.close_approach_hill == 1.0 ? "radius" : "radii")));
        d.overlays_.push_back(overlay_curve::horizontal(
            gladman, "2√3 ≈ 3.46: two-body stability bound (Gladman 1993)"));
        pb.add(s, "fig-pairs", d,
               "Closest approach of every pair of bodies with the same parent, in units of the "
               "pair's mutual Hill radius (Chambers, Wetherill & Boss 1996), against their "
               "starting spacing. Below the line at 1 the run records a close approach; pairs "
               "closer than 2√3 at the start are not protected by the two-body bound "
               "(Gladman 1993). The number in brackets counts the points of each pair.",
               "Scatter plot of closest approach against starting spacing, in mutual Hill radii",
               1000, 900);

        data_table t{"Closest approach of each sibling pair",
                     {"pair", "closest approach", "closest approach", "when", "mutual Hill radius",
                      "spacing at the start"},
                     {"", "km", "mutual Hill radii", "yr", "km", "mutual Hill radii"},
                     {}};
        for (const run_pair* p : siblings)
            t.rows_.push_back({p->name_a + " – " + p->name_b, num(p->min_distance_m / 1e3),
                               num(p->min_distance_m / p->mutual_hill_m, 3), num(p->t_s / c::year),
                               num(p->mutual_hill_m / 1e3), num(spacing(*p), 3)});
        s.table(t);
    }
    if (!parent_rows.empty()) {
        data_table t{"Closest approach of each body to its parent",
                     {"body", "parent", "closest approach", "closest approach", "when"},
                     {"", "", "km", "parent radii", "yr"},
                     {}};
        for (const run_pair* p : parent_rows) {
            // /pairs lists a body-parent pair as (body, parent) or (parent, body).
            const bool a_is_parent = r.bodies[static_cast<std::size_t>(p->b)].parent == p->a;
            const int body = a_is_parent ? p->b : p->a, parent = a_is_parent ? p->a : p->b;
            const double rp = r.bodies[static_cast<std::size_t>(parent)].radius_m;
            t.rows_.push_back({cx.name(body), cx.name(parent), num(p->min_distance_m / 1e3),
                               rp > 0 ? num(p->min_distance_m / rp) : "-", num(p->t_s / c::year)});
        }
        s.table(t);
    }
}

/// Adds a circle unless one of the same kind within 1% of its radius is already there.
void add_circle(std::vector<reference_circle>& circles, reference_circle circle) {
    for (const auto& o : circles)
        if (o.kind_ == circle.kind_ &&
            std::abs(o.radius_m_ - circle.radius_m_) <= 0.01 * circle.radius_m_)
            return;
    circles.push_back(std::move(circle));
}

void orbit_figures(const context& cx, page_builder& pb, html_section& s) {
    const run_result& r = cx.r;
    for (int p : cx.parents()) {
        const length_axis ax = axis_around(cx, p);
        const run_body& parent = r.bodies[static_cast<std::size_t>(p)];
        orbit_diagram_data d;
        d.parent_label_ = parent.name;
        d.parent_radius_m_ = parent.radius_m;
        d.length_unit_m_ = ax.unit_m;
        d.length_unit_label_ = ax.label;
        double reach = 0; // largest apocentre
        std::vector<std::string> skipped;
        const auto kids = cx.children(p);
        for (std::size_t m : kids) {
            const double a = r.at(r.a, 0, m), e = r.at(r.e, 0, m), i = r.at(r.i, 0, m);
            if (!(a > 0) || !(e >= 0 && e < 1) || !std::isfinite(a)) {
                skipped.push_back(r.bodies[m].name);
                continue;
            }
            // Longitude of pericentre seen from above: node + peri, or node - peri for a
            // retrograde orbit (i > 90 deg), which is traversed the other way.
            const double node = r.at(r.node, 0, m), peri = r.at(r.peri, 0, m);
            const double w = i > c::pi / 2 ? node - peri : node + peri;
            d.orbits_.push_back({r.bodies[m].name, a, e, std::isfinite(w) ? w : 0.0});
            reach = std::max(reach, a * (1 + e));
        }
        if (d.orbits_.empty()) continue;
        std::vector<reference_circle> circles;
        const body_check* pc = cx.check_of(static_cast<std::size_t>(p));
        if (pc && pc->hill_radius_m && *pc->hill_radius_m > 0)
            add_circle(circles, {"Hill sphere", *pc->hill_radius_m, reference_circle::kind::hill});
        std::vector<std::pair<std::string, double>> stab, roche;
        for (std::size_t m : kids)
            if (const body_check* bc = cx.check_of(m)) {
                if (bc->stability_limit_m && *bc->stability_limit_m > 0)
                    stab.emplace_back(bc->name, *bc->stability_limit_m);
                if (bc->roche_limit_fluid_m && *bc->roche_limit_fluid_m > 0)
                    roche.emplace_back(bc->name, *bc->roche_limit_fluid_m);
            }
        // One circle when every satellite has the same limit (within 1%), else one per satellite.
        const auto same = [](const std::vector<std::pair<std::string, double>>& v) {
            for (const auto& x : v)
                if (std::abs(x.second - v.front().second) > 0.01 * v.front().second) return false;
            return true;
        };
        for (const auto& [nm, rad] : stab)
            add_circle(circles, {"stability limit" + (same(stab) ? std::string() : ", " + nm), rad,
                                 reference_circle::kind::stability});
        for (const auto& [nm, rad] : roche)
            add_circle(circles, {"Roche limit (fluid)" + (same(roche) ? std::string() : ", " + nm),
                                 rad, reference_circle::kind::roche});

        // The radii go in the caption, in km and in the axis unit.
        std::string radii;
        for (const auto& ci : circles)
            radii += fmt::format(" {}: {} = {}.", ci.label_, km(ci.radius_m_),
                                 with_unit(ci.radius_m_ / ax.unit_m, ax.label));
        const std::string base = "fig-orbits-" + std::to_string(p);
        const std::string projected =
            "Orbits at the start, seen from above and drawn to scale (projected on the plane, "
            "inclination not shown); the dot marks each pericentre.";
        const std::string skipped_text =
            skipped.empty() ? ""
                            : " Not drawn (unbound or no orbit at the start): " +
                                  fmt::format("{}", fmt::join(skipped, ", ")) + ".";
        double biggest = 0;
        for (const auto& ci : circles) biggest = std::max(biggest, ci.radius_m_);
        // A Hill sphere many times wider than the orbits shrinks them to a dot: show the whole
        // sphere, then a close-up without the circles that lie far outside the orbits.
        constexpr double zoom_ratio = 3.0;
        d.title_ = "Satellites of " + parent.name + " seen from above";
        d.circles_ = circles;
        if (biggest > zoom_ratio * reach) {
            d.title_ += ": whole Hill sphere";
            pb.add(s, base + "-whole", d,
                   projected + " The whole Hill sphere of " + parent.name +
                       " with the stability limit (Domingos, Winter & Yokoyama 2006) and the "
                       "fluid Roche limit." +
                       radii + skipped_text,
                   "Top-down diagram of the orbits around " + parent.name +
                       " with the Hill sphere, stability limit and Roche limit",
                   900, 900);
            orbit_diagram_data z = d;
            z.title_ = "Satellites of " + parent.name + " seen from above: close-up";
            z.circles_.clear();
            std::vector<std::string> left_out;
            for (const auto& ci : circles) {
                if (ci.radius_m_ <= zoom_ratio * reach)
                    z.circles_.push_back(ci);
                else
                    left_out.push_back(ci.label_);
            }
            pb.add(s, base + "-close", z,
                   projected + " Close-up of the orbits; outside this view: " +
                       fmt::format("{}", fmt::join(left_out, "; ")) + "." + skipped_text,
                   "Close-up top-down diagram of the orbits around " + parent.name, 900, 900);
        } else {
            pb.add(s, base, d,
                   projected +
                       " Circles: the Hill sphere, the stability limit (Domingos, Winter & "
                       "Yokoyama 2006) and the fluid Roche limit, where they apply." +
                       radii + skipped_text,
                   "Top-down diagram of the orbits around " + parent.name +
                       " with the Hill sphere, stability limit and Roche limit",
                   900, 900);
        }
    }
}

bool any_finite(const std::vector<double>& v) {
    return std::any_of(v.begin(), v.end(), [](double x) { return std::isfinite(x); });
}

void megno_figure(const context& cx, page_builder& pb, html_section& s) {
    const run_result& r = cx.r;
    if (!any_finite(r.megno) && !any_finite(r.mean_megno)) {
        s.paragraph(r.megno_on ? "MEGNO was asked for, but this run recorded no MEGNO value (the "
                                 "integrator gave none), so there is no chaos indicator to show."
                               : "MEGNO was off for this run (--no-megno): no chaos indicator.");
        return;
    }
    time_series_data d;
    d.title_ = "MEGNO chaos indicator against time";
    const time_axis ta = pick_time_axis(r);
    d.x_label_ = ta.label;
    d.t_ = times(r, ta);
    series_panel p{"MEGNO (dimensionless)", false, {}, {}};
    p.series_.push_back({"MEGNO Y(t)", r.megno, {}, {}});
    p.series_.push_back({"mean MEGNO ⟨Y⟩(t)", r.mean_megno, {}, {}});
    p.overlays_.push_back(overlay_curve::horizontal(2.0, "2: regular motion"));
    p.overlays_.push_back(overlay_curve::horizontal(2.5, "2.5: above this the verdict is chaotic"));
    d.panels_ = {p};
    std::string text =
        "MEGNO (Cincotta & Simó 2000) and its running mean. For regular (quasi-periodic) motion "
        "the mean tends to 2; for chaotic motion it keeps growing, at a rate set by the Lyapunov "
        "exponent.";
    if (r.verdict_mean_megno)
        text += fmt::format(" Mean MEGNO at the end: {}.", num(*r.verdict_mean_megno, 3));
    if (r.lyapunov_time_s) text += fmt::format(" Lyapunov time: {}.", duration(*r.lyapunov_time_s));
    pb.add(s, "fig-megno", d, text, "Line plot of MEGNO and mean MEGNO against time", 1000, 600);
}

void energy_figure(const context& cx, page_builder& pb, html_section& s) {
    const run_result& r = cx.r;
    time_series_data d;
    d.title_ = "Relative energy error against time";
    const time_axis ta = pick_time_axis(r);
    d.x_label_ = ta.label;
    d.t_ = times(r, ta);
    series_panel p{"|ΔE/E₀| (dimensionless)", true, {}, {}};
    std::vector<double> err(r.energy_error.size());
    std::transform(r.energy_error.begin(), r.energy_error.end(), err.begin(),
                   [](double x) { return std::abs(x); });
    p.series_.push_back({"relative energy error", err, {}, {}});
    p.overlays_.push_back(
        overlay_curve::horizontal(1e-4, "1e-4: above this the run is unreliable"));
    d.panels_ = {p};
    if (!std::any_of(err.begin(), err.end(), [](double x) { return std::isfinite(x) && x > 0; })) {
        s.paragraph("The energy error stayed exactly 0 at every sample; nothing to plot.");
        return;
    }
    pb.add(s, "fig-energy", d,
           fmt::format("Relative error of the total energy, log scale. The largest was {}; the "
                       "verdict calls a run unreliable above 1e-4.",
                       num(r.max_energy_error, 3)) +
               few_samples(r),
           "Line plot of the relative energy error against time on a log scale", 1000, 600);
}

/// How far an event's distance is in the units of its threshold, e.g. "0.98 mutual Hill radii".
std::string in_threshold_units(const run_result& r, const run_event_row& e) {
    if (!(e.threshold_m > 0) || !std::isfinite(e.distance_m)) return "-";
    const double q = e.distance_m / e.threshold_m;
    if (e.kind == "close_approach")
        return num(q * r.close_approach_hill, 3) + nbsp + "mutual Hill radii";
    if (e.kind == "collision" || e.kind == "parent_impact")
        return num(q, 3) + nbsp + "× sum of radii";
    if (e.kind == "roche_crossing") return num(q, 3) + nbsp + "× fluid Roche limit";
    if (e.kind == "escape") {
        const bool planet = e.body >= 0 && static_cast<std::size_t>(e.body) < r.bodies.size() &&
                            r.bodies[static_cast<std::size_t>(e.body)].kind == "planet";
        return num(q * r.escape_hill, 3) +
               (planet ? "\u00a0× initial apocentre" : "\u00a0× parent's Hill radius");
    }
    return num(q, 3) + nbsp + "× threshold";
}

html_section events_section(const context& cx) {
    const run_result& r = cx.r;
    html_section s("events", "Events");
    if (r.events.empty()) {
        s.paragraph(fmt::format("No event over the {} simulated: no close approach, collision, "
                                "Roche crossing, escape or numerical failure.",
                                duration(r.simulated_s)));
        return s;
    }
    const std::string ref = r.reference_body.empty() ? "reference body" : r.reference_body;
    data_table t{
        "Events in time order",
        {"time", "time", "kind", "bodies", "distance", "distance in threshold units", "detail"},
        {"yr", "orbits of " + ref, "", "", "km", "", ""},
        {}};
    for (const auto& e : r.events) {
        std::string bodies = e.body_name;
        if (!e.other_name.empty()) bodies += " – " + e.other_name;
        std::string kind = e.kind;
        std::replace(kind.begin(), kind.end(), '_', ' ');
        t.rows_.push_back({num(e.t_s / c::year),
                           r.reference_period_s > 0 ? num(e.t_s / r.reference_period_s) : "-", kind,
                           bodies, num(e.distance_m / 1e3), in_threshold_units(r, e), e.detail});
    }
    s.table(t);
    if (!r.continue_after_event)
        s.paragraph("The run stops at the first event (run with --continue-after-event to go on).");
    return s;
}

html_section run_section(const context& cx) {
    const run_result& r = cx.r;
    html_section s("run", "The run");
    const std::string ref = r.reference_body.empty() ? "the reference body" : r.reference_body;
    std::vector<key_value> kv;
    kv.push_back({"integrator", r.integrator, "", ""});
    kv.push_back({"step", num(r.step_s), "s", duration(r.step_s)});
    if (r.reference_period_s > 0)
        kv.push_back(
            {"step per orbit of " + ref, num(r.reference_period_s / r.step_s, 4), "steps", ""});
    kv.push_back({"seed", std::to_string(r.seed), "", "drawn angles and MEGNO deviation"});
    kv.push_back({"span asked", num(r.span_s / c::year), "yr", duration(r.span_s)});
    kv.push_back({"time integrated", num(r.simulated_s / c::year), "yr",
                  r.finished ? "finished" : "not finished"});
    if (r.reference_period_s > 0) {
        kv.push_back({"span in orbits of " + ref, num(r.span_s / r.reference_period_s), "orbits",
                      "period " + duration(r.reference_period_s)});
        kv.push_back({"integrated in orbits of " + ref, num(r.simulated_s / r.reference_period_s),
                      "orbits", ""});
    }
    kv.push_back({"samples", std::to_string(r.samples), "rows", "including the start"});
    kv.push_back({"MEGNO", r.megno_on ? "on" : "off", "", ""});
    kv.push_back({"largest energy error", num(r.max_energy_error, 3), "relative", "|ΔE/E₀|"});
    kv.push_back({"close approach below", num(r.close_approach_hill, 3), "mutual Hill radii", ""});
    kv.push_back({"escape beyond", num(r.escape_hill, 3), "parent Hill radii", ""});
    kv.push_back({"wall time", num(r.wall_time_s, 3), "s", ""});
    kv.push_back({"moonwright version", r.version, "", ""});
    kv.push_back({"result file", r.path, "", ""});
    s.key_values("Run settings and metadata", kv);
    return s;
}

} // namespace

run_result read_run_result(const result_file& f) {
    try {
        return read_contents(f);
    } catch (const io_error& e) {
        throw input_error(source_location{f.path()},
                          std::string("cannot read the run result: ") + e.what());
    }
}

report_page build_run_page(const run_result& r) {
    context cx{r, std::nullopt, {}, {}};
    try {
        const design d = parse_design(
            r.design_text, r.design_format == "json" ? design_format::json : design_format::toml,
            r.design_source);
        const resolved_system sys = resolve(d, r.seed);
        cx.system_name = sys.name;
        cx.check = run_check(sys);
    } catch (const moonwright::error& e) {
        cx.check_problem = e.what();
    }
    if (cx.system_name.empty()) cx.system_name = r.design_source;

    report_page out;
    page_builder pb(out);
    out.page_ = html_report(
        "Run report: " + cx.system_name,
        fmt::format("design {} · seed {} · {} integrated{}", r.design_source, r.seed,
                    duration(r.simulated_s),
                    r.reference_period_s > 0
                        ? fmt::format(" ({} orbits of {})",
                                      num(r.simulated_s / r.reference_period_s), r.reference_body)
                        : std::string()));
    out.page_.verdict(banner(r));
    out.page_.section(design_section(cx));

    html_section elements("elements", "Orbital elements over time");
    elements_figures(cx, pb, elements);
    out.page_.section(elements);

    html_section approaches("approaches", "Closest approaches");
    approach_section(cx, pb, approaches);
    out.page_.section(approaches);

    html_section orbits("orbits", "Orbits seen from above");
    orbit_figures(cx, pb, orbits);
    out.page_.section(orbits);

    html_section chaos("chaos", "Chaos indicator");
    megno_figure(cx, pb, chaos);
    out.page_.section(chaos);

    html_section accuracy("accuracy", "Integration accuracy");
    energy_figure(cx, pb, accuracy);
    out.page_.section(accuracy);

    out.page_.section(events_section(cx));
    out.page_.section(run_section(cx));
    out.page_.footer(fmt::format("moonwright {} · run report of {} · design {} · seed {}",
                                 r.version, r.path, r.design_source, r.seed));
    return out;
}

} // namespace moonwright::report
