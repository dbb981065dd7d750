// Designs generated per second: drawing alone, drawing plus the compact JSON line, and drawing
// plus resolution and the analytic check, side by side so the ratios show what each step costs.
#include "engine/design_check.hpp"
#include "engine/design_generator.hpp"
#include "engine/resolved_system.hpp"

#include <benchmark/benchmark.h>

namespace {

using moonwright::generator_kind;

generator_kind kind_arg(const benchmark::State& state) {
    return static_cast<generator_kind>(state.range(0));
}

void bm_generate_design(benchmark::State& state) {
    const generator_kind kind = kind_arg(state);
    std::uint64_t index = 0;
    for (auto _ : state) benchmark::DoNotOptimize(moonwright::generate_design(7, index++, kind));
    state.SetItemsProcessed(state.iterations());
    state.SetLabel(std::string(moonwright::generator_kind_name(kind)));
}

void bm_generate_json_line(benchmark::State& state) {
    const generator_kind kind = kind_arg(state);
    std::uint64_t index = 0;
    std::size_t bytes = 0;
    for (auto _ : state) {
        const std::string line =
            moonwright::design_to_json_line(moonwright::generate_design(7, index++, kind));
        bytes += line.size() + 1;
        benchmark::DoNotOptimize(line.data());
    }
    state.SetItemsProcessed(state.iterations());
    state.SetBytesProcessed(static_cast<std::int64_t>(bytes));
    state.SetLabel(std::string(moonwright::generator_kind_name(kind)));
}

void bm_generate_and_check(benchmark::State& state) {
    const generator_kind kind = kind_arg(state);
    std::uint64_t index = 0;
    for (auto _ : state) {
        const auto report = moonwright::run_check(
            moonwright::resolve(moonwright::generate_design(7, index++, kind)));
        benchmark::DoNotOptimize(report.findings.data());
    }
    state.SetItemsProcessed(state.iterations());
    state.SetLabel(std::string(moonwright::generator_kind_name(kind)));
}

// Arguments: 0 rocky, 1 giant, 2 mixed (generator_kind in declaration order).
BENCHMARK(bm_generate_design)->DenseRange(0, 2);
BENCHMARK(bm_generate_json_line)->DenseRange(0, 2);
BENCHMARK(bm_generate_and_check)->DenseRange(0, 2);

} // namespace
