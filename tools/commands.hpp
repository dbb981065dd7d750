// The subcommands of the `moonwright` command line, one function each, free of CLI11 (which
// is compiled only in moonwright.cpp). Each returns the process exit code; errors propagate as
// moonwright::error and are mapped to exit codes by main().
#pragma once

#include "engine/design.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace moonwright {
struct survey_request;
struct survey_report;
} // namespace moonwright

namespace moonwright::cli {

/// Reads a design from a path, or from standard input when the path is "-".
design read_design(const std::string& path, const std::string& stdin_format);

struct check_options {
    std::string design_path;
    std::string stdin_format = "toml";
    bool json = false;
    std::optional<std::uint64_t> seed;
};
int command_check(const check_options& o);

struct run_command_options {
    std::string design_path;
    std::string stdin_format = "toml";
    std::string resume_path;      ///< --resume: continue the run saved in this result file
    std::optional<double> orbits; ///< of the outermost moon
    std::string span;             ///< quantity with a time unit, e.g. "2 Myr"
    std::string integrator = "wh";
    std::string out_path; ///< default: the design's path with .h5
    std::optional<std::uint64_t> seed;
    std::size_t samples = 1000;
    std::string step; ///< quantity with a time unit; empty = automatic
    int corrector = 0;
    bool no_megno = false;
    bool continue_after_event = false;
    bool quiet = false;
    bool json = false;
    double checkpoint_every_s = 10.0; ///< wall seconds between checkpoints
};
int command_run(const run_command_options& o);

struct generate_options {
    std::uint64_t count = 10;
    std::uint64_t seed = 1;
    std::string kind = "mixed"; ///< rocky, giant, mixed
    std::string toml_dir;       ///< write TOML files here instead of JSON lines
    std::string out;            ///< JSON lines to this file instead of stdout
};
int command_generate(const generate_options& o);

struct survey_command_options {
    std::vector<std::string> inputs;
    std::string out;
    std::string summary;
    std::size_t jobs = 0; ///< 0: one per hardware thread
    std::size_t clones = 4;
    std::optional<double> orbits;
    std::string span; ///< quantity with a time unit
    std::uint64_t seed = 1;
    bool megno = false;
    std::string integrator = "wh";
    std::string shard; ///< "k/n"
    bool quiet = false;
};
/// The library request for these options (throws input_error for bad ones).
survey_request make_survey_request(const survey_command_options& o);
int command_survey(const survey_command_options& o);

struct survey_merge_options {
    std::string out;
    std::vector<std::string> shards;
    std::string summary;
    bool quiet = false;
};
int command_survey_merge(const survey_merge_options& o);

/// The closing lines of a survey on stdout: counts, verdicts, files.
void print_survey_report(const survey_report& r, const std::string& out,
                         const std::string& summary);

} // namespace moonwright::cli
