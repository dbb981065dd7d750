// Resolution of a design into physical values: the tree order, masses and radii, orbits in
// metres, angles drawn from the seed, J2 from rotation.
//
// Order: the star first, then depth first (each planet followed by its moons and their
// submoons), siblings innermost first by semi-major axis (ties keep file order).
//
// Drawn angles: every body with an orbit gets its own generator,
// rng(derive_seed(seed, fnv1a64(name))), and always draws four uniforms in this order:
// inclination in [0, 1) deg, node in [0, 360) deg, argument of pericentre in [0, 360) deg, mean
// anomaly in [0, 360) deg. A written angle replaces its draw; the draw is still consumed, so
// writing one angle, renaming another body or adding a body never changes the other draws.
// A near-coplanar default (under 1 deg) keeps a design close to what people sketch.
//
// Retrograde: with sense = retrograde, an inclination i <= 90 deg (written or drawn) becomes
// 180 deg - i; a written i > 90 deg is already retrograde and kept. A written i > 90 deg with
// sense = prograde is an input error. With no sense written, i > 90 deg means retrograde.
// design.hpp uses source_location without including error.hpp: include it first.
#include "engine/error.hpp"

#include "engine/resolved_system.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/constants.hpp"
#include "engine/error.hpp"
#include "engine/materials.hpp"
#include "engine/random.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <functional>

namespace moonwright {

namespace c = constants;

int resolved_system::find(const std::string& body_name) const {
    for (const auto& b : bodies)
        if (b.name == body_name) return b.index;
    return -1;
}

namespace {

constexpr std::uint64_t default_seed = 1;

/// FNV-1a 64-bit hash (Fowler, Noll & Vo): a platform-independent hash of a body's name.
std::uint64_t fnv1a64(const std::string& s) {
    std::uint64_t h = 0xcbf29ce484222325ULL;
    for (const char ch : s) {
        h ^= static_cast<unsigned char>(ch);
        h *= 0x100000001b3ULL;
    }
    return h;
}

class resolver {
  public:
    resolver(const design& d, std::uint64_t seed) : d_(d), seed_(seed) {}

    resolved_system run() {
        resolved_system out;
        out.name = d_.name;
        out.seed = seed_;
        for (size_t k = 0; k < d_.bodies.size(); ++k)
            for (size_t j = 0; j < k; ++j)
                if (d_.bodies[j].name == d_.bodies[k].name)
                    fail(d_.bodies[k].name, "name", "\"" + d_.bodies[k].name + "\"",
                         "a name no other body has");
        int root = -1;
        for (size_t k = 0; k < d_.bodies.size(); ++k) {
            const auto& b = d_.bodies[k];
            if (!b.orbits.empty()) continue;
            if (root >= 0)
                fail(b.name, "orbits", "(nothing)",
                     fmt::format("the name of the body it orbits: only one star, and '{}' is "
                                 "already it",
                                 d_.bodies[static_cast<size_t>(root)].name));
            root = static_cast<int>(k);
        }
        if (root < 0)
            throw input_error(where(""), "design: no star (a body without `orbits`) was found");
        for (const auto& b : d_.bodies) {
            if (b.orbits.empty()) continue;
            if (std::none_of(d_.bodies.begin(), d_.bodies.end(),
                             [&](const body_spec& o) { return o.name == b.orbits; }))
                fail(b.name, "orbits", "\"" + b.orbits + "\"", "the name of a body in the design");
        }
        bodies_ = &out.bodies;
        add_body(static_cast<size_t>(root), -1, 0);
        place_children(0, 1);
        if (out.bodies.size() != d_.bodies.size()) {
            for (const auto& b : d_.bodies)
                if (out.find(b.name) < 0)
                    fail(b.name, "orbits", "\"" + b.orbits + "\"",
                         "a chain of parents that ends at the star (this one loops)");
        }
        return out;
    }

  private:
    const design& d_;
    std::uint64_t seed_;
    std::vector<resolved_body>* bodies_ = nullptr;

    source_location where(const std::string& field) const {
        const auto it = d_.where.find(field);
        if (it != d_.where.end()) return it->second;
        return source_location{d_.source_name, 0, 0};
    }
    [[noreturn]] void fail(const std::string& body, const std::string& field,
                           const std::string& found, const std::string& expected) const {
        const std::string path = body_field(body, field);
        throw input_error(where(path), path, found, expected);
    }

