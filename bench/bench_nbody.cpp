// Wisdom–Holman map speed on the reference moon system: ns per body-step. The machine is
// noisy; for a repeatable count run it under callgrind, collecting only the map, e.g.
//   valgrind --tool=callgrind --toggle-collect='moonwright::wisdom_holman::advance*'
//     bench_nbody --benchmark_min_time=0.01
// (one iteration of 1000 steps: instructions / 7000 = instructions per body-step).
#include "engine/nbody_system.hpp"
#include "integrators/wisdom_holman.hpp"
#include "reference_moon_system.hpp"

#include <benchmark/benchmark.h>

namespace {

using namespace moonwright;

void time_map(benchmark::State& state, const wh_options& options) {
    const nbody_system sys = build_nbody(bench::reference_moon_system());
    wisdom_holman wh(sys, {}, options);
    const std::size_t steps_per_iteration = 1000;
    for (auto _ : state) {
        wh.advance(steps_per_iteration);
        benchmark::ClobberMemory();
    }
    const double body_steps = static_cast<double>(state.iterations()) *
                              static_cast<double>(steps_per_iteration) *
                              static_cast<double>(sys.size());
    // Seconds per body-step, printed with an SI prefix (e.g. "57.5ns").
    state.counters["time_per_body_step"] =
        benchmark::Counter(body_steps, benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
    state.counters["bodies"] = static_cast<double>(sys.size());
}

/// The plain map (kick–drift–kick, no corrector).
void wh_reference_system(benchmark::State& state) {
    time_map(state, {});
}
BENCHMARK(wh_reference_system)->Unit(benchmark::kMillisecond);

/// The map with its order-7 corrector and the modified kick (a corrector costs nothing per
/// step: it is applied only when the state is read).
void wh_modified_kick(benchmark::State& state) {
    wh_options o;
    o.corrector_order = 7;
    o.modified_kick = true;
    time_map(state, o);
}
BENCHMARK(wh_modified_kick)->Unit(benchmark::kMillisecond);

} // namespace

BENCHMARK_MAIN();
