// A thousand generated designs end to end: each loads back from its JSON line equal to the
// original, resolves, and gives no error finding under the check; the generator's rules hold on
// the resolved values.
#include "engine/design_generator.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/design_loader.hpp"
#include "engine/resolved_system.hpp"

#include <doctest/doctest.h>
#include <map>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
constexpr std::uint64_t batch_seed = 20261201;
constexpr std::uint64_t batch_size = 1000;

generator_kind kind_of(std::uint64_t k) {
    return k % 3 == 0 ? generator_kind::rocky
                      : (k % 3 == 1 ? generator_kind::giant : generator_kind::mixed);
}

bool has_ice(const design& d, const std::string& name) {
    for (const auto& b : d.bodies)
        if (b.name == name)
            for (const auto& m : b.composition)
                if (m.material.find("ice") != std::string::npos) return true;
    return false;
}
} // namespace

TEST_CASE("1000 generated designs load back from JSON lines and pass the check") {
    int errors = 0, warnings = 0, bodies = 0, moons = 0;
    std::map<std::string, int> codes;
    for (std::uint64_t k = 0; k < batch_size; ++k) {
        const design d = generate_design(batch_seed, k, kind_of(k));
        CAPTURE(k);
        const std::string line = design_to_json_line(d);
        const design back = parse_design(line, design_format::json, "<generated>");
        CHECK(back == d);
        const resolved_system sys = resolve(back);
        const check_report report = run_check(sys);
        for (const auto& f : report.findings) {
            if (f.level == severity::note) continue;
            ++codes[f.code];
            if (f.level == severity::error) {
                ++errors;
                FAIL_CHECK("design " << k << ": " << f.code << ": " << f.message);
            } else {
                ++warnings;
                // The generator keeps the stability and spacing rules with room to spare, so
                // the warnings of those rules do not fire either.
                FAIL_CHECK("design " << k << " warning: " << f.code << ": " << f.message);
            }
        }
        bodies += static_cast<int>(sys.bodies.size());
        for (const auto& b : sys.bodies) moons += b.kind == body_kind::moon;
    }
    CHECK(errors == 0);
    CHECK(warnings == 0);
    // The batch is not trivial: many bodies and moons.
    CHECK(bodies > 4000);
    CHECK(moons > 1500);
    MESSAGE("bodies " << bodies << ", moons " << moons);
}

TEST_CASE("kind rules on resolved designs: rocky has no giants, giant no rocky planets, mixed "
          "has rocky planets inside its giants") {
    for (std::uint64_t k = 0; k < 300; ++k) {
        const generator_kind kind = kind_of(k);
        const resolved_system sys = resolve(generate_design(batch_seed + 1, k, kind));
        CAPTURE(k);
        double outer_rocky = 0, inner_giant = 1e300;
        int rocky = 0, giants = 0;
        for (const auto& b : sys.bodies) {
            if (b.kind != body_kind::planet) continue;
            const bool giant = b.mass_kg >= generated_giant_min_mass_kg;
            // Nothing between the two classes: 4 Earth masses up to 0.05 Jupiter masses.
            CHECK((giant || b.mass_kg <= generated_rocky_max_mass_kg * (1 + 1e-9)));
            if (giant) {
                ++giants;
                inner_giant = std::min(inner_giant, b.orbit->a_m);
            } else {
                ++rocky;
                outer_rocky = std::max(outer_rocky, b.orbit->a_m);
            }
        }
        if (kind == generator_kind::rocky) CHECK(giants == 0);
        if (kind == generator_kind::giant) CHECK(rocky == 0);
        if (kind == generator_kind::mixed) {
            CHECK(outer_rocky < inner_giant);
            if (rocky + giants >= 2) CHECK((rocky >= 1 && giants >= 1));
        }
    }
}

TEST_CASE("moon rules on resolved designs: counts, Roche and stability margins, ice beyond the "
          "snow line") {
    int icy_moons = 0, rocky_zone_moons = 0, retrograde = 0, irregular = 0;
    for (std::uint64_t k = 0; k < 300; ++k) {
        const design d = generate_design(batch_seed + 2, k, kind_of(k));
        const resolved_system sys = resolve(d);
        CAPTURE(k);
        const resolved_body& star = sys.bodies.front();
        const double snow = snow_line(*star.luminosity_w);
        for (const auto& p : sys.bodies) {
            if (p.kind != body_kind::planet) continue;
            const bool giant = p.mass_kg >= generated_giant_min_mass_kg;
            const bool far = p.orbit->a_m > snow;
            const auto count = p.children.size();
            if (giant)
                CHECK(count <= 6);
            else if (far)
                CHECK(count <= 2);
            else
                CHECK(count <= 1);
            for (const int idx : p.children) {
                const resolved_body& m = sys.bodies[static_cast<std::size_t>(idx)];
                const resolved_orbit& o = *m.orbit;
                const double q = o.a_m * (1 - o.e);
                // The generator's margins (1e-3 slack for rounding the written values).
                CHECK(q >= (1 - 1e-3) * generated_roche_margin *
                               roche_limit_fluid(p.radius_m, p.density_kg_m3, m.density_kg_m3));
                CHECK(q >= (1 - 1e-3) * generated_roche_margin * (p.radius_m + m.radius_m));
                CHECK(o.a_m <= (1 + 1e-3) * generated_stability_fraction *
                                   stability_limit(p.orbit->a_m, p.orbit->e, p.mass_kg,
                                                   star.mass_kg, o.e, false));
                CHECK(m.mass_kg <= 0.0151 * p.mass_kg); // at most 1.5 % of the planet
                // Icy moons beyond the snow line; rock near the star (common practice).
                if (far) {
                    ++icy_moons;
                    CHECK((has_ice(d, m.name) || m.density_kg_m3 < icy_density_below_kg_m3));
                } else {
                    ++rocky_zone_moons;
                    CHECK_FALSE(has_ice(d, m.name));
                    CHECK(m.density_kg_m3 >= 1500.0 - 1e-9);
                }
                retrograde += o.retrograde;
                irregular += m.semi_axes_m.has_value();
            }
        }
    }
    // All branches of the generator were exercised.
    CHECK(icy_moons > 100);
    CHECK(rocky_zone_moons > 10);
    CHECK(retrograde > 10);
    CHECK(irregular > 100);
}
