// Generated designs: a main-sequence star, one to three planets and their moons, drawn from a
// seed by common-practice rules and placed so that the analytic check finds no error.
//
// Every design has its own generator, rng(derive_seed(seed, index, kind)), so design k is the
// same whatever the batch size or order. Drawn numbers are rounded to three or four significant
// digits in the unit a person would use, then every later step works from the rounded value,
// so what is written is exactly what was checked while placing the bodies.
#include "engine/design_generator.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/materials.hpp"
#include "engine/random.hpp"

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <ostream>
#include <sstream>

namespace moonwright {

namespace c = constants;

std::string_view generator_kind_name(generator_kind k) {
    switch (k) {
    case generator_kind::rocky:
        return "rocky";
    case generator_kind::giant:
        return "giant";
    case generator_kind::mixed:
        return "mixed";
    }
    return "mixed";
}

std::optional<generator_kind> parse_generator_kind(std::string_view name) {
    for (const auto k : {generator_kind::rocky, generator_kind::giant, generator_kind::mixed})
        if (generator_kind_name(k) == name) return k;
    return std::nullopt;
}

double snow_line(double luminosity_w) {
    // 2.7 AU for the Sun (Hayashi 1981, from memory), scaled with the square root of the
    // luminosity (equilibrium temperature ~ L^(1/4) / d^(1/2); common practice).
    return 2.7 * c::au * std::sqrt(luminosity_w / c::L_sun);
}

namespace {

/// Rounds to `digits` significant digits.
double round_sig(double x, int digits) {
    if (x == 0.0 || !std::isfinite(x)) return x;
    const double scale =
        std::pow(10.0, digits - 1 - static_cast<int>(std::floor(std::log10(std::abs(x)))));
    return std::round(x * scale) / scale;
}

/// Rounds a value given in `unit` (SI value of one unit) to `digits` significant digits.
double round_in(double si, double unit, int digits) {
    return round_sig(si / unit, digits) * unit;
}

/// The physical side of a body as the resolver will find it.
struct physical {
    double mass = 0, radius = 0, density = 0;
};

/// An orbit as placed (SI), before it is written.
struct placed_orbit {
    double a = 0, e = 0;
};

/// A planet as drawn: its spec index in the design and what later steps need.
struct planet_plan {
    std::size_t spec = 0;
    bool giant = false;
    physical phys;
    placed_orbit orbit;
};

/// Smallest semi-major axis of an outer neighbour (mass m2, eccentricity e2) of an inner body
/// (a1, e1, m1) around M, so that the pair is at least `spacing` mutual Hill radii apart
/// (Chambers, Wetherill & Boss 1996 definition) and the outer pericentre lies at least two
/// mutual Hill radii beyond the inner apocentre (common practice, no source). Returns a
/// negative value when no distance works (the pair is too heavy for its parent).
double min_outer_a(double a1, double e1, double m1, double m2, double e2, double big_m,
                   double spacing) {
    const double h = std::cbrt((m1 + m2) / (3.0 * big_m));
    // Spacing s: a2 - a1 = s h (a1 + a2) / 2  =>  a2 = a1 (1 + x) / (1 - x), x = s h / 2.
    const double x = spacing * h / 2.0;
    // Orbit gap: a2 (1 - e2) - a1 (1 + e1) >= 2 h (a1 + a2) / 2.
    const double den = 1.0 - e2 - h;
    if (x >= 1.0 || den <= 0.0) return -1.0;
    return std::max(a1 * (1.0 + x) / (1.0 - x), a1 * (1.0 + e1 + h) / den);
}

// Invented names: two or three syllables from these lists (our own scheme).
constexpr std::array<const char*, 24> onsets{"b",  "d",  "f",  "g",  "k",  "l",  "m",  "n",
                                             "p",  "r",  "s",  "t",  "v",  "z",  "th", "sh",
                                             "kr", "tr", "dr", "br", "vh", "qu", "",   ""};
constexpr std::array<const char*, 10> vowels{"a", "e", "i", "o", "u", "ae", "ei", "ou", "ia", "y"};
constexpr std::array<const char*, 11> codas{"", "", "", "", "n", "r", "s", "l", "th", "m", "nd"};

class generator {
  public:
    generator(std::uint64_t seed, std::uint64_t index, generator_kind kind)
        : r_(derive_seed(seed, index, 1 + static_cast<std::uint64_t>(kind))), kind_(kind) {
        d_.description = fmt::format("Generated design {} of seed {}, kind {}: drawn by "
                                     "common-practice rules, not a real system.",
                                     index, seed, generator_kind_name(kind));
        // The seed for angles left out; the loader takes 0 .. 2^63 - 1.
        d_.seed = derive_seed(seed, index, 0x100 + static_cast<std::uint64_t>(kind)) >> 1;
    }

