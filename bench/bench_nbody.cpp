// Wisdom–Holman map speed on the reference moon system: ns per body-step. The machine is
// noisy; for a repeatable count run it under callgrind, collecting only the map, e.g.
//   valgrind --tool=callgrind --toggle-collect='moonwright::wisdom_holman::advance*'
//     bench_nbody --benchmark_min_time=0.01
// (one iteration of 1000 steps: instructions / 7000 = instructions per body-step).
#include "engine/constants.hpp"
#include "engine/nbody_system.hpp"
#include "engine/resolved_system.hpp"
#include "integrators/wisdom_holman.hpp"

#include <benchmark/benchmark.h>

#include <cmath>

namespace {

using namespace moonwright;
namespace c = moonwright::constants;

resolved_orbit circular(double a, double i, double m) {
    resolved_orbit o;
    o.a_m = a;
    o.e = 0.001;
    o.i_rad = i;
    o.mean_anomaly_rad = m;
    return o;
}

/// Sun-like star; planet of 1.2 Earth masses at 1 AU, e = 0.02; five moons of 1e-2, 1e-4,
/// 1e-5, 1e-5, 1e-6 Earth masses, near-circular and prograde at 5, 12, 25, 45, 70 planet radii.
resolved_system reference_system() {
    resolved_system rs;
    auto add = [&](const char* name, body_kind kind, int parent, double mass, double radius,
                   std::optional<resolved_orbit> o) {
        resolved_body b;
        b.name = name;
        b.kind = kind;
        b.index = static_cast<int>(rs.bodies.size());
        b.parent = parent;
        b.mass_kg = mass;
        b.radius_m = radius;
        b.orbit = o;
        rs.bodies.push_back(b);
        if (parent >= 0) rs.bodies[static_cast<std::size_t>(parent)].children.push_back(b.index);
    };
    const double rp = 1.2 * c::R_earth; // planet radius, about R_earth (1.2)^(1/3.7)
    add("Hale", body_kind::star, -1, c::M_sun, c::R_sun, {});
    resolved_orbit po = circular(c::au, 0.0, 0.5);
    po.e = 0.02;
    add("Hale b", body_kind::planet, 0, 1.2 * c::M_earth, rp, po);
    const double masses[5] = {1e-2, 1e-4, 1e-5, 1e-5, 1e-6};
    const double dist[5] = {5, 12, 25, 45, 70};
    const char* names[5] = {"Hale b I", "Hale b II", "Hale b III", "Hale b IV", "Hale b V"};
    for (int k = 0; k < 5; ++k) {
        add(names[k], body_kind::moon, 1, masses[k] * c::M_earth, 1e6,
            circular(dist[k] * rp, 0.01 * (k + 1), 1.3 * k));
    }
    return rs;
}

void wh_reference_system(benchmark::State& state) {
    const nbody_system sys = build_nbody(reference_system());
    wisdom_holman wh(sys);
    const std::size_t steps_per_iteration = 1000;
    for (auto _ : state) {
        wh.advance(steps_per_iteration);
        benchmark::ClobberMemory();
    }
    const double body_steps = static_cast<double>(state.iterations()) *
                              static_cast<double>(steps_per_iteration) *
                              static_cast<double>(sys.size());
    state.counters["ns_per_body_step"] = benchmark::Counter(
        body_steps * 1e-9, benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
    state.counters["bodies"] = static_cast<double>(sys.size());
}
BENCHMARK(wh_reference_system)->Unit(benchmark::kMillisecond);

} // namespace

BENCHMARK_MAIN();
