// Survey files: the append-only journal of finished tasks (what a killed survey resumes from),
// the HDF5 survey file built from it (layout in docs/survey.md), and the per-design summary in
// JSON lines or CSV.
#pragma once

#include "engine/survey_summary.hpp"
#include "engine/survey_task.hpp"

#include <cstdio>
#include <functional>
#include <string>
#include <vector>

namespace moonwright {

/// FILE.h5.journal: a header line with the settings fingerprint, then one JSON line per design
/// record and per finished task, in the order they finished. Each line is written whole and
/// flushed to the operating system at once, so a killed process leaves at most a torn last line,
/// which replay drops.
class survey_journal {
  public:
    /// Opens `path` for appending: a new journal gets the header; an existing one must carry the
    /// same fingerprint (input_error otherwise) and is cut back to its last complete line.
    survey_journal(const std::string& path, const std::string& fingerprint);
    ~survey_journal();
    survey_journal(const survey_journal&) = delete;
    survey_journal& operator=(const survey_journal&) = delete;

    /// Appends one line (no newline in `line`). Throws io_error when it cannot write.
    void append(const std::string& line);
    void close();

    /// Replays an existing journal (complete lines only). Returns false when there is none.
    /// Throws input_error when its fingerprint differs from `fingerprint`.
    static bool replay(const std::string& path, const std::string& fingerprint,
                       const std::function<void(const survey_design_record&)>& on_design,
                       const std::function<void(const survey_task_result&)>& on_task);

  private:
    std::string path_;
    std::FILE* file_ = nullptr;
};

/// Everything a survey file holds: its settings, design records and task rows.
struct survey_contents {
    survey_settings settings;
    std::vector<survey_design_record> designs; ///< sorted by design index
    std::vector<survey_task_result> tasks;     ///< sorted by (design, clone)
};

/// Sorts, removes exact duplicates and checks that the contents are whole: every design index
/// from 0 has a record, every valid design has `clones` task rows (every row of its shard when
/// `settings.shard_count` > 1). Throws input_error naming what is missing or contradictory.
void normalize_survey_contents(survey_contents& c);

/// Per-design statistics of a complete (unsharded or merged) survey, in design order.
std::vector<survey_design_summary> summarize_survey(const survey_contents& c);

/// Writes the HDF5 survey file atomically (temporary file renamed over `path`): settings as
/// attributes, /tasks, /designs, /findings and, for a complete survey (one shard), /design/NNNNNN
/// groups with the statistics. Throws io_error when it cannot write.
void write_survey_file(const std::string& path, const survey_contents& c);
/// Reads a survey file back (for survey-merge). Throws input_error when it is not one.
survey_contents read_survey_file(const std::string& path);

/// Writes the per-design summary atomically: JSON lines when `path` ends in .jsonl, CSV when
/// it ends in .csv (input_error otherwise). One line per design, in design order.
void write_survey_summary(const std::string& path,
                          const std::vector<survey_design_summary>& summaries);
/// The summary as text (the same bytes write_survey_summary writes).
std::string survey_summary_jsonl(const std::vector<survey_design_summary>& summaries);
std::string survey_summary_csv(const std::vector<survey_design_summary>& summaries);

} // namespace moonwright