    design run() {
        add_star();
        d_.name = star().name;
        const std::vector<bool> giants = planet_classes();
        std::vector<planet_plan> planets;
        for (std::size_t k = 0; k < giants.size(); ++k) {
            planet_plan p = draw_planet(giants[k]);
            if (!place_planet(p, planets.empty() ? nullptr : &planets.back())) break;
            planets.push_back(p);
        }
        // Moons after all planets, so a planet's moons follow it in the file.
        std::vector<body_spec> ordered{star()};
        for (const auto& p : planets) {
            ordered.push_back(d_.bodies[p.spec]);
            for (auto& m : moons_of(p)) ordered.push_back(std::move(m));
        }
        d_.bodies = std::move(ordered);
        return std::move(d_);
    }

  private:
    rng r_;
    generator_kind kind_;
    design d_;
    physical star_;
    double luminosity_ = 0, snow_ = 0;
    bool custom_ice_ = false;
    std::vector<std::string> names_; ///< every name given so far: names are unique

    body_spec& star() { return d_.bodies.front(); }

    // --- draws -----------------------------------------------------------------------------
    double uniform(double lo, double hi) { return r_.uniform(lo, hi); }
    double log_uniform(double lo, double hi) {
        return lo * std::exp(r_.uniform() * std::log(hi / lo));
    }
    bool chance(double p) { return r_.uniform() < p; }
    int pick(int lo, int hi) { // inclusive
        const int n = hi - lo + 1;
        return lo + std::min(n - 1, static_cast<int>(r_.uniform() * n));
    }
    template <class Array>
    const char* pick_from(const Array& list) {
        return list[static_cast<std::size_t>(pick(0, static_cast<int>(list.size()) - 1))];
    }

    /// A made-up name from two or three syllables, unique within the design.
    std::string invent_name() {
        for (;;) {
            std::string name;
            const int syllables = chance(0.6) ? 2 : 3;
            for (int s = 0; s < syllables; ++s) {
                name += pick_from(onsets);
                name += pick_from(vowels);
                if (s + 1 == syllables || chance(0.3)) name += pick_from(codas);
            }
            if (name.size() < 3 || name.size() > 12) continue;
            name[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(name[0])));
            if (std::find(names_.begin(), names_.end(), name) == names_.end()) {
                names_.push_back(name);
                return name;
            }
        }
    }

    /// Density of a mixture as the resolver computes it (materials table, ideal mixing).
    double composition_density(const std::vector<material_fraction>& comp) const {
        std::vector<double> w, rho;
        for (const auto& m : comp) {
            w.push_back(m.fraction);
            rho.push_back(material_density(d_, m.material).value());
        }
        return mixture_density(w, rho);
    }

    // --- star --------------------------------------------------------------------------------
    void add_star() {
        body_spec s;
        s.name = invent_name();
        s.kind = body_kind::star;
        // Main sequence, 0.5 to 1.4 solar masses (common practice, no source).
        const double m = round_sig(uniform(0.5, 1.4), 3);
        s.mass_kg = m * c::M_sun;
        // Mass-radius R ~ M^0.8 and mass-luminosity L ~ M^4 on the main sequence, in solar
        // units (common practice, no source).
        const double radius = round_sig(std::pow(m, 0.8), 3) * c::R_sun;
        luminosity_ = round_sig(std::pow(m, 4.0), 3) * c::L_sun;
        // Main-sequence lifetime ~ 10 Gyr (M / M_sun)^-2.5 (common practice, no source); the
        // age is drawn within most of it.
        const double lifetime_gyr = 10.0 * std::pow(m, -2.5);
        s.age_s = round_sig(uniform(0.5, std::min(9.0, 0.8 * lifetime_gyr)), 2) * c::Gyr;
        s.luminosity_w = luminosity_;
        star_.mass = *s.mass_kg;
        if (chance(0.75)) {
            s.radius_m = radius;
            star_.radius = radius;
        } else {
            // Left out: the resolver applies the same main-sequence rule to the mass.
            star_.radius = c::R_sun * std::pow(m, 0.8);
        }
        star_.density = star_.mass / sphere_volume(star_.radius);
        snow_ = snow_line(luminosity_);
        d_.bodies.push_back(std::move(s));
    }

