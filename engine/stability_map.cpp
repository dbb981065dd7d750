// Stability maps: field setting on the design model, the parallel grid of short runs, and the
// HDF5 record of the map.
#include "engine/stability_map.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"
#include "engine/result_file.hpp"
#include "engine/run_driver.hpp"
#include "engine/run_outcome.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>
#include <cstdlib>
#include <exception>
#include <fmt/format.h>
#include <mutex>
#include <thread>

namespace moonwright {

namespace {

const source_location command_line{"<command line>"};

struct field_info {
    const char* name;
    dimension dim;
    const char* default_unit;
    bool orbital;
};

constexpr field_info fields[] = {
    {"a", dimension::length, "m", true},     {"e", dimension::dimensionless, "1", true},
    {"i", dimension::angle, "deg", true},    {"node", dimension::angle, "deg", true},
    {"peri", dimension::angle, "deg", true}, {"mean_anomaly", dimension::angle, "deg", true},
    {"mass", dimension::mass, "kg", false},  {"radius", dimension::length, "m", false},
};

const field_info* find_field(const std::string& name) {
    for (const auto& f : fields)
        if (name == f.name) return &f;
    return nullptr;
}

std::string trim(std::string s) {
    const auto b = s.find_first_not_of(" \t");
    const auto e = s.find_last_not_of(" \t");
    return b == std::string::npos ? std::string() : s.substr(b, e - b + 1);
}

const body_spec* find_body(const design& d, const std::string& name) {
    for (const auto& b : d.bodies)
        if (b.name == name) return &b;
    return nullptr;
}

std::string body_names(const design& d) {
    std::string s;
    for (const auto& b : d.bodies) s += (s.empty() ? "" : ", ") + b.name;
    return s;
}

/// One endpoint "0.3RH", "10 deg", "0.2": value in its own unit, and the unit symbol.
std::pair<quantity, std::string> parse_endpoint(const std::string& text, const field_info& f,
                                                const std::string& option,
                                                const std::string& path) {
    const std::string t = trim(text);
    if (f.dim == dimension::dimensionless) {
        char* end = nullptr;
        const double v = std::strtod(t.c_str(), &end);
        if (t.empty() || end == t.c_str() || !trim(end).empty() || !std::isfinite(v))
            throw input_error(command_line, option + " " + path, t, "a plain number");
        return {quantity{v, length_ref::absolute}, "1"};
    }
    quantity q;
    try {
        q = parse_quantity(t, f.dim, f.default_unit);
    } catch (const quantity_error& e) {
        throw input_error(command_line, option + " " + path, e.found(), e.expected());
    }
    char* end = nullptr;
    (void)std::strtod(t.c_str(), &end);
    std::string unit = trim(end ? std::string(end) : std::string());
    if (unit.empty()) unit = f.default_unit;
    return {q, unit};
}

} // namespace

double map_axis::value(std::size_t i) const {
    if (n <= 1) return from;
    return from + (to - from) * static_cast<double>(i) / static_cast<double>(n - 1);
}

map_axis parse_map_axis(const std::string& text, const design& d, const std::string& option) {
    map_axis ax;
    ax.text = text;
    const auto eq = text.find('=');
    const auto dot = text.find('.');
    if (eq == std::string::npos || dot == std::string::npos || dot > eq)
        throw input_error(command_line, option, text,
                          "BODY.FIELD=FROM:TO:N, e.g. Vela.a=0.2RH:0.7RH:60");
    ax.body = trim(text.substr(0, dot));
    ax.field = trim(text.substr(dot + 1, eq - dot - 1));
    if (ax.field.starts_with("orbit.")) ax.field = ax.field.substr(6);
    const body_spec* b = find_body(d, ax.body);
    if (!b)
        throw input_error(command_line, option, "body '" + ax.body + "'",
                          "a body of the design (" + body_names(d) + ")");
    const field_info* f = find_field(ax.field);
    if (!f)
        throw input_error(command_line, option, "field '" + ax.field + "'",
                          "a, e, i, node, peri, mean_anomaly, mass or radius");
    const std::string path = body_field(ax.body, (f->orbital ? "orbit." : "") + ax.field);
    if (f->orbital && !b->orbit)
        throw input_error(command_line, option + " " + path, "the star '" + ax.body + "'",
                          "a body with an orbit");

    const std::string range = text.substr(eq + 1);
    const auto c1 = range.find(':');
    const auto c2 = c1 == std::string::npos ? c1 : range.find(':', c1 + 1);
    if (c2 == std::string::npos || range.find(':', c2 + 1) != std::string::npos)
        throw input_error(command_line, option + " " + path, range, "FROM:TO:N");
    const auto [q_from, unit] = parse_endpoint(range.substr(0, c1), *f, option, path);
    const auto [q_to, unit_to] =
        parse_endpoint(range.substr(c1 + 1, c2 - c1 - 1), *f, option, path);
    if (q_from.ref != q_to.ref)
        throw input_error(command_line, option + " " + path, unit + " and " + unit_to,
                          "both ends in the same kind of length (both RH, both Rp, or both "
                          "absolute)");
    const std::string n_text = trim(range.substr(c2 + 1));
    char* end = nullptr;
    const long n = std::strtol(n_text.c_str(), &end, 10);
    if (n_text.empty() || *end != '\0' || n < 1 || n > 100000)
        throw input_error(command_line, option + " " + path, n_text,
                          "a whole number of cells from 1 to 100000");
    ax.n = static_cast<std::size_t>(n);
    ax.unit = unit;
    ax.ref = q_from.ref;
    const unit_info* u = find_unit(unit);
    ax.unit_si = (ax.ref == length_ref::absolute && u) ? u->to_si : 1.0;
    ax.from = q_from.value / ax.unit_si;
    ax.to = q_to.value / ax.unit_si;
    if (ax.n > 1 && !(ax.to > ax.from))
        throw input_error(command_line, option + " " + path, range, "FROM < TO");
    const double lo = ax.from * ax.unit_si;
    const double hi = ax.to * ax.unit_si;
    if (ax.field == "e" && (lo < 0 || hi >= 1))
        throw input_error(command_line, option + " " + path, range,
                          "eccentricities in 0 <= e < 1 (bound orbits)");
    if ((ax.field == "a" || ax.field == "mass" || ax.field == "radius") && !(lo > 0))
        throw input_error(command_line, option + " " + path, range, "positive values");
    return ax;
}

void set_design_field(design& d, const map_axis& axis, double value) {
    body_spec* b = nullptr;
    for (auto& x : d.bodies)
        if (x.name == axis.body) b = &x;
    if (!b) throw input_error(command_line, "--vary", "body '" + axis.body + "'", "a body");
    const double si = value * axis.unit_si;
    if (axis.field == "mass") {
        b->mass_kg = si;
        b->density_kg_m3.reset();
        b->composition.clear();
        return;
    }
    if (axis.field == "radius") {
        b->radius_m = si;
        return;
    }
    if (!b->orbit)
        throw input_error(command_line, "--vary", "the star '" + axis.body + "'",
                          "a body with an orbit");
    orbit_spec& o = *b->orbit;
    if (axis.field == "a") {
        o.a = length_spec{si, axis.ref};
        o.period_s.reset();
    } else if (axis.field == "e") {
        o.e = si;
    } else if (axis.field == "i") {
        o.i_rad = si;
        o.sense.reset(); // the inclination alone decides the sense across 90 deg
    } else if (axis.field == "node") {
        o.node_rad = si;
    } else if (axis.field == "peri") {
        o.peri_rad = si;
    } else if (axis.field == "mean_anomaly") {
        o.mean_anomaly_rad = si;
    } else {
        throw input_error(command_line, "--vary", "field '" + axis.field + "'",
                          "a, e, i, node, peri, mean_anomaly, mass or radius");
    }
}

std::string map_event_legend() {
    std::string s = fmt::format("{} none", map_no_event);
    for (event_kind k :
         {event_kind::close_approach, event_kind::collision, event_kind::parent_impact,
          event_kind::roche_crossing, event_kind::escape, event_kind::numerical_failure})
        s += fmt::format(", {} {}", static_cast<int>(k), event_name(k));
    return s;
}

namespace {

/// The planet whose orbits count: the varied body's planet ancestor, or the first planet.
int reference_planet(const resolved_system& sys, const std::string& body) {
    int k = sys.find(body);
    while (k > 0 && sys.bodies[static_cast<std::size_t>(k)].kind != body_kind::planet)
        k = sys.bodies[static_cast<std::size_t>(k)].parent;
    if (k > 0) return k;
    for (const auto& b : sys.bodies)
        if (b.kind == body_kind::planet) return b.index;
    throw input_error(source_location{sys.name}, "bodies", "a star alone",
                      "at least one planet to integrate");
}

double planet_period(const resolved_system& sys, int planet) {
    const auto& p = sys.bodies[static_cast<std::size_t>(planet)];
    const auto& star = sys.bodies[static_cast<std::size_t>(p.parent)];
    return kepler_period(p.orbit->a_m, star.mass_kg, p.mass_kg);
}

map_references references_for(const design& d, const resolved_system& sys, const map_axis& axis,
                              std::uint64_t seed) {
    map_references r;
    const int k = sys.find(axis.body);
    if (k <= 0) return r;
    const auto& m = sys.bodies[static_cast<std::size_t>(k)];
    if (m.kind != body_kind::moon) return r;
    const auto& p = sys.bodies[static_cast<std::size_t>(m.parent)];
    const auto& star = sys.bodies[static_cast<std::size_t>(p.parent)];
    r.moon = true;
    r.body = axis.body;
    r.dwy_hill_m = p.orbit->a_m * std::cbrt(p.mass_kg / (3 * star.mass_kg));
    r.retrograde = m.orbit->retrograde;
    r.e_planet = p.orbit->e;
    r.e_moon = m.orbit->e;
    r.planet_a_m = p.orbit->a_m;
    r.hill_radius_m = hill_radius(p.orbit->a_m, p.orbit->e, p.mass_kg, star.mass_kg);
    r.stability_m =
        stability_limit(p.orbit->a_m, p.orbit->e, p.mass_kg, star.mass_kg, r.e_moon, r.retrograde);
    if (p.density_kg_m3 > 0 && m.density_kg_m3 > 0)
        r.roche_fluid_m = roche_limit_fluid(p.radius_m, p.density_kg_m3, m.density_kg_m3);
    if (axis.field == "a") {
        if (axis.ref == length_ref::absolute) {
            r.metres_per_unit = axis.unit_si;
        } else {
            // One RH or Rp exactly as resolution reads it: resolve a copy at a = 1 unit.
            design one = d;
            set_design_field(one, axis, 1.0);
            r.metres_per_unit = resolve(one, seed).bodies[static_cast<std::size_t>(k)].orbit->a_m;
        }
    }
    return r;
}

} // namespace

map_references map_references_for(const design& d, const std::vector<map_axis>& axes,
                                  std::uint64_t seed) {
    if (axes.empty()) return {};
    const map_axis* ref_axis = &axes[0];
    for (const auto& ax : axes)
        if (ax.field == "a") {
            ref_axis = &ax;
            break;
        }
    return references_for(d, resolve(d, seed), *ref_axis, seed);
}

map_result run_stability_map(const design& d, const map_options& options) {
    if (options.axes.empty() || options.axes.size() > 2)
        throw input_error(command_line, "--vary", fmt::format("{} axes", options.axes.size()),
                          "one or two --vary options");
    if (!(options.orbits > 0) || !std::isfinite(options.orbits))
        throw input_error(command_line, "--orbits", fmt::format("{}", options.orbits),
                          "a positive number of orbits");
    map_result r;
    r.axes = options.axes;
    const map_axis& ax0 = options.axes[0];
    const std::size_t n0 = ax0.n;
    const std::size_t n1 = options.axes.size() == 2 ? options.axes[1].n : 1;
    const std::size_t cells = n0 * n1;

    const resolved_system base = resolve(d, options.seed);
    const int planet = reference_planet(base, ax0.body);
    r.reference_body = base.bodies[static_cast<std::size_t>(planet)].name;
    r.reference_period_s = planet_period(base, planet);
    r.span_s = options.orbits * r.reference_period_s;
    const map_axis* ref_axis = &ax0;
    for (const auto& ax : options.axes)
        if (ax.field == "a") {
            ref_axis = &ax;
            break;
        }
    r.references = references_for(d, base, *ref_axis, options.seed);

    // Resolve every cell first (cheap): a bad cell is an input error before hours of work.
    // Each cell goes through the design file schema again so the loader's checks apply.
    std::vector<resolved_system> systems;
    systems.reserve(cells);
    for (std::size_t c = 0; c < cells; ++c) {
        design cell = d;
        set_design_field(cell, ax0, ax0.value(c / n1));
        if (options.axes.size() == 2)
            set_design_field(cell, options.axes[1], options.axes[1].value(c % n1));
        const std::string label = fmt::format("map cell {} of {}", c + 1, cells);
        const design checked = parse_design(design_to_json(cell), design_format::json, label);
        systems.push_back(resolve(checked, options.seed));
    }

    const double nan = std::nan("");
    r.mean_megno.assign(cells, nan);
    r.survival_s.assign(cells, 0.0);
    r.span_cell_s.assign(cells, 0.0);
    r.max_e.assign(cells, nan);
    r.survived.assign(cells, 0);
    r.first_event.assign(cells, map_no_event);

    std::atomic<std::size_t> next{0};
    std::mutex failure_mutex;
    std::exception_ptr failure;
    auto worker = [&] {
        for (;;) {
            const std::size_t c = next.fetch_add(1);
            if (c >= cells) return;
            try {
                const resolved_system& sys = systems[c];
                run_options o;
                o.span_s = options.orbits * planet_period(sys, sys.find(r.reference_body));
                o.samples = options.samples;
                o.megno = true;
                o.seed = options.seed;
                run_driver run(sys, o);
                run.advance();
                const run_outcome out = run.outcome();
                r.span_cell_s[c] = out.span_s;
                r.mean_megno[c] = out.mean_megno.value_or(nan);
                if (out.events.empty()) {
                    r.survived[c] = 1;
                    r.survival_s[c] = out.simulated_s;
                } else {
                    r.survival_s[c] = out.events.front().t_s;
                    r.first_event[c] = static_cast<int>(out.events.front().kind);
                }
                for (const auto& b : out.bodies)
                    if (b.name == ax0.body) r.max_e[c] = b.e_max;
            } catch (...) {
                std::lock_guard<std::mutex> lock(failure_mutex);
                if (!failure) failure = std::current_exception();
                next.store(cells);
            }
        }
    };
    const unsigned jobs =
        std::max(1u, std::min<unsigned>(options.jobs, static_cast<unsigned>(cells)));
    std::vector<std::thread> pool;
    for (unsigned j = 1; j < jobs; ++j) pool.emplace_back(worker);
    worker();
    for (auto& t : pool) t.join();
    if (failure) std::rethrow_exception(failure);

    // The empirical edge of a 1-D scan of a: every cell below it survived.
    if (options.axes.size() == 1 && ax0.field == "a" && n0 > 1) {
        std::size_t k = 0;
        while (k < n0 && r.survived[k]) ++k;
        if (k > 0 && k < n0) {
            r.last_surviving = ax0.value(k - 1);
            r.first_failing = ax0.value(k);
            r.edge = 0.5 * (*r.last_surviving + *r.first_failing);
        }
    }
    return r;
}

void write_map_file(const std::string& path, const design& d, const map_options& options,
                    const map_result& r, const std::string& version) {
    result_file f(path, result_file::mode::create);
    f.create_group("/run");
    f.set_attribute("/run", "command", std::string("map"));
    f.set_attribute("/run", "version", version);
    f.set_attribute("/run", "design_name", d.name);
    f.set_attribute("/run", "seed", static_cast<std::int64_t>(options.seed));
    f.set_attribute("/run", "jobs", static_cast<std::int64_t>(options.jobs));
    f.set_attribute("/run", "orbits", options.orbits);
    f.set_attribute("/run", "reference_body", r.reference_body);
    f.set_attribute("/run", "reference_period_s", r.reference_period_s);
    f.set_attribute("/run", "span_s", r.span_s);
    f.set_attribute("/run", "integrator", std::string("wh"));
    f.create_group("/design");
    f.write_text("/design/text", d.source_text.empty() ? design_to_toml(d) : d.source_text,
                 "the design file exactly as written (before any field was varied)");

    f.create_group("/map");
    std::vector<std::size_t> dims;
    for (std::size_t a = 0; a < r.axes.size(); ++a) {
        const map_axis& ax = r.axes[a];
        std::vector<double> v(ax.n);
        for (std::size_t i = 0; i < ax.n; ++i) v[i] = ax.value(i);
        const std::string p = fmt::format("/map/axis{}", a);
        const std::string what = ax.unit == "RH"   ? " (fraction of the parent's Hill radius)"
                                 : ax.unit == "Rp" ? " (multiples of the parent's radius)"
                                                   : "";
        f.write_array(
            p, v, {ax.n}, ax.unit,
            fmt::format("values of {}.{} along grid axis {}{}", ax.body, ax.field, a, what));
        f.set_attribute(p, "body", ax.body);
        f.set_attribute(p, "field", ax.field);
        f.set_attribute(p, "spec", ax.text);
        dims.push_back(ax.n);
    }
    auto grid = [&](const std::string& name, const std::vector<double>& v, const std::string& units,
                    const std::string& description) {
        f.write_array("/map/" + name, v, dims, units, description + " (axis0 varies slowest)");
    };
    auto as_double = [](const std::vector<int>& v) {
        return std::vector<double>(v.begin(), v.end());
    };
    grid("mean_megno", r.mean_megno, "1",
         "time-averaged MEGNO at the end of each cell's run (2: regular; NaN: not computed)");
    grid("survival_time", r.survival_s, "s",
         "time of the first event, or the whole span when the cell had none");
    grid("span", r.span_cell_s, "s", "span each cell was run for");
    grid("survived", as_double(r.survived), "1", "1 when the cell ran its span without event");
    grid("first_event", as_double(r.first_event), "1", "code of the cell's first event");
    f.set_attribute("/map/first_event", "legend", map_event_legend());
    grid("max_e", r.max_e, "1",
         fmt::format("largest eccentricity of {} seen (sample envelopes)", r.axes[0].body));

    const map_references& ref = r.references;
    if (ref.moon) {
        f.create_group("/map/references");
        f.set_attribute("/map/references", "sense",
                        std::string(ref.retrograde ? "retrograde" : "prograde"));
        auto one = [&](const std::string& name, double v, const std::string& units,
                       const std::string& description) {
            f.write_array("/map/references/" + name, std::vector<double>{v}, {1}, units,
                          description);
        };
        one("hill_radius", ref.hill_radius_m, "m",
            "planet's Hill radius a_p (1 - e_p) (m_p / 3 M)^(1/3)");
        one("stability_limit", ref.stability_m, "m",
            "Domingos, Winter & Yokoyama (2006) critical semi-major axis for the moon's sense "
            "and eccentricity");
        one("roche_limit_fluid", ref.roche_fluid_m, "m",
            "fluid Roche limit 2.44 R_p (rho_p / rho_s)^(1/3) (0: densities unknown)");
    }
    if (r.edge) {
        const std::string u = r.axes[0].unit;
        f.write_array("/map/edge", std::vector<double>{*r.edge}, {1}, u,
                      "empirical edge: midpoint between the last surviving cell (every cell "
                      "below survived) and the first failing one");
        f.set_attribute("/map/edge", "last_surviving", *r.last_surviving);
        f.set_attribute("/map/edge", "first_failing", *r.first_failing);
    }
    f.flush();
}

} // namespace moonwright
