// `moonwright run`: integrates a design, shows progress, saves checkpoints, writes the HDF5
// result and prints the verdict with its reasons.
#include "engine/constants.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"
#include "engine/run_driver.hpp"
#include "engine/run_file.hpp"
#include "engine/tidal_verdict.hpp"
#include "engine/units.hpp"
#include "tools/commands.hpp"

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <unistd.h>

namespace moonwright::cli {

namespace {

std::atomic<bool> interrupted{false};
extern "C" void on_interrupt(int) {
    interrupted.store(true);
}

using clock_type = std::chrono::steady_clock;

std::string format_years(double t_s) {
    const double y = t_s / constants::year;
    if (y >= 1e6) return fmt::format("{:.3g} Myr", y / 1e6);
    if (y >= 1.0) return fmt::format("{:.4g} yr", y);
    return fmt::format("{:.3g} d", t_s / constants::day);
}

std::string default_output(const std::string& design_path) {
    if (design_path == "-") return "run.h5";
    std::filesystem::path p(design_path);
    p.replace_extension(".h5");
    return p.string();
}

/// Progress on a terminal: one line rewritten in place; elsewhere plain lines every 10%.
class progress_display {
  public:
    progress_display(bool enabled, bool tty) : enabled_(enabled), tty_(tty) {}
    void update(const run_driver& run, double elapsed_s, bool force = false) {
        if (!enabled_) return;
        const run_progress p = run.progress();
        const double fraction = p.span_s > 0 ? std::min(1.0, p.t_s / p.span_s) : 1.0;
        const auto now = clock_type::now();
        if (tty_) {
            if (!force && now - last_ < std::chrono::milliseconds(200)) return;
            last_ = now;
            const int width = 24;
            const int filled = static_cast<int>(fraction * width);
            const double eta = fraction > 0 ? elapsed_s * (1 - fraction) / fraction : 0;
            std::string line = fmt::format(
                "\r[{}{}] {:3.0f}%  t = {} of {}  ETA {:.0f} s  max e {:.3f} ({})",
                std::string(static_cast<size_t>(filled), '#'),
                std::string(static_cast<size_t>(width - filled), '.'), 100 * fraction,
                format_years(p.t_s), format_years(p.span_s), eta, p.worst_e, p.worst_e_body);
            if (std::isfinite(p.closest_hill))
                line += fmt::format("  closest {:.2f} RHm ({})", p.closest_hill, p.closest_pair);
            std::fputs(line.c_str(), stderr);
            std::fputs("\x1b[K", stderr);
            std::fflush(stderr);
            drawn_ = true;
        } else {
            const int decile = static_cast<int>(fraction * 10);
            if (decile <= last_decile_) return;
            last_decile_ = decile;
            std::fprintf(stderr, "progress: %3.0f%%  t = %s of %s  max e %.3f (%s)\n",
                         100 * fraction, format_years(p.t_s).c_str(),
                         format_years(p.span_s).c_str(), p.worst_e, p.worst_e_body.c_str());
        }
    }
    void finish() {
        if (enabled_ && tty_ && drawn_) std::fputs("\n", stderr);
    }