    // --- planets -----------------------------------------------------------------------------
    /// Giant or not for each planet, innermost first: rocky planets lie inside the giants.
    std::vector<bool> planet_classes() {
        const int n = pick(1, 3);
        std::vector<bool> giant(static_cast<std::size_t>(n), kind_ == generator_kind::giant);
        if (kind_ == generator_kind::mixed) {
            // At least one of each when there are two or more planets.
            const int rocky = n == 1 ? pick(0, 1) : pick(1, n - 1);
            for (int k = 0; k < n; ++k) giant[static_cast<std::size_t>(k)] = k >= rocky;
        }
        return giant;
    }

    planet_plan draw_planet(bool giant) {
        planet_plan p;
        p.giant = giant;
        body_spec b;
        b.name = invent_name();
        b.kind = body_kind::planet;
        b.orbits = star().name;
        physical& ph = p.phys;
        if (!giant) {
            // Rocky: 0.1 to 4 Earth masses, R = R_earth (M / M_earth)^0.27 (the usual
            // super-Earth power law; common practice, no source), Earth-like bulk densities.
            const double me =
                round_sig(log_uniform(0.1, generated_rocky_max_mass_kg / c::M_earth), 3);
            ph.radius = round_in(c::R_earth * std::pow(me, 0.27) * uniform(0.97, 1.03), 1e3, 4);
            const double u = r_.uniform();
            if (u < 0.45) {
                ph.mass = me * c::M_earth;
                b.mass_kg = ph.mass;
                b.radius_m = ph.radius;
            } else if (u < 0.8 || me >= 0.5) {
                ph.density = round_sig(me * c::M_earth / sphere_volume(ph.radius), 3);
                b.radius_m = ph.radius;
                b.density_kg_m3 = ph.density;
            } else {
                // Small rocky planets: an iron core in silicate, uncompressed (Mars-like).
                const double iron = round_sig(uniform(0.15, 0.35), 2);
                const char* mantle = chance(0.5) ? "rock" : (chance(0.5) ? "olivine" : "basalt");
                b.composition = {{"iron", iron}, {mantle, 1.0 - iron}};
                b.radius_m = ph.radius;
            }
            if (chance(0.8)) b.rotation_period_s = round_sig(uniform(10.0, 60.0), 3) * c::hour;
            if (chance(0.6)) b.obliquity_rad = round_sig(uniform(0.0, 35.0), 3) * c::deg;
            if (chance(0.5)) {
                // Earth-like tidal response: k2 ~ 0.3, Q ~ 10-100 (common practice, no source).
                b.k2 = round_sig(uniform(0.25, 0.35), 2);
                b.tidal_q = round_sig(uniform(10.0, 100.0), 2);
            }
        } else {
            // Giant: 0.05 to 3 Jupiter masses; radius ~ R_jup (M / M_jup)^0.4 below a Jupiter
            // mass and about R_jup above (common practice, no source).
            const double mj =
                round_sig(log_uniform(generated_giant_min_mass_kg / c::M_jup, 3.0), 3);
            ph.radius =
                round_in(c::R_jup * std::min(1.0, std::pow(mj, 0.4)) * uniform(0.95, 1.08), 1e3, 4);
            if (chance(0.7)) {
                ph.mass = mj * c::M_jup;
                b.mass_kg = ph.mass;
                b.radius_m = ph.radius;
            } else {
                ph.density = round_sig(mj * c::M_jup / sphere_volume(ph.radius), 3);
                b.radius_m = ph.radius;
                b.density_kg_m3 = ph.density;
            }
            if (chance(0.8)) b.rotation_period_s = round_sig(uniform(9.0, 18.0), 3) * c::hour;
            if (chance(0.6)) b.obliquity_rad = round_sig(uniform(0.0, 30.0), 3) * c::deg;
            if (chance(0.5)) {
                // Jupiter-like: k2 ~ 0.4-0.5, Q ~ 1e4-1e5 (common practice, no source).
                b.k2 = round_sig(uniform(0.35, 0.5), 2);
                b.tidal_q = round_sig(log_uniform(1e4, 1e5), 2);
            }
        }
        // Complete the physical values the way the resolver will.
        if (ph.mass == 0.0 && ph.density > 0.0) ph.mass = ph.density * sphere_volume(ph.radius);
        if (ph.mass == 0.0) {
            ph.density = composition_density(b.composition);
            ph.mass = ph.density * sphere_volume(ph.radius);
        }
        ph.density = ph.mass / sphere_volume(ph.radius);
        p.spec = d_.bodies.size();
        d_.bodies.push_back(std::move(b));
        return p;
    }