    /// Resolves mass, radius, density, spin and tides of body k (no orbit yet).
    void add_body(size_t k, int parent, int depth) {
        const body_spec& s = d_.bodies[k];
        resolved_body b;
        b.name = s.name;
        b.kind = depth == 0   ? body_kind::star
                 : depth == 1 ? body_kind::planet
                 : depth == 2 ? body_kind::moon
                              : body_kind::submoon;
        if (s.kind && *s.kind != b.kind) {
            static constexpr const char* names[] = {"star", "planet", "moon", "submoon"};
            fail(s.name, "kind", names[static_cast<int>(*s.kind)],
                 fmt::format("{} (its place in the tree: depth {})",
                             names[static_cast<int>(b.kind)], depth));
        }
        b.index = static_cast<int>(bodies_->size());
        b.parent = parent;
        resolve_physical(s, b);
        b.semi_axes_m = s.semi_axes_m;
        b.rotation_period_s = s.rotation_period_s;
        b.obliquity_rad = s.obliquity_rad;
        b.j4 = s.j4.value_or(0.0);
        if (s.j2) {
            b.j2 = *s.j2;
        } else if (s.rotation_period_s && b.kind != body_kind::star) {
            // J2 = k2_fluid q / 3 (Murray & Dermott Sec. 4.5), k2_fluid by fluid_love_number.
            b.j2 = j2_from_rotation(*s.rotation_period_s, b.radius_m, b.mass_kg,
                                    fluid_love_number(b.mass_kg, b.density_kg_m3));
            b.j2_derived = true;
        }
        b.k2 = s.k2;
        b.tidal_q = s.tidal_q;
        b.time_lag_s = s.time_lag_s;
        b.luminosity_w = s.luminosity_w;
        b.age_s = s.age_s;
        bodies_->push_back(std::move(b));
    }

    double composition_density(const body_spec& s) const {
        std::vector<double> w, rho;
        double sum = 0;
        for (size_t k = 0; k < s.composition.size(); ++k) {
            const auto& m = s.composition[k];
            const auto density = material_density(d_, m.material);
            if (!density)
                fail(s.name, fmt::format("composition[{}].material", k), "\"" + m.material + "\"",
                     "a material from the built-in table or the design's [materials]");
            if (!(m.fraction > 0.0))
                fail(s.name, fmt::format("composition[{}].fraction", k),
                     fmt::format("{}", m.fraction), "a mass fraction > 0");
            w.push_back(m.fraction);
            rho.push_back(*density);
            sum += m.fraction;
        }
        if (std::abs(sum - 1.0) > 1e-3)
            fail(s.name, "composition", fmt::format("fractions summing to {:.6g}", sum),
                 "mass fractions that sum to 1");
        return mixture_density(w, rho);
    }

    /// Mass, radius and density from whichever of them the body gives.
    void resolve_physical(const body_spec& s, resolved_body& b) const {
        std::optional<double> radius = s.radius_m;
        std::string radius_from = "radius";
        if (!radius && s.semi_axes_m) {
            const auto& ax = *s.semi_axes_m;
            radius = volume_equivalent_radius(ax[0], ax[1], ax[2]);
            radius_from = "semi-axes";
        }
        std::optional<double> density = s.density_kg_m3;
        std::string density_from = "density";
        if (!density && !s.composition.empty()) {
            density = composition_density(s);
            density_from = "composition";
        }
        if (s.mass_kg) {
            b.mass_kg = *s.mass_kg;
            if (radius) {
                b.radius_m = *radius;
                b.density_kg_m3 = b.mass_kg / sphere_volume(*radius);
                b.mass_from = "mass+" + radius_from;
            } else if (density) {
                b.density_kg_m3 = *density;
                b.radius_m = std::cbrt(b.mass_kg / (*density * 4.0 / 3.0 * c::pi));
                b.mass_from = "mass+" + density_from;
            } else if (b.kind == body_kind::star) {
                // Main-sequence mass-radius rule R ~ R_sun (M / M_sun)^0.8 (common practice,
                // no source), so a star given by its mass alone still has a size.
                b.radius_m = c::R_sun * std::pow(b.mass_kg / c::M_sun, 0.8);
                b.density_kg_m3 = b.mass_kg / sphere_volume(b.radius_m);
                b.mass_from = "mass (radius from the main-sequence rule)";
            } else {
                fail(s.name, "radius", "(nothing)",
                     "a radius, density, composition or semi-axes beside the mass, so the "
                     "body has a size");
            }
        } else if (radius && density) {
            b.radius_m = *radius;
            b.density_kg_m3 = *density;
            b.mass_kg = *density * sphere_volume(*radius);
            b.mass_from = radius_from + "+" + density_from;
        } else {
            fail(s.name, "mass", "(nothing)",
                 "a mass; or a radius (or semi-axes) with a density or a composition");
        }
        if (!(b.mass_kg > 0.0) || !std::isfinite(b.mass_kg))
            fail(s.name, "mass", fmt::format("{} kg", b.mass_kg), "a mass > 0");
        if (!(b.radius_m > 0.0) || !std::isfinite(b.radius_m))
            fail(s.name, "radius", fmt::format("{} m", b.radius_m), "a radius > 0");
    }

    /// Hill radius of body `idx` around its own parent at its pericentre, or none (the star).
    std::optional<double> hill_of(int idx) const {
        const auto& b = (*bodies_)[static_cast<size_t>(idx)];
        if (b.parent < 0 || !b.orbit) return std::nullopt;
        const auto& p = (*bodies_)[static_cast<size_t>(b.parent)];
        return hill_radius(b.orbit->a_m, b.orbit->e, b.mass_kg, p.mass_kg);
    }

