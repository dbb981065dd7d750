// The one error root of moonwright, its kinds, and the exit codes the command line maps them to.
#pragma once

#include <stdexcept>
#include <string>

namespace moonwright {

/// Process exit codes of the `moonwright` command (documented in README.md).
enum class exit_code : int {
    ok = 0,            ///< success (for `run`: whatever the verdict)
    internal = 1,      ///< a bug in moonwright: please report it
    bad_input = 2,     ///< malformed design, bad option, unreadable input file
    rule_broken = 3,   ///< `check`: the design breaks an analytic rule (an error finding)
    io_failure = 4,    ///< an output file could not be written
    interrupted = 130, ///< stopped by Ctrl-C after saving what could be saved
};

/// Root of every error moonwright throws on purpose. Control flow (a rejected step, an event)
/// is never an error; an error means the work cannot go on.
class error : public std::runtime_error {
  public:
    error(const std::string& message, exit_code code) : std::runtime_error(message), code_(code) {}
    [[nodiscard]] exit_code code() const noexcept { return code_; }

  private:
    exit_code code_;
};

/// Where in an input a problem sits. line/column are 1-based; 0 means unknown.
struct source_location {
    std::string file; ///< file path, or a label such as "<stdin>"
    int line = 0;
    int column = 0;
    [[nodiscard]] std::string to_string() const; ///< "file:line:column", "file:line" or "file"
};

/// Bad user input: one message saying where, the field path, what was found and what was
/// expected, e.g. `moons.toml:12:5: body 'Sel' orbit.e = 1.2: a bound orbit needs 0 <= e < 1`.
class input_error : public error {
  public:
    input_error(source_location where, std::string field, std::string found, std::string expected);
    /// A problem with no single field (syntax errors, unreadable files).
    input_error(source_location where, std::string message);

    [[nodiscard]] const source_location& where() const noexcept { return where_; }
    [[nodiscard]] const std::string& field() const noexcept { return field_; }
    [[nodiscard]] const std::string& found() const noexcept { return found_; }
    [[nodiscard]] const std::string& expected() const noexcept { return expected_; }

  private:
    source_location where_;
    std::string field_, found_, expected_;
};

/// An output could not be written (disk full, permission, unwritable path).
class io_error : public error {
  public:
    explicit io_error(const std::string& message) : error(message, exit_code::io_failure) {}
};

/// A computation cannot continue (non-finite state, solver failure).
class numerical_error : public error {
  public:
    explicit numerical_error(const std::string& message) : error(message, exit_code::internal) {}
};

} // namespace moonwright
