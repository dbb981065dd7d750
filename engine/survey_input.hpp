// The designs of a survey read one at a time from design files, folders and JSON-lines files
// (or standard input), each checked before it is integrated.
#pragma once

#include "engine/survey_task.hpp"

#include <cstdint>
#include <fstream>
#include <istream>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace moonwright {

/// One design of a survey: its record (name, source, validity, findings) and, when valid, the
/// parsed design.
struct survey_entry {
    survey_design_record record;
    std::shared_ptr<const design> design_; ///< empty when the design is invalid
};

/// Reads survey inputs in order, one design at a time (never all at once). An input is a design
/// file (.toml, .json), a folder (its .toml and .json files, sorted by name, not recursive), a
/// JSON-lines file (.jsonl, one design per non-blank line), or "-" for JSON lines on standard
/// input. Designs are numbered 0, 1, ... in that order. A design that does not parse, does not
/// resolve or has an error finding under the check is returned as invalid with its findings.
class survey_input {
  public:
    /// Checks that every input exists (throws input_error, exit code 2, when one does not).
    explicit survey_input(std::vector<std::string> inputs, std::istream* standard_input = nullptr);
    /// The next design, or nothing at the end. With `parse` false the design is skipped: only
    /// its index and source are filled (used for designs whose tasks are all finished). Throws
    /// input_error when an input cannot be read.
    std::optional<survey_entry> next(bool parse = true);

  private:
    bool open_next_input();
    std::vector<std::string> inputs_;
    std::istream* stdin_;
    std::size_t next_input_ = 0;
    std::vector<std::string> files_; ///< pending design files of the current input
    std::size_t next_file_ = 0;
    std::unique_ptr<std::ifstream> lines_file_;
    std::istream* lines_ = nullptr; ///< current JSON-lines stream
    std::string lines_label_;
    std::size_t line_number_ = 0;
    std::uint64_t next_index_ = 0;
};

/// Checks a parsed design as `moonwright check` does: resolves it with its own seed and runs the
/// analytic rules. Fills `record.valid` and, when invalid, `record.findings`.
void check_survey_design(const design& d, survey_design_record& record);

} // namespace moonwright