  private:
    bool enabled_, tty_;
    bool drawn_ = false;
    int last_decile_ = -1;
    clock_type::time_point last_{};
};

std::string detect_format(const design& d) {
    const auto at = d.source_text.find_first_not_of(" \t\r\n");
    return at != std::string::npos && d.source_text[at] == '{' ? "json" : "toml";
}

} // namespace

int command_run(const run_command_options& o) {
    design d;
    run_options opts;
    run_metadata meta;
    meta.version = MOONWRIGHT_VERSION;
    std::string out_path;
    run_resume_data resume;
    const bool resuming = !o.resume_path.empty();

    if (resuming) {
        // A killed run leaves its last checkpoint in OUT.ckpt; accept either name.
        out_path = o.resume_path;
        std::string ckpt = out_path + ".ckpt";
        if (out_path.size() > 5 && out_path.ends_with(".ckpt")) {
            ckpt = out_path;
            out_path = out_path.substr(0, out_path.size() - 5);
        }
        resume = read_run_resume(std::filesystem::exists(ckpt) ? ckpt : out_path);
        d = resume.design_;
        opts = resume.options_;
        meta = resume.meta_;
        meta.version = MOONWRIGHT_VERSION;
    } else {
        d = read_design(o.design_path, o.stdin_format);
        meta.design_format = detect_format(d);
        meta.seed = o.seed.value_or(d.seed.value_or(1));
        opts.integrator = o.integrator;
        opts.samples = o.samples;
        opts.megno = !o.no_megno;
        opts.seed = meta.seed;
        opts.continue_after_event = o.continue_after_event;
        opts.integration.corrector_order = o.corrector;
        opts.integration.modified_kick = o.modified_kick;
        if (o.modified_kick && (o.corrector == 0 || o.integrator != "wh"))
            throw input_error(source_location{"<command line>"}, "--modified-kick",
                              "--integrator " + o.integrator + " --corrector " +
                                  std::to_string(o.corrector),
                              "--integrator wh with --corrector 3, 5 or 7");
        // Option values are input too: a bad one is an input error naming the option.
        auto time_option = [](const std::string& option, const std::string& text,
                              const char* default_unit) {
            try {
                return parse_quantity(text, dimension::time, default_unit).value;
            } catch (const quantity_error& e) {
                throw input_error(source_location{"<command line>"}, option, e.found(),
                                  e.expected());
            }
        };
        if (!o.step.empty()) {
            opts.integration.step = time_option("--step", o.step, "s");
            if (!(opts.integration.step > 0))
                throw input_error(source_location{"<command line>"}, "--step", o.step,
                                  "a positive time");
        }
        if (!o.span.empty()) {
            opts.span_s = time_option("--span", o.span, "yr");
            if (!(*opts.span_s > 0))
                throw input_error(source_location{"<command line>"}, "--span", o.span,
                                  "a positive time");
        }
        if (o.orbits) {
            if (!(*o.orbits > 0))
                throw input_error(source_location{"<command line>"}, "--orbits",
                                  fmt::format("{}", *o.orbits), "a positive number of orbits");
            opts.orbits = o.orbits;
        }
        out_path = o.out_path.empty() ? default_output(o.design_path) : o.out_path;
    }

    const resolved_system sys = resolve(d, meta.seed);
    run_driver run(sys, opts);
    if (resuming) run.load_checkpoint(resume.checkpoint_, resume.samples_, resume.events_);

    // An integrator without exact checkpoints still runs, without --resume support.
    bool can_checkpoint = true;
    try {
        (void)run.save_checkpoint();
    } catch (const numerical_error& e) {
        can_checkpoint = false;
        if (!o.quiet)
            std::fprintf(stderr, "moonwright: note: %s; this run cannot be resumed\n", e.what());
    }
    // Fail early, before integrating, when the output cannot be written.
    const std::string ckpt_path = out_path + ".ckpt";
    write_run_file(ckpt_path, d, run, meta, nullptr, can_checkpoint);

    interrupted.store(false);
    std::signal(SIGINT, on_interrupt);
    std::signal(SIGTERM, on_interrupt);

    const auto start = clock_type::now();
    const double wall_before = meta.wall_time_s;
    auto elapsed = [&] { return std::chrono::duration<double>(clock_type::now() - start).count(); };
    auto last_checkpoint = clock_type::now();
    progress_display progress(!o.quiet && !o.json, ::isatty(STDERR_FILENO) != 0);

    const bool done = run.advance(&interrupted, [&](const run_driver& r) {
        progress.update(r, elapsed());
        const bool due =
            std::chrono::duration<double>(clock_type::now() - last_checkpoint).count() >=
            o.checkpoint_every_s;
        if (due && can_checkpoint && !r.finished()) {
            meta.wall_time_s = wall_before + elapsed();
            write_run_file(ckpt_path, d, r, meta, nullptr, true);
            last_checkpoint = clock_type::now();
        }
    });
    progress.update(run, elapsed(), true);
    progress.finish();
    std::signal(SIGINT, SIG_DFL);
    std::signal(SIGTERM, SIG_DFL);
    meta.wall_time_s = wall_before + elapsed();

    if (!done) {
        write_run_file(ckpt_path, d, run, meta, nullptr, can_checkpoint);
        std::fprintf(stderr,
                     "moonwright: interrupted at %s; checkpoint saved in %s\n"
                     "resume with: moonwright run --resume %s\n",
                     format_years(run.time_s()).c_str(), ckpt_path.c_str(), out_path.c_str());
        return static_cast<int>(exit_code::interrupted);
    }

    const run_outcome outcome = run.outcome();
    verdict v = decide_verdict(outcome);
    if (v.kind != verdict_kind::unreliable) add_tidal_fate(v, sys);
    write_run_file(out_path, d, run, meta, &v, false);
    std::error_code ec;
    std::filesystem::remove(ckpt_path, ec);

    if (o.json) {
        nlohmann::json j;
        j["verdict"] = verdict_name(v.kind);
        j["headline"] = v.headline;
        j["reasons"] = v.reasons;
        j["simulated_s"] = outcome.simulated_s;
        j["span_s"] = outcome.span_s;
        j["reference_body"] = outcome.reference_body;
        j["reference_period_s"] = outcome.reference_period_s;
        j["max_energy_error"] = outcome.max_energy_error;
        j["mean_megno"] =
            outcome.mean_megno ? nlohmann::json(*outcome.mean_megno) : nlohmann::json();
        j["lyapunov_time_s"] =
            outcome.lyapunov_time_s ? nlohmann::json(*outcome.lyapunov_time_s) : nlohmann::json();
        j["events"] = nlohmann::json::array();
        for (const auto& e : outcome.events) {
            j["events"].push_back(
                {{"time_s", e.t_s},
                 {"kind", event_name(e.kind)},
                 {"body", e.body >= 0 ? outcome.body_names[static_cast<size_t>(e.body)] : ""},
                 {"other", e.other >= 0 ? outcome.body_names[static_cast<size_t>(e.other)] : ""},
                 {"distance_m", e.distance_m},
                 {"threshold_m", e.threshold_m}});
        }
        j["output"] = out_path;
        j["wall_time_s"] = meta.wall_time_s;
        const std::string text = j.dump(2) + "\n";
        std::fwrite(text.data(), 1, text.size(), stdout);
    } else {
        std::string text = fmt::format("Verdict: {}\n{}\n", verdict_name(v.kind), v.headline);
        for (const auto& r : v.reasons) text += "  - " + r + "\n";
        if (!o.quiet)
            text += fmt::format("Integrator {}, step {:.4g} s, {} samples; wall time {:.2f} s.\n"
                                "Results: {}\n",
                                opts.integrator, run.step_s(), run.samples().size(),
                                meta.wall_time_s, out_path);
        std::fwrite(text.data(), 1, text.size(), stdout);
    }
    return static_cast<int>(exit_code::ok);
}

} // namespace moonwright::cli
