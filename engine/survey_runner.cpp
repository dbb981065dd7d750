// The survey session (streaming, resume from the journal), the thread pool, shard merging.
#include "engine/survey_runner.hpp"

#include "engine/error.hpp"

#include <algorithm>
#include <condition_variable>
#include <deque>
#include <exception>
#include <filesystem>
#include <fmt/format.h>
#include <mutex>
#include <thread>
#include <variant>

namespace moonwright {

namespace fs = std::filesystem;

std::pair<std::size_t, std::size_t> parse_shard(const std::string& text) {
    const auto slash = text.find('/');
    try {
        if (slash != std::string::npos) {
            std::size_t used_k = 0, used_n = 0;
            const std::string ks = text.substr(0, slash), ns = text.substr(slash + 1);
            const unsigned long long k = std::stoull(ks, &used_k);
            const unsigned long long n = std::stoull(ns, &used_n);
            if (used_k == ks.size() && used_n == ns.size() && n >= 1 && k < n &&
                ks.find('-') == std::string::npos && ns.find('-') == std::string::npos)
                return {static_cast<std::size_t>(k), static_cast<std::size_t>(n)};
        }
    } catch (const std::exception&) {
    }
    throw input_error(source_location{"<options>"}, "--shard", text,
                      "k/n with 0 <= k < n, e.g. 0/4");
}

namespace {

void check_settings(const survey_request& r) {
    const survey_settings& s = r.settings;
    if (s.clones < 1)
        throw input_error(source_location{"<options>"}, "--clones", fmt::format("{}", s.clones),
                          "at least 1 clone");
    if (s.orbits && !(*s.orbits > 0))
        throw input_error(source_location{"<options>"}, "--orbits", fmt::format("{}", *s.orbits),
                          "a positive number of orbits");
    if (s.span_s && !(*s.span_s > 0))
        throw input_error(source_location{"<options>"}, "--span", fmt::format("{} s", *s.span_s),
                          "a positive time");
    if (s.shard_count < 1 || s.shard_index >= s.shard_count)
        throw input_error(source_location{"<options>"}, "--shard",
                          fmt::format("{}/{}", s.shard_index, s.shard_count), "k/n with k < n");
    if (s.shard_count > 1 && !r.summary_path.empty())
        throw input_error(source_location{"<options>"}, "--summary", r.summary_path,
                          "no summary for one shard: survey-merge writes it from all shards");
    if (r.out_path.empty())
        throw input_error(source_location{"<options>"}, "--out", "nothing", "FILE.h5");
    if (!r.summary_path.empty()) {
        const auto ext = fs::path(r.summary_path).extension();
        if (ext != ".jsonl" && ext != ".csv")
            throw input_error(source_location{"<options>"}, "--summary", r.summary_path,
                              "a file name ending in .jsonl or .csv");
    }
}

/// The journal ties a survey to its settings and its inputs.
std::string journal_fingerprint(const survey_request& r) {
    std::string f = r.settings.fingerprint() + ";inputs=";
    for (const auto& in : r.inputs) f += in + "|";
    return f;
}

survey_report report_of(const survey_contents& c, std::size_t run, std::size_t resumed) {
    survey_report rep;
    rep.designs = c.designs.size();
    for (const auto& d : c.designs)
        if (!d.valid) ++rep.invalid;
    rep.tasks_run = run;
    rep.tasks_resumed = resumed;
    return rep;
}

/// Writes the final files of complete or shard contents; fills the verdict counts.
void write_outputs(survey_contents& c, const std::string& out, const std::string& summary,
                   survey_report& rep) {
    normalize_survey_contents(c);
    write_survey_file(out, c);
    if (c.settings.shard_count == 1) {
        const auto summaries = summarize_survey(c);
        for (const auto& m : summaries) ++rep.verdicts[m.verdict];
        if (!summary.empty()) write_survey_summary(summary, summaries);
    }
}

} // namespace

survey_session::survey_session(const survey_request& request)
    : request_(request), journal_path_(request.out_path + ".journal"),
      input_((check_settings(request), request.inputs), request.standard_input) {
    const std::string fingerprint = journal_fingerprint(request_);
    const std::uint64_t k = request_.settings.clones;
    survey_journal::replay(
        journal_path_, fingerprint,
        [&](const survey_design_record& d) { done_designs_[d.design_index] = d.valid; },
        [&](const survey_task_result& t) { done_tasks_.insert(t.design_index * k + t.clone); });
    tasks_resumed_ = done_tasks_.size();
    journal_ = std::make_unique<survey_journal>(journal_path_, fingerprint);
}

survey_session::~survey_session() = default;

std::optional<survey_session::item> survey_session::next() {
    const survey_settings& s = request_.settings;
    for (;;) {
        if (current_) {
            if (!current_recorded_) {
                current_recorded_ = true;
                return item{current_->record, std::nullopt};
            }
            const std::uint64_t i = current_->record.design_index;
            while (current_->design_ && next_clone_ < s.clones) {
                const std::uint64_t c = next_clone_++;
                if (!survey_task_in_shard(s, i, c) || done_tasks_.count(i * s.clones + c)) continue;
                survey_task t;
                t.design_index = i;
                t.clone = c;
                t.seed =
                    c == 0 ? current_->design_->seed.value_or(1) : survey_task_seed(s.seed, i, c);
                t.design_name = current_->record.name;
                t.design_ = current_->design_;
                return item{std::nullopt, std::move(t)};
            }
            current_.reset();
        }
        // The next design: parse and check it only when something about it is still to do.
        const std::uint64_t i = designs_read_;
        const bool own = survey_design_in_shard(s, i);
        const auto known = done_designs_.find(i);
        bool tasks_pending = false;
        for (std::uint64_t c = 0; c < s.clones && !tasks_pending; ++c)
            tasks_pending = survey_task_in_shard(s, i, c) && !done_tasks_.count(i * s.clones + c);
        const bool known_invalid = known != done_designs_.end() && !known->second;
        const bool needed =
            (own && known == done_designs_.end()) || (tasks_pending && !known_invalid);
        std::optional<survey_entry> e = input_.next(needed);
        if (!e) return std::nullopt;
        ++designs_read_;
        if (!needed) continue;
        current_ = std::move(e);
        next_clone_ = 0;
        current_recorded_ = !(own && known == done_designs_.end());
    }
}

void survey_session::record_design(const survey_design_record& d) {
    journal_->append(survey_design_to_json(d));
}

void survey_session::record_task(const survey_task_result& r) {
    journal_->append(survey_result_to_json(r));
    ++tasks_run_;
}

survey_progress survey_session::progress() const {
    return {designs_read_, tasks_run_, tasks_resumed_};
}

survey_report survey_session::finish() {
    journal_->close();
    survey_contents c;
    c.settings = request_.settings;
    survey_journal::replay(
        journal_path_, journal_fingerprint(request_),
        [&](const survey_design_record& d) { c.designs.push_back(d); },
        [&](const survey_task_result& t) { c.tasks.push_back(t); });
    survey_report rep = report_of(c, tasks_run_, tasks_resumed_);
    write_outputs(c, request_.out_path, request_.summary_path, rep);
    std::error_code ec;
    fs::remove(journal_path_, ec);
    return rep;
}

namespace {

/// A bounded multi-producer multi-consumer queue; close() ends it, abort() drops everything.
template <class T>
class bounded_queue {
  public:
    explicit bounded_queue(std::size_t capacity) : capacity_(capacity) {}
    bool push(T value) {
        std::unique_lock lock(mutex_);
        not_full_.wait(lock, [&] { return aborted_ || items_.size() < capacity_; });
        if (aborted_) return false;
        items_.push_back(std::move(value));
        not_empty_.notify_one();
        return true;
    }
    std::optional<T> pop() {
        std::unique_lock lock(mutex_);
        not_empty_.wait(lock, [&] { return aborted_ || closed_ || !items_.empty(); });
        if (aborted_ || items_.empty()) return std::nullopt;
        T value = std::move(items_.front());
        items_.pop_front();
        not_full_.notify_one();
        return value;
    }
    void close() {
        std::lock_guard lock(mutex_);
        closed_ = true;
        not_empty_.notify_all();
    }
    void abort() {
        std::lock_guard lock(mutex_);
        aborted_ = true;
        not_empty_.notify_all();
        not_full_.notify_all();
    }

