// The moonwright command line: parses arguments, calls the engine, maps errors to exit codes.
// CLI11 is the slowest header to compile, so every subcommand is declared in this one file.
#include "engine/design_check.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"

#include <CLI/CLI.hpp>
#include <cstdio>
#include <exception>
#include <fmt/format.h>
#include <iostream>
#include <iterator>
#include <optional>
#include <string>

using namespace moonwright;

namespace {

/// Reads a design from a path, or from standard input when the path is "-".
design read_design(const std::string& path, const std::string& stdin_format) {
    if (path != "-") return load_design_file(path);
    std::string text{std::istreambuf_iterator<char>(std::cin), std::istreambuf_iterator<char>()};
    return parse_design(text, stdin_format == "json" ? design_format::json : design_format::toml,
                        "<stdin>");
}

struct check_options {
    std::string design_path;
    std::string stdin_format = "toml";
    bool json = false;
    std::optional<std::uint64_t> seed;
};

int run_check_command(const check_options& o) {
    const design d = read_design(o.design_path, o.stdin_format);
    const resolved_system sys = resolve(d, o.seed);
    const check_report report = run_check(sys);
    const std::string out = o.json ? render_check_json(report) : render_check_text(report);
    std::fwrite(out.data(), 1, out.size(), stdout);
    return static_cast<int>(report.has_errors() ? exit_code::rule_broken : exit_code::ok);
}

} // namespace

int main(int argc, char** argv) {
    CLI::App app{"moonwright: tests whether designed moon systems survive.\n"
                 "Exit codes: 0 ok, 1 internal error, 2 bad input, 3 the design breaks a rule "
                 "(check), 4 output not written."};
    app.require_subcommand(1);
    app.set_version_flag("--version", "moonwright 0.1.0");

    check_options check;
    CLI::App* check_cmd = app.add_subcommand(
        "check", "Analytic check of a design: derived quantities and findings (exit 3 on errors)");
    check_cmd->add_option("design", check.design_path, "Design file (.toml or .json), or - for stdin")
        ->required();
    check_cmd->add_flag("--json", check.json, "Print JSON with stable field names instead of tables");
    check_cmd->add_option("--seed", check.seed, "Seed for the angles the design leaves out");
    check_cmd->add_option("--stdin-format", check.stdin_format, "Format of a design read from stdin")
        ->check(CLI::IsMember({"toml", "json"}));

    try {
        app.parse(argc, argv);
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
        if (check_cmd->parsed()) return run_check_command(check);
    } catch (const moonwright::error& e) {
        fmt::print(stderr, "moonwright: {}\n", e.what());
        return static_cast<int>(e.code());
    } catch (const std::exception& e) {
        fmt::print(stderr, "moonwright: internal error: {}\n", e.what());
        return static_cast<int>(exit_code::internal);
    }
    return static_cast<int>(exit_code::internal);
}
