// Speed of the analytic check: resolve + run_check + both renderers on a 20-body design
// (a star, 3 planets, 16 moons) built in code.
#include "engine/constants.hpp"
#include "engine/error.hpp"

#include "engine/design_check.hpp"

#include <benchmark/benchmark.h>
#include <string>

namespace {

using namespace moonwright;
namespace c = moonwright::constants;

body_spec body(const std::string& name, const std::string& orbits, double mass, double radius,
               double a, double e) {
    body_spec b;
    b.name = name;
    b.orbits = orbits;
    b.mass_kg = mass;
    b.radius_m = radius;
    orbit_spec o;
    o.a = quantity{a, length_ref::absolute};
    o.e = e;
    b.orbit = o; // angles left out: drawn from the seed, as in a generated design
    return b;
}

/// Invented system: 3 planets with 6, 5 and 5 moons.
design twenty_bodies() {
    design d;
    d.name = "bench twenty";
    body_spec star;
    star.name = "Primary";
    star.mass_kg = c::M_sun;
    star.radius_m = c::R_sun;
    d.bodies.push_back(star);
    const int moons[] = {6, 5, 5};
    for (int p = 0; p < 3; ++p) {
        const std::string pname = "Planet " + std::to_string(p + 1);
        body_spec planet = body(pname, "Primary", 50.0 * c::M_earth, 4.0 * c::R_earth,
                                (1.0 + 1.5 * p) * c::au, 0.02 * p);
        planet.rotation_period_s = 12.0 * c::hour;
        d.bodies.push_back(planet);
        for (int m = 0; m < moons[p]; ++m)
            d.bodies.push_back(body(pname + " moon " + std::to_string(m + 1), pname, 1e21 * (m + 1),
                                    5e5, 1e8 * (1.0 + 0.6 * m), 0.01 * m));
    }
    return d;
}

void bm_resolve_check_render(benchmark::State& state) {
    const design d = twenty_bodies();
    for (auto _ : state) {
        const check_report r = run_check(resolve(d));
        std::string text = render_check_text(r);
        std::string json = render_check_json(r);
        benchmark::DoNotOptimize(text.data());
        benchmark::DoNotOptimize(json.data());
    }
}
BENCHMARK(bm_resolve_check_render);

void bm_resolve_only(benchmark::State& state) {
    const design d = twenty_bodies();
    for (auto _ : state) {
        resolved_system s = resolve(d);
        benchmark::DoNotOptimize(s.bodies.data());
    }
}
BENCHMARK(bm_resolve_only);

void bm_check_only(benchmark::State& state) {
    const resolved_system s = resolve(twenty_bodies());
    for (auto _ : state) {
        check_report r = run_check(s);
        benchmark::DoNotOptimize(r.findings.data());
    }
}
BENCHMARK(bm_check_only);

} // namespace
