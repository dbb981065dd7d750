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
        if (check_cmd->parsed()) return command_check(check);
        if (tides_cmd->parsed()) return command_tides(tides);
    } catch (const moonwright::error& e) {
        fmt::print(stderr, "moonwright: {}\n", e.what());
        return static_cast<int>(e.code());
    } catch (const std::exception& e) {
        fmt::print(stderr, "moonwright: internal error: {}\n", e.what());
        return static_cast<int>(exit_code::internal);
    }
    return static_cast<int>(exit_code::internal);
}
