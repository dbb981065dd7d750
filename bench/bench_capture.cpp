// Capture experiment throughput: trials per minute of gravity-only arrivals at the Garrow test
// planet on 2 threads (default 1,000 trials; argument 1 overrides). Never run by the tests.
#include "engine/capture_experiment.hpp"
#include "engine/constants.hpp"
#include "engine/design_loader.hpp"

#include <chrono>
#include <cstdio>
#include <string>

int main(int argc, char** argv) {
    using namespace moonwright;
    const design d =
        load_design_file(std::string(MOONWRIGHT_SOURCE_DIR) + "/tests/capture/data/garrow.toml");
    capture_options o;
    o.planet = "Garrow";
    o.mechanism = capture_mechanism::gravity;
    o.intruder = parse_intruder_spec(
        "mass=1e12 kg, vinf=0.3 km/s, q=0.05:0.6 RH, start=1.5 RH, approach=planar");
    o.trials = argc > 1 ? std::stoul(argv[1]) : 1000;
    o.seed = 1;
    o.jobs = 2;
    o.span_s = 40 * constants::year;
    const auto start = std::chrono::steady_clock::now();
    const capture_result r = run_capture_experiment(d, o);
    const double wall =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    std::printf("capture, gravity only: %zu trials in %.2f s on %u threads: %.0f trials per "
                "minute (captured %zu, unresolved %zu, failed %zu)\n",
                r.trials.size(), wall, o.jobs, 60.0 * static_cast<double>(r.trials.size()) / wall,
                r.summary.captured, r.summary.unresolved, r.summary.failed);
    return 0;
}
