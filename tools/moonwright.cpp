// The moonwright command line: parses arguments, calls the engine, maps errors to exit codes.
// CLI11 is the slowest header to compile, so every subcommand is declared in this one file.
#include "engine/error.hpp"
#include "tools/commands.hpp"

#include <CLI/CLI.hpp>
#include <cstdio>
#include <exception>
#include <fmt/format.h>

using namespace moonwright;
using namespace moonwright::cli;

int main(int argc, char** argv) {
    CLI::App app{"moonwright: tests whether designed moon systems survive.\n"
                 "Exit codes: 0 ok, 1 internal error, 2 bad input, 3 the design breaks a rule "
                 "(check), 4 output not written."};
    app.require_subcommand(1);
    app.set_version_flag("--version", "moonwright " MOONWRIGHT_VERSION);

    check_options check;
    CLI::App* check_cmd = app.add_subcommand(
        "check", "Analytic check of a design: derived quantities and findings (exit 3 on errors)");
    check_cmd
        ->add_option("design", check.design_path, "Design file (.toml or .json), or - for stdin")
        ->required();
    check_cmd->add_flag("--json", check.json,
                        "Print JSON with stable field names instead of tables");
    check_cmd->add_option("--seed", check.seed, "Seed for the angles the design leaves out");
    check_cmd
        ->add_option("--stdin-format", check.stdin_format, "Format of a design read from stdin")
        ->check(CLI::IsMember({"toml", "json"}));

    run_command_options run;
    CLI::App* run_cmd = app.add_subcommand(
        "run", "Integrate a design, record events and elements to HDF5, and give a verdict");
    run_cmd->add_option("design", run.design_path, "Design file (.toml or .json), or - for stdin");
    run_cmd->add_option("--resume", run.resume_path,
                        "Continue a stopped run from its result file (FILE.h5 or FILE.h5.ckpt)");
    auto* orbits_opt = run_cmd->add_option("--orbits", run.orbits,
                                           "Span in orbits of the outermost moon (default 10000)");
    run_cmd->add_option("--span", run.span, "Span as a time with a unit, e.g. \"2 Myr\"")
        ->excludes(orbits_opt);
    run_cmd->add_option("--integrator", run.integrator, "wh (default), radau, bs or rkf78")
        ->check(CLI::IsMember({"wh", "radau", "bs", "rkf78"}));
    run_cmd->add_option("--out", run.out_path, "Result file (default: the design's name with .h5)");
    run_cmd->add_option("--seed", run.seed, "Seed for left-out angles and the MEGNO deviation");
    run_cmd->add_option("--samples", run.samples, "Samples of the elements over the span")
        ->check(CLI::Range(1, 100000000));
    run_cmd->add_option("--step", run.step,
                        "Fixed step with a unit, e.g. \"2 h\" (default automatic)");
    run_cmd
        ->add_option("--corrector", run.corrector, "Symplectic corrector order for wh: 0, 3, 5, 7")
        ->check(CLI::IsMember({0, 3, 5, 7}));
    run_cmd->add_flag("--modified-kick", run.modified_kick,
                      "With --corrector: kick with the modified interaction, which cancels the "
                      "map's O(eps^2 dt^2) error (about twice the cost per step)");
    run_cmd->add_flag("--no-megno", run.no_megno, "Skip the MEGNO chaos indicator");
    run_cmd->add_flag("--continue-after-event", run.continue_after_event,
                      "Record events and go on instead of stopping at the first one");
    run_cmd->add_flag("--quiet", run.quiet, "No progress; print only the verdict");
    run_cmd->add_flag("--json", run.json, "Print the verdict as JSON");
    run_cmd
        ->add_option("--checkpoint-every", run.checkpoint_every_s,
                     "Wall-clock seconds between checkpoints (default 10)")
        ->check(CLI::PositiveNumber);
    run_cmd->add_option("--stdin-format", run.stdin_format, "Format of a design read from stdin")
        ->check(CLI::IsMember({"toml", "json"}));

    tides_options tides;
    tides.version = MOONWRIGHT_VERSION;
    CLI::App* tides_cmd = app.add_subcommand(
        "tides",
        "Long-term tidal fate: secular evolution of each planet's spin and moons, spin-axis "
        "precession (exit 0 whatever the fate)");
    tides_cmd
        ->add_option("design", tides.design_path, "Design file (.toml or .json), or - for stdin")
        ->required();
    tides_cmd->add_option("--span", tides.span,
                          "Time to evolve, e.g. 2Gyr or 500Myr (bare number: Gyr); default the "
                          "star's age, else its main-sequence lifetime");
    tides_cmd->add_option("--model", tides.model, "Tidal model: q (constant Q) or lag (time lag)")
        ->check(CLI::IsMember({"q", "lag"}));
    tides_cmd->add_option("--samples", tides.samples, "Rows of the time series (>= 2)");
    tides_cmd->add_option("--seed", tides.seed, "Seed for the angles the design leaves out");
    tides_cmd->add_flag("--json", tides.json, "Print JSON instead of text");
    tides_cmd->add_option("--out", tides.out_path, "Write an HDF5 result file");
    tides_cmd->add_option("--plot", tides.plot_path, "Write a PNG of each moon's a(t)");
    tides_cmd
        ->add_option("--stdin-format", tides.stdin_format, "Format of a design read from stdin")
        ->check(CLI::IsMember({"toml", "json"}));

    report_command_options report;
    CLI::App* report_cmd = app.add_subcommand(
        "report", "One self-contained HTML page with figures from a result file");
    report_cmd->add_option("result", report.result_path, "Result file (.h5) of moonwright run")
        ->required();
    report_cmd->add_option("--out", report.out_path,
                           "HTML page to write (default: the result's name with .html)");
    report_cmd->add_option("--figures", report.figures_dir,
                           "Also write every figure as a PNG file into this folder");
    report_cmd->add_flag("--quiet", report.quiet, "Print nothing on success");

    capture_command_options capture;
    CLI::App* capture_cmd = app.add_subcommand(
        "capture", "Monte Carlo of bodies arriving at a planet: temporary and kept captures");
    capture_cmd
        ->add_option("design", capture.design_path, "Design file (.toml or .json), or - for stdin")
        ->required();
    capture_cmd->add_option("--planet", capture.planet, "Name of the planet in the design")
        ->required();
    capture_cmd
        ->add_option("--intruder", capture.intruder,
                     "Intruder and arrival, e.g. \"mass=1e18 kg, vinf=1 km/s, b=0.1:1 RH\"")
        ->required();
    capture_cmd->add_option("--plot", capture.plot_prefix,
                            "Write PREFIX-durations.png and PREFIX-final-orbits.png");
    capture_cmd->add_option("--pair", capture.pair,
                            "A bound pair instead of one body, e.g. \"m1=1e18 kg, m2=5e17 kg, "
                            "sep=200 km, e=0\" (--mechanism binary)");
    capture_cmd->add_option("--envelope", capture.envelope,
                            "Gas envelope, e.g. \"rho0=1e-6 kg/m3, k=2, cutoff=10 Rp, cd=1, "
                            "gas=static\" (--mechanism drag)");
    capture_cmd->add_option("--mechanism", capture.mechanism, "gravity (default), binary or drag")
        ->check(CLI::IsMember({"gravity", "binary", "drag"}));
    capture_cmd->add_option("--trials", capture.trials, "Number of trials (default 100)")
        ->check(CLI::Range(1, 100000000));
    capture_cmd->add_option("--span", capture.span,
                            "Span of each trial with a unit, e.g. \"5 yr\" (default 20 orbits "
                            "of the planet)");
    capture_cmd->add_option("--out", capture.out_path,
                            "Result file (default: the design's name with .capture.h5)");
    capture_cmd->add_option("--seed", capture.seed, "Seed of the trials' geometry (default 1)");
    capture_cmd->add_option("--jobs", capture.jobs, "Threads (results do not depend on it)")
        ->check(CLI::Range(1, 1024));
    capture_cmd->add_flag("--quiet", capture.quiet, "No progress lines");
    capture_cmd
        ->add_option("--stdin-format", capture.stdin_format, "Format of a design read from stdin")
        ->check(CLI::IsMember({"toml", "json"}));

    map_command_options map;
    map.version = MOONWRIGHT_VERSION;
    CLI::App* map_cmd = app.add_subcommand(
        "map", "Stability map: short runs with MEGNO over a 1-D scan or 2-D grid of design fields");
    map_cmd->add_option("design", map.design_path, "Design file (.toml or .json), or - for stdin")
        ->required();
    map_cmd
        ->add_option("--vary", map.vary,
                     "BODY.FIELD=FROM:TO:N, e.g. Vela.a=0.2RH:0.7RH:60 (fields a, e, i, node, "
                     "peri, mean_anomaly, mass, radius); once for a scan, twice for a grid")
        ->required()
        ->allow_extra_args(false);
    map_cmd
        ->add_option("--orbits", map.orbits,
                     "Span of each cell in orbits of the varied body's planet (default 1000)")
        ->check(CLI::PositiveNumber);
    map_cmd->add_option("--out", map.out_path, "Result file (HDF5)")->required();
    map_cmd->add_option("--plot", map.plot_path, "Write a figure (FILE.png or FILE.svg)");
    map_cmd->add_option("--show", map.show, "What the figure shows: survival (default) or megno")
        ->check(CLI::IsMember({"survival", "megno"}));
    map_cmd->add_option("--jobs", map.jobs, "Threads (results do not depend on it)")
        ->check(CLI::Range(1, 1024));
    map_cmd->add_option("--seed", map.seed, "Seed for left-out angles and the MEGNO deviation");
    map_cmd->add_flag("--quiet", map.quiet, "Print only the summary");
    map_cmd->add_option("--stdin-format", map.stdin_format, "Format of a design read from stdin")
        ->check(CLI::IsMember({"toml", "json"}));

    generate_options gen;
    CLI::App* gen_cmd = app.add_subcommand(
        "generate", "Plausible designs from a seed, as JSON lines (stdout or --out) or TOML files");
    gen_cmd->add_option("--count", gen.count, "Number of designs (default 10)");
    gen_cmd->add_option("--seed", gen.seed, "Seed of the batch (default 1)");
    gen_cmd->add_option("--kind", gen.kind, "rocky, giant or mixed (default)")
        ->check(CLI::IsMember({"rocky", "giant", "mixed"}));
    auto* toml_opt =
        gen_cmd->add_option("--toml-dir", gen.toml_dir, "Write one TOML file per design here");
    gen_cmd->add_option("--out", gen.out, "Write the JSON lines to this file")->excludes(toml_opt);

    survey_command_options survey;
    CLI::App* survey_cmd = app.add_subcommand(
        "survey", "Many designs as clones: survival fraction, Kaplan-Meier curve, verdicts; "
                  "threads, resumable, MPI in moonwright-mpi");
    survey_cmd
        ->add_option("inputs", survey.inputs,
                     "Design files, folders (their .toml/.json files), .jsonl files, - for stdin")
        ->required();
    survey_cmd->add_option("--out", survey.out, "HDF5 survey file (FILE.h5)")->required();
    survey_cmd->add_option("--summary", survey.summary,
                           "Per-design summary, FILE.jsonl or FILE.csv");
    survey_cmd->add_option("--jobs,-j", survey.jobs, "Worker threads (default: one per core)");
    survey_cmd->add_option("--clones", survey.clones, "Clones per design (default 4)")
        ->check(CLI::Range(1, 1000000));
    auto* survey_orbits = survey_cmd->add_option(
        "--orbits", survey.orbits, "Span in orbits of the outermost moon (default 10000)");
    survey_cmd->add_option("--span", survey.span, "Span as a time with a unit, e.g. \"1 Myr\"")
        ->excludes(survey_orbits);
    survey_cmd->add_option("--seed", survey.seed, "Survey seed for the clones (default 1)");
    survey_cmd->add_flag("--megno", survey.megno, "Compute MEGNO (off by default in surveys)");
    survey_cmd->add_option("--integrator", survey.integrator, "wh (default), radau, bs or rkf78")
        ->check(CLI::IsMember({"wh", "radau", "bs", "rkf78"}));
    survey_cmd->add_option("--shard", survey.shard,
                           "Run shard k/n only (task i belongs to shard i mod n)");
    survey_cmd->add_flag("--quiet", survey.quiet, "No progress and no closing report");

    survey_merge_options merge;
    CLI::App* merge_cmd = app.add_subcommand(
        "survey-merge", "Merge the shard files of one survey into the complete survey file");
    merge_cmd->add_option("out", merge.out, "Merged survey file (OUT.h5)")->required();
    merge_cmd->add_option("shards", merge.shards, "The shard files (SHARD.h5 ...)")->required();
    merge_cmd->add_option("--summary", merge.summary, "Per-design summary, FILE.jsonl or .csv");
    merge_cmd->add_flag("--quiet", merge.quiet, "No closing report");

    try {
        app.parse(argc, argv);
        if (run_cmd->parsed() && run.design_path.empty() == run.resume_path.empty())
            throw CLI::ValidationError("run",
                                       "give a design file or --resume FILE.h5 (one of them)");
    } catch (const CLI::CallForHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForAllHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForVersion& e) {
        return app.exit(e);
    } catch (const CLI::ParseError& e) {
        app.exit(e);
        return static_cast<int>(exit_code::bad_input);
    }

    try {
        if (check_cmd->parsed()) return command_check(check);
        if (run_cmd->parsed()) return command_run(run);
        if (tides_cmd->parsed()) return command_tides(tides);
        if (report_cmd->parsed()) return command_report(report);
        if (capture_cmd->parsed()) return command_capture(capture);
        if (map_cmd->parsed()) return command_map(map);
        if (gen_cmd->parsed()) return command_generate(gen);
        if (survey_cmd->parsed()) return command_survey(survey);
        if (merge_cmd->parsed()) return command_survey_merge(merge);
    } catch (const moonwright::error& e) {
        fmt::print(stderr, "moonwright: {}\n", e.what());
        return static_cast<int>(e.code());
    } catch (const std::exception& e) {
        fmt::print(stderr, "moonwright: internal error: {}\n", e.what());
        return static_cast<int>(exit_code::internal);
    }
    return static_cast<int>(exit_code::internal);
}
