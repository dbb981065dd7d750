// Whole-run benchmark: `run` on the habitable scenario for 10^4 orbits of its moon, against the
// bare Wisdom–Holman loop on the same system. Prints CPU times and ratios side by side (the
// best of three repetitions each); nothing is asserted. Usage: bench_run_overhead [orbits]
#include "engine/design_loader.hpp"
#include "engine/nbody_system.hpp"
#include "engine/resolved_system.hpp"
#include "engine/run_driver.hpp"
#include "engine/run_file.hpp"
#include "integrators/wisdom_holman.hpp"

#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <functional>
#include <string>

using namespace moonwright;

namespace {
/// Process CPU time [s] (not wall time: other processes on a shared machine do not count).
double cpu_seconds() {
    timespec ts{};
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

double best_of_three(const std::function<void()>& work) {
    double best = 1e300;
    for (int k = 0; k < 3; ++k) {
        const double start = cpu_seconds();
        work();
        best = std::min(best, cpu_seconds() - start);
    }
    return best;
}
} // namespace

int main(int argc, char** argv) {
    const double orbits = argc > 1 ? std::atof(argv[1]) : 1e4;
    const design d =
        load_design_file(std::string(MOONWRIGHT_SOURCE_DIR) + "/scenarios/teodora.toml");
    const resolved_system sys = resolve(d);

    // How many steps the run takes, to give the bare loop the same work.
    run_options probe;
    probe.orbits = orbits;
    probe.megno = false;
    run_driver sizing(sys, probe);
    const auto steps = static_cast<std::size_t>(sizing.span_s() / sizing.step_s());

    const double bare = best_of_three([&] {
        const nbody_system model = build_nbody(sys);
        wisdom_holman wh(model);
        wh.advance(steps);
        std::vector<double> q, v;
        wh.relative_state(q, v);
        if (!(q[3] == q[3])) std::abort();
    });
    auto run_with = [&](bool megno, bool file) {
        return best_of_three([&] {
            run_options o;
            o.orbits = orbits;
            o.megno = megno;
            run_driver run(sys, o);
            run.advance();
            if (file) {
                const std::string path =
                    (std::filesystem::temp_directory_path() / "bench_run.h5").string();
                run_metadata meta;
                meta.design_format = "toml";
                const verdict v = decide_verdict(run.outcome());
                write_run_file(path, d, run, meta, &v, false);
            }
        });
    };
    const double events_only = run_with(false, false);
    const double events_file = run_with(false, true);
    const double with_megno = run_with(true, true);

    std::printf("run on scenarios/teodora.toml, %.0f orbits of the moon, %zu steps (best of 3)\n",
                orbits, steps);
    std::printf("%-44s %10s %8s\n", "configuration", "CPU [s]", "ratio");
    std::printf("%-44s %10.3f %8.2f\n", "bare Wisdom-Holman loop", bare, 1.0);
    std::printf("%-44s %10.3f %8.2f\n", "run: events + samples + envelopes", events_only,
                events_only / bare);
    std::printf("%-44s %10.3f %8.2f\n", "run: the same + HDF5 file", events_file,
                events_file / bare);
    std::printf("%-44s %10.3f %8.2f\n", "run: the same + MEGNO (tangent equations)", with_megno,
                with_megno / bare);
    std::printf("target: events + HDF5 at most 1.30 x the bare loop (MEGNO counted separately)\n");
    return 0;
}