    /// Places a planet outside `inner` (or at its first orbit); false when it does not fit.
    bool place_planet(planet_plan& p, const planet_plan* inner) {
        body_spec& b = d_.bodies[p.spec];
        // Low eccentricities (common practice, no source): they keep the moons' room large.
        p.orbit.e = round_sig(uniform(0.0, p.giant ? 0.06 : 0.1), 2);
        const double sq = std::sqrt(luminosity_ / c::L_sun);
        double a = 0;
        if (!inner) {
            // Rocky planets from 0.4 to 1.6 AU scaled with sqrt(L) (around the temperate
            // zone); giants beyond the snow line (common practice, no source).
            a = p.giant ? snow_ * uniform(1.0, 2.0) : uniform(0.4, 1.6) * c::au * sq;
        } else {
            const double lo =
                min_outer_a(inner->orbit.a, inner->orbit.e, inner->phys.mass, p.phys.mass,
                            p.orbit.e, star_.mass, generated_min_hill_spacing);
            if (lo <= 0) return false;
            a = lo * uniform(1.0, 1.5);
            if (p.giant) a = std::max(a, snow_ * uniform(1.0, 1.3));
        }
        a = round_in(a, c::au, 4);
        if (a > 60.0 * c::au) return false; // keep systems compact enough to integrate
        orbit_spec o;
        if (chance(0.2)) {
            // Given by its period; the resolver turns it back into a with Kepler's third law.
            const double period = round_in(kepler_period(a, star_.mass, p.phys.mass), c::day, 5);
            o.period_s = period;
            a = kepler_semi_major_axis(period, star_.mass, p.phys.mass);
        } else {
            o.a = quantity{a, length_ref::absolute};
        }
        p.orbit.a = a;
        o.e = p.orbit.e;
        write_angles(o, 3.0 * c::deg, false);
        b.orbit = o;
        return true;
    }

    /// Writes some of i, node, peri and mean anomaly; the others are drawn when resolved.
    void write_angles(orbit_spec& o, double max_i, bool retrograde) {
        if (chance(0.5)) {
            o.i_rad = retrograde ? round_sig(uniform(150.0, 175.0), 3) * c::deg
                                 : round_sig(uniform(0.0, max_i / c::deg), 3) * c::deg;
        }
        if (chance(0.5)) o.node_rad = round_sig(uniform(0.0, 360.0), 3) * c::deg;
        if (chance(0.5)) o.peri_rad = round_sig(uniform(0.0, 360.0), 3) * c::deg;
        if (chance(0.5)) o.mean_anomaly_rad = round_sig(uniform(0.0, 360.0), 3) * c::deg;
        if (retrograde)
            o.sense = orbit_sense::retrograde;
        else if (chance(0.2))
            o.sense = orbit_sense::prograde;
    }

    // --- moons -------------------------------------------------------------------------------
    /// A major (round) moon of a planet of mass `m_planet`.
    body_spec draw_major_moon(const planet_plan& p, bool icy, physical& ph) {
        body_spec b;
        b.name = invent_name();
        b.kind = body_kind::moon;
        // Giants: each major moon 1e-5 to 1.5e-4 of the planet's mass (the Galilean moons and
        // Titan are 2e-5 to 2.4e-4; from memory). Rocky planets: 0.2 to 1.5 percent (the Moon
        // is 1.2 percent of the Earth; from memory).
        const double ratio = p.giant ? log_uniform(1e-5, 1.5e-4) : log_uniform(2e-3, 1.5e-2);
        const double mass = round_sig(ratio * p.phys.mass, 3);
        if (icy) {
            // Ice and rock, about half and half by mass (common practice, no source).
            const double ice = round_sig(uniform(0.35, 0.55), 2);
            b.composition = {{"ice", ice}, {"rock", 1.0 - ice}};
        } else {
            const double iron = round_sig(uniform(0.02, 0.2), 2);
            b.composition = {{"iron", iron}, {"rock", 1.0 - iron}};
        }
        const double rho = composition_density(b.composition);
        const double u = r_.uniform();
        if (u < 0.6) {
            b.mass_kg = mass;
            ph = {mass, std::cbrt(mass / (rho * 4.0 / 3.0 * c::pi)), rho};
        } else if (u < 0.8) {
            const double radius = round_in(std::cbrt(mass / (rho * 4.0 / 3.0 * c::pi)), 1e3, 4);
            b.radius_m = radius;
            ph = {rho * sphere_volume(radius), radius, rho};
        } else {
            const double rounded = round_sig(rho, 3);
            b.composition.clear();
            b.mass_kg = mass;
            b.density_kg_m3 = rounded;
            ph = {mass, std::cbrt(mass / (rounded * 4.0 / 3.0 * c::pi)), rounded};
        }
        return b;
    }

