// Running a survey: the session that streams designs into tasks, skips what a journal says is
// done and records results; the thread pool over (design, clone) tasks; merging shard files.
#pragma once

#include "engine/survey_file.hpp"
#include "engine/survey_input.hpp"
#include "engine/survey_task.hpp"

#include <atomic>
#include <cstdint>
#include <functional>
#include <istream>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <unordered_map>
#include <unordered_set>
#include <vector>

namespace moonwright {

struct survey_request {
    std::vector<std::string> inputs; ///< design files, folders, .jsonl files, "-"
    std::string out_path;            ///< FILE.h5 (the journal is FILE.h5.journal)
    std::string summary_path;        ///< FILE.jsonl or FILE.csv, or empty
    survey_settings settings;
    std::size_t jobs = 1;                   ///< worker threads
    std::istream* standard_input = nullptr; ///< for the input "-"
};

struct survey_report {
    std::size_t designs = 0, invalid = 0;
    std::size_t tasks_run = 0;                   ///< integrated by this process
    std::size_t tasks_resumed = 0;               ///< found finished in the journal
    std::map<std::string, std::size_t> verdicts; ///< designs by overall verdict (complete surveys)
    /// Stopped before the end: the finished tasks are in the journal (FILE.h5.journal), the
    /// result files are not written; the same command again continues.
    bool interrupted = false;
};

/// What the writer is told after each finished task.
struct survey_progress {
    std::size_t designs_read = 0, tasks_done = 0, tasks_resumed = 0;
};

/// One survey in progress. next() streams designs and yields what must be recorded or run; the
/// record functions append to the journal. next() and the record functions may be called from
/// two different threads (the reader and the single writer), but each from one thread only.
class survey_session {
  public:
    /// Checks the request (inputs exist, options agree; input_error) and opens the journal,
    /// replaying it when a previous run of the same survey was stopped.
    explicit survey_session(const survey_request& request);
    ~survey_session();

    struct item {
        std::optional<survey_design_record> design; ///< a design record to write, or
        std::optional<survey_task> task;            ///< a task to run
    };
    /// The next thing to do, or nothing when every input has been read.
    std::optional<item> next();
    void record_design(const survey_design_record& d);
    void record_task(const survey_task_result& r);
    [[nodiscard]] survey_progress progress() const;
    [[nodiscard]] const survey_settings& settings() const { return request_.settings; }

    /// Builds the final files from the journal (HDF5, summary), removes the journal, and
    /// reports. Call after every task has been recorded.
    survey_report finish();

  private:
    survey_request request_;
    std::string journal_path_;
    std::unique_ptr<survey_journal> journal_;
    survey_input input_;
    std::unordered_map<std::uint64_t, bool> done_designs_; ///< index -> valid
    std::unordered_set<std::uint64_t> done_tasks_;         ///< design * clones + clone
    // Reader state.
    std::optional<survey_entry> current_;
    std::uint64_t next_clone_ = 0;
    bool current_recorded_ = true;
    std::size_t designs_read_ = 0;
    // Writer state.
    std::size_t tasks_run_ = 0, tasks_resumed_ = 0;
};

/// Runs a whole survey on `request.jobs` threads: one reader streams designs into a bounded
/// queue, workers integrate (design, clone) tasks, and this thread alone writes the journal.
/// Results do not depend on the number of threads or their scheduling.
/// When *stop becomes true (e.g. on Ctrl-C), running tasks are abandoned, finished ones stay
/// in the journal, and the report says interrupted.
survey_report run_survey(const survey_request& request,
                         const std::function<void(const survey_progress&)>& on_progress = {},
                         const std::atomic<bool>* stop = nullptr);

/// Merges the files of shards 0..n-1 of one survey into a complete survey file (and summary):
/// the same contents as one unsharded run. Throws input_error when shards are missing, repeated
/// or from different surveys.
survey_report merge_survey_shards(const std::vector<std::string>& shard_paths,
                                  const std::string& out_path, const std::string& summary_path);

/// "k/n" -> (k, n) with 0 <= k < n; input_error otherwise.
std::pair<std::size_t, std::size_t> parse_shard(const std::string& text);

} // namespace moonwright
