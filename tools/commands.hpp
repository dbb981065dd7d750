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
    bool modified_kick = false;
    bool no_megno = false;
    bool continue_after_event = false;
    bool quiet = false;
    bool json = false;
    double checkpoint_every_s = 10.0; ///< wall seconds between checkpoints
};
int command_run(const run_command_options& o);

struct tides_options {
    std::string design_path;
    std::string stdin_format = "toml";
    std::optional<std::string> span; ///< a time quantity, bare numbers in Gyr
    std::string model = "q";         ///< "q" (constant Q) or "lag" (constant time lag)
    int samples = 201;               ///< rows of the time series
    bool json = false;
    std::optional<std::uint64_t> seed;
    std::optional<std::string> out_path;  ///< HDF5 result file
    std::optional<std::string> plot_path; ///< PNG figure of a(t)
    std::string version;                  ///< written to the result file
};
/// `moonwright tides`: secular tidal evolution and spin-axis precession; exit 0 whatever the
/// fate, 2 for bad input, 4 when an output cannot be written.
int command_tides(const tides_options& o);

struct report_command_options {
    std::string result_path; ///< a result file (HDF5) written by a moonwright command
    std::string out_path;    ///< HTML page; default: the result's path with .html
    std::string figures_dir; ///< when given, every figure is also written there as <id>.png
    bool quiet = false;
};
/// Exit 2 when the input is missing or not a result file, 4 when an output cannot be written.
int command_report(const report_command_options& o);

struct capture_command_options {
    std::string design_path;
    std::string stdin_format = "toml";
    std::string planet;
    std::string intruder; ///< --intruder spec text
    std::string pair;     ///< --pair spec text (binary mechanism)
    std::string envelope; ///< --envelope spec text (drag mechanism)
    std::string mechanism = "gravity";
    std::size_t trials = 100;
    std::string span;        ///< quantity with a time unit; empty = 20 planet orbits
    std::string out_path;    ///< default: the design's path with .capture.h5
    std::string plot_prefix; ///< --plot: PREFIX-durations.png and PREFIX-final-orbits.png
    std::optional<std::uint64_t> seed;
    unsigned jobs = 1;
    bool quiet = false;
};
int command_capture(const capture_command_options& o);

struct map_command_options {
    std::string design_path;
    std::string stdin_format = "toml";
    std::vector<std::string> vary; ///< BODY.FIELD=FROM:TO:N, one or two
    double orbits = 1000;          ///< of the varied body's planet
    std::string out_path;
    std::string plot_path;         ///< .png or .svg; empty: no figure
    std::string show = "survival"; ///< what the figure shows: survival or megno
    unsigned jobs = 1;
    std::optional<std::uint64_t> seed;
    bool quiet = false;
    std::string version; ///< written to the result file
};
/// `moonwright map`: exit 0 whatever the cells do, 2 for bad input, 4 when output fails.
int command_map(const map_command_options& o);

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
