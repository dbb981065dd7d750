// Formatting of moonwright's error messages: every input error reads the same way.
#include "engine/error.hpp"

#include <fmt/format.h>

namespace moonwright {

std::string source_location::to_string() const {
    if (line > 0 && column > 0) return fmt::format("{}:{}:{}", file, line, column);
    if (line > 0) return fmt::format("{}:{}", file, line);
    return file;
}

namespace {
std::string compose(const source_location& where, const std::string& field,
                    const std::string& found, const std::string& expected) {
    std::string head = where.to_string();
    if (!head.empty()) head += ": ";
    if (found.empty()) return fmt::format("{}{}: expected {}", head, field, expected);
    return fmt::format("{}{} = {}: expected {}", head, field, found, expected);
}
std::string prefixed(const source_location& where, const std::string& message) {
    std::string head = where.to_string();
    return head.empty() ? message : head + ": " + message;
}
} // namespace

input_error::input_error(source_location where, std::string field, std::string found,
                         std::string expected)
    : error(compose(where, field, found, expected), exit_code::bad_input), where_(std::move(where)),
      field_(std::move(field)), found_(std::move(found)), expected_(std::move(expected)) {}

input_error::input_error(source_location where, std::string message)
    : error(prefixed(where, message), exit_code::bad_input), where_(std::move(where)) {}

} // namespace moonwright
