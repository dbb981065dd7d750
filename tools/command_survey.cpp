// `moonwright survey` and `moonwright survey-merge`: many designs as clones, survival
// statistics, resumable; threads here, MPI ranks in the moonwright-mpi build.
#include "engine/error.hpp"
#include "engine/survey_runner.hpp"
#include "engine/units.hpp"
#include "tools/commands.hpp"
#include "tools/survey_mpi.hpp"

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <fmt/format.h>
#include <iostream>
#include <thread>

namespace moonwright::cli {

namespace {
std::atomic<bool> survey_interrupted{false};
extern "C" void on_survey_interrupt(int) {
    survey_interrupted.store(true);
}
} // namespace

void print_survey_report(const survey_report& r, const std::string& out,
                         const std::string& summary) {
    std::string text = fmt::format("Survey: {} designs ({} invalid); {} tasks run, {} resumed.\n",
                                   r.designs, r.invalid, r.tasks_run, r.tasks_resumed);
    if (!r.verdicts.empty()) {
        text += "Verdicts:";
        bool first = true;
        for (const auto& [name, n] : r.verdicts) {
            text += fmt::format("{} {} {}", first ? "" : ",", name, n);
            first = false;
        }
        text += "\n";
    }
    text += "Results: " + out + (summary.empty() ? "" : "; summary: " + summary) + "\n";
    std::fwrite(text.data(), 1, text.size(), stdout);
}

survey_request make_survey_request(const survey_command_options& o) {
    survey_request r;
    r.inputs = o.inputs;
    r.out_path = o.out;
    r.summary_path = o.summary;
    r.jobs = o.jobs > 0 ? o.jobs : std::max(1u, std::thread::hardware_concurrency());
    r.standard_input = &std::cin;
    survey_settings& s = r.settings;
    s.seed = o.seed;
    s.clones = o.clones;
    s.megno = o.megno;
    s.integrator = o.integrator;
    if (o.orbits) s.orbits = *o.orbits;
    if (!o.span.empty()) s.span_s = parse_quantity(o.span, dimension::time, "yr").value;
    if (!o.shard.empty()) std::tie(s.shard_index, s.shard_count) = parse_shard(o.shard);
    return r;
}

int command_survey(const survey_command_options& o) {
    const survey_request request = make_survey_request(o);
    if (const auto code = run_survey_mpi(request, o.quiet)) return *code;

    using clock = std::chrono::steady_clock;
    auto last = clock::now();
    survey_interrupted.store(false);
    std::signal(SIGINT, on_survey_interrupt);
    std::signal(SIGTERM, on_survey_interrupt);
    const survey_report r = run_survey(
        request,
        [&](const survey_progress& p) {
            if (o.quiet || clock::now() - last < std::chrono::seconds(5)) return;
            last = clock::now();
            std::fprintf(stderr, "survey: %zu designs read, %zu tasks done (%zu resumed)\n",
                         p.designs_read, p.tasks_done, p.tasks_resumed);
        },
        &survey_interrupted);
    std::signal(SIGINT, SIG_DFL);
    std::signal(SIGTERM, SIG_DFL);
    if (r.interrupted) {
        std::fprintf(stderr,
                     "moonwright: survey interrupted after %zu tasks (%zu from an earlier run); "
                     "they are kept in %s.journal: run the same command again to continue\n",
                     r.tasks_run + r.tasks_resumed, r.tasks_resumed, request.out_path.c_str());
        return static_cast<int>(exit_code::interrupted);
    }
    if (!o.quiet) print_survey_report(r, request.out_path, request.summary_path);
    return static_cast<int>(exit_code::ok);
}

int command_survey_merge(const survey_merge_options& o) {
    const survey_report r = merge_survey_shards(o.shards, o.out, o.summary);
    if (!o.quiet) print_survey_report(r, o.out, o.summary);
    return static_cast<int>(exit_code::ok);
}

} // namespace moonwright::cli
