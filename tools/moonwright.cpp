// The moonwright command line: parses arguments, calls the engine, maps errors to exit codes.
#include "engine/error.hpp"

#include <CLI/CLI.hpp>
#include <cstdio>
#include <exception>
#include <fmt/format.h>

using namespace moonwright;

int main(int argc, char** argv) {
    CLI::App app{"moonwright: tests whether designed moon systems survive"};
    app.require_subcommand(1);
    try {
        app.parse(argc, argv);
    } catch (const CLI::CallForHelp& e) {
        return app.exit(e);
    } catch (const CLI::ParseError& e) {
        app.exit(e);
        return static_cast<int>(exit_code::bad_input);
    }
    return 0;
}