  private:
    std::size_t capacity_;
    std::deque<T> items_;
    std::mutex mutex_;
    std::condition_variable not_empty_, not_full_;
    bool closed_ = false, aborted_ = false;
};

} // namespace

survey_report run_survey(const survey_request& request,
                         const std::function<void(const survey_progress&)>& on_progress,
                         const std::atomic<bool>* stop) {
    auto stopped = [stop] { return stop != nullptr && stop->load(std::memory_order_relaxed); };
    survey_session session(request);
    const std::size_t jobs = std::max<std::size_t>(1, request.jobs);
    using result = std::variant<survey_design_record, survey_task_result>;
    bounded_queue<survey_task> tasks(2 * jobs);
    bounded_queue<result> results(4 * jobs);

    std::mutex error_mutex;
    std::exception_ptr failure;
    auto fail = [&](std::exception_ptr e) {
        {
            std::lock_guard lock(error_mutex);
            if (!failure) failure = e;
        }
        tasks.abort();
        results.abort();
    };
    std::mutex live_mutex;
    std::size_t live = jobs + 1; // reader and workers still producing results
    auto producer_done = [&] {
        std::lock_guard lock(live_mutex);
        if (--live == 0) results.close();
    };

    std::vector<std::thread> threads;
    threads.emplace_back([&] {
        try {
            while (auto it = stopped() ? std::nullopt : session.next()) {
                if (it->design) {
                    if (!results.push(std::move(*it->design))) break;
                } else if (!tasks.push(std::move(*it->task))) {
                    break;
                }
            }
        } catch (...) {
            fail(std::current_exception());
        }
        tasks.close();
        producer_done();
    });
    for (std::size_t w = 0; w < jobs; ++w)
        threads.emplace_back([&] {
            try {
                while (auto t = tasks.pop()) {
                    std::optional<survey_task_result> r =
                        run_survey_task(*t, request.settings, stop);
                    t.reset();        // let go of the design before waiting on the queue
                    if (!r) continue; // stopped: the task is left for the next run
                    if (!results.push(std::move(*r))) break;
                }
            } catch (...) {
                fail(std::current_exception());
            }
            producer_done();
        });

    // This thread is the single writer.
    try {
        while (auto r = results.pop()) {
            if (auto* d = std::get_if<survey_design_record>(&*r)) {
                session.record_design(*d);
            } else {
                session.record_task(std::get<survey_task_result>(*r));
                if (on_progress) on_progress(session.progress());
            }
        }
    } catch (...) {
        fail(std::current_exception());
    }
    for (auto& t : threads) t.join();
    if (failure) std::rethrow_exception(failure);
    if (stopped()) {
        const survey_progress p = session.progress();
        survey_report r;
        r.designs = p.designs_read;
        r.tasks_run = p.tasks_done;
        r.tasks_resumed = p.tasks_resumed;
        r.interrupted = true;
        return r;
    }
    return session.finish();
}

survey_report merge_survey_shards(const std::vector<std::string>& shard_paths,
                                  const std::string& out_path, const std::string& summary_path) {
    if (shard_paths.empty())
        throw input_error(source_location{"<options>"}, "SHARD", "nothing", "shard files");
    survey_contents all;
    std::vector<bool> seen;
    for (std::size_t k = 0; k < shard_paths.size(); ++k) {
        survey_contents c = read_survey_file(shard_paths[k]);
        const survey_settings& s = c.settings;
        if (k == 0) {
            all.settings = s;
            seen.assign(s.shard_count, false);
        }
        survey_settings a = all.settings, b = s;
        a.shard_index = b.shard_index = 0;
        if (a.fingerprint() != b.fingerprint())
            throw input_error(source_location{shard_paths[k]},
                              "this shard belongs to a survey with other settings");
        if (seen[s.shard_index])
            throw input_error(
                source_location{shard_paths[k]},
                fmt::format("shard {}/{} is given twice", s.shard_index, s.shard_count));
        seen[s.shard_index] = true;
        for (auto& d : c.designs) all.designs.push_back(std::move(d));
        for (auto& t : c.tasks) all.tasks.push_back(std::move(t));
    }
    for (std::size_t k = 0; k < seen.size(); ++k)
        if (!seen[k])
            throw input_error(source_location{"<options>"}, "SHARD",
                              fmt::format("no file of shard {}/{}", k, seen.size()),
                              "every shard of the survey");
    all.settings.shard_index = 0;
    all.settings.shard_count = 1;
    survey_report rep = report_of(all, 0, all.tasks.size());
    write_outputs(all, out_path, summary_path, rep);
    return rep;
}

} // namespace moonwright
