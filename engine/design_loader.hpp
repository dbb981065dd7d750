// Reading and writing design files: TOML for people, the same schema as JSON for programs.
// Only design_loader.cpp includes the TOML and JSON parsers.
#pragma once

#include "engine/design.hpp"

#include <string>
#include <string_view>

namespace moonwright {

enum class design_format { toml, json };

/// Loads and validates a design file; the format follows the extension (.toml, .json).
/// Throws input_error (exit code 2) with file:line:column, field path, found and expected.
design load_design_file(const std::string& path);
/// Parses and validates design text; `source_name` labels messages (a path or "<stdin>").
design parse_design(std::string_view text, design_format format, const std::string& source_name);
/// Writes a design as JSON in the file schema, exactly: loading the result gives an equal design.
std::string design_to_json(const design& d);
/// Writes a design as TOML in the file schema, exactly (same guarantee).
std::string design_to_toml(const design& d);

} // namespace moonwright