    /// A small irregular moon: three semi-axes and a porous density.
    body_spec draw_small_moon(bool icy, physical& ph) {
        body_spec b;
        b.name = invent_name();
        b.kind = body_kind::moon;
        // 3 to 100 km mean radius, axis ratios b/a and c/b from 0.6 to 0.95 (common
        // practice, no source).
        const double r = log_uniform(3e3, 100e3);
        const double ba = uniform(0.6, 0.95), cb = uniform(0.6, 0.95);
        const double big_a = r / std::cbrt(ba * ba * cb); // a b c = r^3
        std::array<double, 3> ax{round_in(big_a, 1e3, 3), round_in(big_a * ba, 1e3, 3),
                                 round_in(big_a * ba * cb, 1e3, 3)};
        std::sort(ax.begin(), ax.end(), [](double x, double y) { return x > y; });
        b.semi_axes_m = ax;
        double rho = 0;
        if (chance(0.75)) {
            // Porous bodies: icy 0.9-1.6 g/cm3, rocky 1.5-2.6 g/cm3 (common practice, no source).
            rho = round_sig(icy ? uniform(900.0, 1600.0) : uniform(1500.0, 2600.0), 3);
            b.density_kg_m3 = rho;
        } else {
            if (icy && !custom_ice_ && chance(0.3)) {
                // A material of the design's own: porous ice (common practice, no source).
                d_.materials.push_back({"porous_ice", round_sig(uniform(500.0, 800.0), 2),
                                        "generated: porous water ice, common practice, no source"});
                custom_ice_ = true;
            }
            if (icy) {
                const double ice = round_sig(uniform(0.3, 0.6), 2);
                b.composition = {{custom_ice_ ? "porous_ice" : "ice", ice},
                                 {"carbonaceous", 1.0 - ice}};
            } else {
                b.composition = {{"carbonaceous", 1.0}};
            }
            rho = composition_density(b.composition);
        }
        const double radius = volume_equivalent_radius(ax[0], ax[1], ax[2]);
        ph = {rho * sphere_volume(radius), radius, rho};
        return b;
    }