    resolved_orbit resolve_orbit(const body_spec& s, const resolved_body& b,
                                 const resolved_body& parent) const {
        if (!s.orbit) fail(s.name, "orbit", "(nothing)", "an orbit: a (or period) and e");
        const orbit_spec& o = *s.orbit;
        resolved_orbit r;
        if (o.a) {
            switch (o.a->ref) {
            case length_ref::absolute:
                r.a_m = o.a->value;
                break;
            case length_ref::parent_radii:
                r.a_m = o.a->value * parent.radius_m;
                break;
            case length_ref::parent_hill: {
                const auto rh = hill_of(parent.index);
                if (!rh)
                    fail(s.name, "orbit.a", fmt::format("{} RH", o.a->value),
                         fmt::format("a length in m, km, AU or Rp: '{}' orbits nothing, so it "
                                     "has no Hill radius",
                                     parent.name));
                r.a_m = o.a->value * *rh;
                break;
            }
            }
        } else if (o.period_s) {
            if (!(*o.period_s > 0.0))
                fail(s.name, "orbit.period", fmt::format("{} s", *o.period_s), "a period > 0");
            r.a_m = kepler_semi_major_axis(*o.period_s, parent.mass_kg, b.mass_kg);
        } else {
            fail(s.name, "orbit.a", "(nothing)", "a semi-major axis or a period");
        }
        if (!(r.a_m > 0.0) || !std::isfinite(r.a_m))
            fail(s.name, "orbit.a", fmt::format("{} m", r.a_m), "a semi-major axis > 0");
        if (!(o.e >= 0.0 && o.e < 1.0))
            fail(s.name, "orbit.e", fmt::format("{}", o.e), "a bound orbit: 0 <= e < 1");
        r.e = o.e;

        rng gen(derive_seed(seed_, fnv1a64(s.name)));
        const double draw_i = gen.uniform(0.0, 1.0 * c::deg);
        const double draw_node = gen.uniform(0.0, c::two_pi);
        const double draw_peri = gen.uniform(0.0, c::two_pi);
        const double draw_mean = gen.uniform(0.0, c::two_pi);
        r.drawn = {!o.i_rad, !o.node_rad, !o.peri_rad, !o.mean_anomaly_rad};
        r.i_rad = o.i_rad.value_or(draw_i);
        r.node_rad = o.node_rad.value_or(draw_node);
        r.peri_rad = o.peri_rad.value_or(draw_peri);
        r.mean_anomaly_rad = o.mean_anomaly_rad.value_or(draw_mean);
        if (!(r.i_rad >= 0.0 && r.i_rad <= c::pi))
            fail(s.name, "orbit.i", fmt::format("{} deg", r.i_rad / c::deg),
                 "an inclination from 0 to 180 deg");
        const bool written_retro = o.i_rad && *o.i_rad > 0.5 * c::pi;
        if (o.sense == orbit_sense::retrograde) {
            if (!written_retro) r.i_rad = c::pi - r.i_rad;
            r.retrograde = true;
        } else if (o.sense == orbit_sense::prograde && written_retro) {
            fail(s.name, "orbit.i", fmt::format("{} deg", *o.i_rad / c::deg),
                 "an inclination of at most 90 deg for sense = \"prograde\" (or write sense = "
                 "\"retrograde\")");
        } else {
            r.retrograde = written_retro;
        }
        return r;
    }

    /// Resolves the orbits of the children of body `pidx`, sorts them, appends them depth first.
    void place_children(int pidx, int depth) {
        std::vector<int> kids;
        for (size_t k = 0; k < d_.bodies.size(); ++k) {
            if (d_.bodies[k].orbits != (*bodies_)[static_cast<size_t>(pidx)].name) continue;
            add_body(k, pidx, depth);
            auto& child = bodies_->back();
            child.orbit = resolve_orbit(d_.bodies[k], child, (*bodies_)[static_cast<size_t>(pidx)]);
            kids.push_back(child.index);
        }
        if (kids.empty()) return;
        // Sort the freshly added block by semi-major axis (stable: ties keep file order), then
        // move each child's subtree in after it, depth first.
        std::vector<resolved_body> block(bodies_->begin() + kids.front(), bodies_->end());
        bodies_->erase(bodies_->begin() + kids.front(), bodies_->end());
        std::stable_sort(block.begin(), block.end(),
                         [](const auto& x, const auto& y) { return x.orbit->a_m < y.orbit->a_m; });
        for (auto& child : block) {
            child.index = static_cast<int>(bodies_->size());
            (*bodies_)[static_cast<size_t>(pidx)].children.push_back(child.index);
            bodies_->push_back(std::move(child));
            place_children(bodies_->back().index, depth + 1);
        }
    }
};

} // namespace

resolved_system resolve(const design& d, std::optional<std::uint64_t> seed_override) {
    const std::uint64_t seed = seed_override ? *seed_override : d.seed.value_or(default_seed);
    return resolver(d, seed).run();
}

} // namespace moonwright
