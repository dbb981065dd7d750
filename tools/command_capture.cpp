// `moonwright capture`: reads the design and the specs, runs the Monte Carlo trials on threads,
// writes the HDF5 result and prints the summary with units.
#include "engine/capture_experiment.hpp"
#include "engine/capture_file.hpp"
#include "engine/capture_report.hpp"
#include "engine/capture_spec.hpp"
#include "engine/error.hpp"
#include "engine/units.hpp"
#include "tools/commands.hpp"
#include "tools/report/capture_figures.hpp"

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <fmt/format.h>

namespace moonwright::cli {

namespace {

std::atomic<bool> capture_interrupted{false};
extern "C" void on_capture_interrupt(int) {
    capture_interrupted.store(true);
}

std::string default_capture_output(const std::string& design_path) {
    if (design_path == "-") return "capture.h5";
    std::filesystem::path p(design_path);
    p.replace_extension(".capture.h5");
    return p.string();
}

} // namespace

int command_capture(const capture_command_options& o) {
    const design d = read_design(o.design_path, o.stdin_format);
    capture_options opts;
    opts.planet = o.planet;
    opts.mechanism = parse_capture_mechanism(o.mechanism);
    opts.intruder = parse_intruder_spec(o.intruder);
    if (!o.pair.empty()) opts.pair = parse_pair_spec(o.pair);
    if (!o.envelope.empty()) opts.envelope = parse_envelope_spec(o.envelope);
    opts.trials = o.trials;
    opts.seed = o.seed.value_or(d.seed.value_or(1));
    opts.jobs = o.jobs;
    if (!o.span.empty()) {
        try {
            opts.span_s = parse_quantity(o.span, dimension::time, "yr").value;
        } catch (const quantity_error& e) {
            throw input_error(source_location{"<options>"}, "--span", e.found(), e.expected());
        }
        if (!(*opts.span_s > 0))
            throw input_error(source_location{"<options>"}, "--span", o.span, "a positive time");
    }
    // Check everything (and that the output can be written) before the trials start.
    (void)prepare_capture(d, opts);
    const std::string out_path =
        o.out_path.empty() ? default_capture_output(o.design_path) : o.out_path;
    {
        std::FILE* probe = std::fopen(out_path.c_str(), "ab");
        if (probe == nullptr) throw io_error("cannot write the result file " + out_path);
        std::fclose(probe);
    }

    capture_interrupted.store(false);
    std::signal(SIGINT, on_capture_interrupt);
    std::signal(SIGTERM, on_capture_interrupt);
    const auto start = std::chrono::steady_clock::now();
    std::size_t last_decile = 0;
    const capture_result r = run_capture_experiment(
        d, opts,
        [&](std::size_t done) {
            if (o.quiet) return;
            const std::size_t decile = 10 * done / opts.trials;
            if (decile > last_decile) {
                last_decile = decile;
                std::fprintf(stderr, "progress: %zu of %zu trials\n", done, opts.trials);
            }
        },
        &capture_interrupted);
    std::signal(SIGINT, SIG_DFL);
    std::signal(SIGTERM, SIG_DFL);

    capture_file_meta meta;
    meta.intruder_text = o.intruder;
    meta.pair_text = o.pair;
    meta.envelope_text = o.envelope;
    meta.wall_time_s =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    write_capture_file(out_path, d, opts, r, meta);
    if (!o.plot_prefix.empty()) {
        const auto figs = report::capture_figures(r);
        report::figure_output fo;
        fo.path_ = o.plot_prefix + "-durations.png";
        report::write_figure(figs.first, fo);
        fo.path_ = o.plot_prefix + "-final-orbits.png";
        report::write_figure(figs.second, fo);
    }

    std::string text = render_capture_summary(opts, r);
    text += fmt::format("Wall time {:.2f} s on {} thread(s). Results: {}\n", meta.wall_time_s,
                        opts.jobs, out_path);
    std::fwrite(text.data(), 1, text.size(), stdout);
    if (r.trials.size() < opts.trials) {
        std::fprintf(stderr,
                     "moonwright: interrupted after %zu of %zu trials; the file holds those\n",
                     r.trials.size(), opts.trials);
        return static_cast<int>(exit_code::interrupted);
    }
    return static_cast<int>(exit_code::ok);
}

} // namespace moonwright::cli