    /// The moons of a planet, innermost first, each placed between a safe distance outside the
    /// fluid Roche limit and well inside the stability limit, spaced from its inner neighbour.
    std::vector<body_spec> moons_of(const planet_plan& p) {
        const bool icy = p.orbit.a > snow_;
        int count = 0, majors = 0;
        if (p.giant) {
            // Giants: two to six moons, one to four of them major (common practice, no source).
            count = pick(2, 6);
            majors = pick(1, std::min(4, count));
        } else if (icy) {
            // Distant rocky planets: up to two moons, a major one now and then.
            count = pick(0, 2);
            majors = count > 0 && chance(0.2) ? 1 : 0;
        } else {
            // Inner rocky planets: mostly none; a major moon is rare (common practice, no source).
            count = chance(0.4) ? 1 : 0;
            majors = count > 0 && chance(0.25) ? 1 : 0;
        }
        std::vector<body_spec> out;
        physical prev_ph;
        placed_orbit prev;
        const double hill = hill_radius(p.orbit.a, p.orbit.e, p.phys.mass, star_.mass);
        const std::string& parent = d_.bodies[p.spec].name;
        for (int k = 0; k < count; ++k) {
            const bool major = k < majors;
            physical ph;
            body_spec b = major ? draw_major_moon(p, icy, ph) : draw_small_moon(icy, ph);
            const double e = round_sig(uniform(0.0, major ? 0.02 : 0.15), 2);
            const double inner_bound =
                generated_roche_margin *
                std::max(roche_limit_fluid(p.phys.radius, p.phys.density, ph.density),
                         p.phys.radius + ph.radius) /
                (1.0 - e);
            double lo = inner_bound;
            if (!out.empty()) {
                const double spaced = min_outer_a(prev.a, prev.e, prev_ph.mass, ph.mass, e,
                                                  p.phys.mass, generated_min_hill_spacing);
                if (spaced <= 0) break;
                lo = std::max(lo, spaced);
            }
            const double hi =
                generated_stability_fraction *
                stability_limit(p.orbit.a, p.orbit.e, p.phys.mass, star_.mass, e, false);
            // Leave room for rounding the written value (four digits).
            if (lo * 1.001 >= hi * 0.999) break;
            double a = lo * log_uniform(1.0, std::min(major ? 2.0 : 4.0, hi * 0.999 / lo));
            a = std::max(a, lo * 1.0005);
            orbit_spec o;
            const double u = r_.uniform();
            if (u < 0.25) {
                const double f = round_sig(a / p.phys.radius, 4);
                o.a = quantity{f, length_ref::parent_radii};
                a = f * p.phys.radius;
            } else if (u < 0.4) {
                const double f = round_sig(a / hill, 4);
                o.a = quantity{f, length_ref::parent_hill};
                a = f * hill;
            } else {
                a = round_in(a, 1e3, 4);
                o.a = quantity{a, length_ref::absolute};
            }
            o.e = e;
            // Small outer moons of giants are often retrograde (common practice, no source).
            const bool retro = !major && p.giant && chance(0.3);
            write_angles(o, major ? 1.0 * c::deg : 25.0 * c::deg, retro);
            b.orbits = parent;
            b.orbit = o;
            prev = {a, e};
            prev_ph = ph;
            out.push_back(std::move(b));
        }
        return out;
    }
};

/// Removes the layout whitespace of JSON (outside strings): a pretty document becomes one line.
std::string compact_json(std::string_view pretty) {
    std::string out;
    out.reserve(pretty.size());
    bool in_string = false, escaped = false;
    for (const char ch : pretty) {
        if (in_string) {
            out += ch;
            if (escaped)
                escaped = false;
            else if (ch == '\\')
                escaped = true;
            else if (ch == '"')
                in_string = false;
        } else if (ch == '"') {
            in_string = true;
            out += ch;
        } else if (ch != ' ' && ch != '\n' && ch != '\r' && ch != '\t') {
            out += ch;
        }
    }
    return out;
}

} // namespace

design generate_design(std::uint64_t seed, std::uint64_t index, generator_kind kind) {
    return generator(seed, index, kind).run();
}

std::string design_to_json_line(const design& d) {
    return compact_json(design_to_json(d));
}

void write_generated_json_lines(std::ostream& out, std::uint64_t seed, std::uint64_t first,
                                std::uint64_t count, generator_kind kind) {
    for (std::uint64_t k = 0; k < count; ++k) {
        out << design_to_json_line(generate_design(seed, first + k, kind)) << '\n';
        if (!out) throw io_error(fmt::format("cannot write generated design {}", first + k));
    }
}

std::string generate_json_lines(std::uint64_t seed, std::uint64_t count, generator_kind kind) {
    std::ostringstream out;
    write_generated_json_lines(out, seed, 0, count, kind);
    return std::move(out).str();
}

std::string generated_file_name(std::uint64_t index, const design& d, std::string_view extension) {
    std::string name;
    for (const char ch : d.name)
        name += std::isalnum(static_cast<unsigned char>(ch))
                    ? static_cast<char>(std::tolower(static_cast<unsigned char>(ch)))
                    : '_';
    return fmt::format("{:06}-{}.{}", index, name, extension);
}

std::vector<std::string> write_generated_toml_files(const std::string& folder, std::uint64_t seed,
                                                    std::uint64_t first, std::uint64_t count,
                                                    generator_kind kind) {
    namespace fs = std::filesystem;
    std::error_code ec;
    fs::create_directories(folder, ec);
    if (ec || !fs::is_directory(folder))
        throw io_error(fmt::format("cannot create the folder {}: {}", folder,
                                   ec ? ec.message() : "not a directory"));
    std::vector<std::string> paths;
    for (std::uint64_t k = 0; k < count; ++k) {
        const design d = generate_design(seed, first + k, kind);
        const std::string path =
            (fs::path(folder) / generated_file_name(first + k, d, "toml")).string();
        std::ofstream f(path, std::ios::binary | std::ios::trunc);
        f << design_to_toml(d);
        f.close();
        if (!f) throw io_error(fmt::format("cannot write {}", path));
        paths.push_back(path);
    }
    return paths;
}

} // namespace moonwright
