// The report page of a `moonwright survey` result: the verdicts of all designs in plain words, a
// table of the designs (worst first, capped), Kaplan–Meier curves, verdict and first-event bar
// charts, the invalid designs with their findings and the survey settings. Input: docs/survey.md.
#pragma once

#include "engine/result_file.hpp"
#include "engine/survey_summary.hpp"
#include "engine/survey_task.hpp"
#include "tools/report/report_page.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace moonwright::report {

/// What the survey page shows: the settings and the per-design statistics, computed again from
/// the stored task rows with summarize_survey (engine/survey_file.hpp), as the survey did.
struct stored_survey {
    std::string path, version;
    survey_settings settings;
    std::size_t tasks = 0;                      ///< task rows in the file
    std::vector<survey_design_summary> designs; ///< in design order
};

/// How many rows and curves a survey page shows at most (a survey may hold 10^4 designs).
struct survey_page_limits {
    std::size_t table_rows = 50;      ///< designs in the table (the worst ones)
    std::size_t curves = 8;           ///< Kaplan–Meier curves in the figure (the worst ones)
    std::size_t invalid_designs = 30; ///< invalid designs whose findings are listed
};

/// Reads a survey file (root attribute format = "moonwright survey"). Throws input_error naming
/// the file for anything else, for a shard file (merge the shards first) and for incomplete or
/// unreadable contents.
[[nodiscard]] stored_survey read_survey_result(const result_file& f);

/// Builds the page (figures rendered as PNG with PLplot). Throws io_error when a figure cannot
/// be drawn.
[[nodiscard]] report_page build_survey_page(const stored_survey& s, survey_page_limits limits = {});

} // namespace moonwright::report
