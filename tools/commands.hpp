// The subcommands of the `moonwright` command line, one function each, free of CLI11 (which
// is compiled only in moonwright.cpp). Each returns the process exit code; errors propagate as
// moonwright::error and are mapped to exit codes by main().
#pragma once

#include "engine/design.hpp"

#include <cstdint>
#include <optional>
#include <string>

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

} // namespace moonwright::cli
