// The survey journal, the HDF5 survey file and the per-design summaries (docs/survey.md).
#include "engine/survey_file.hpp"

#include "engine/error.hpp"
#include "engine/result_file.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <limits>
#include <map>
#include <nlohmann/json.hpp>
#include <sstream>
#include <unistd.h>

namespace moonwright {

namespace fs = std::filesystem;
using json = nlohmann::json;

namespace {

constexpr double nan = std::numeric_limits<double>::quiet_NaN();

std::string header_line(const std::string& fingerprint) {
    return json({{"journal", "moonwright survey"}, {"settings", fingerprint}}).dump();
}

/// Writes `text` to `path` through a temporary file renamed over it.
void write_atomically(const std::string& path, const std::string& text) {
    const std::string tmp = fmt::format("{}.tmp{}", path, ::getpid());
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        out << text;
        out.flush();
        if (!out) {
            std::error_code ec;
            fs::remove(tmp, ec);
            throw io_error(fmt::format("cannot write '{}'", path));
        }
    }
    std::error_code ec;
    fs::rename(tmp, path, ec);
    if (ec) {
        fs::remove(tmp, ec);
        throw io_error(fmt::format("cannot write '{}': {}", path, ec.message()));
    }
}

} // namespace

// ---------------------------------------------------------------------------------------------
// Journal

survey_journal::survey_journal(const std::string& path, const std::string& fingerprint)
    : path_(path) {
    std::error_code ec;
    if (fs::exists(path_, ec)) {
        // Keep complete lines only: a killed writer may have left half a line.
        std::ifstream in(path_, std::ios::binary);
        std::string text{std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
        const auto last = text.find_last_of('\n');
        const std::size_t keep = last == std::string::npos ? 0 : last + 1;
        const auto first_end = text.find('\n');
        if (first_end == std::string::npos ||
            text.substr(0, first_end) != header_line(fingerprint)) {
            if (keep > 0)
                throw input_error(
                    source_location{path_},
                    "this journal belongs to a survey with other settings or another file; "
                    "rerun with the same settings, or remove it to start over");
        }
        if (keep < text.size()) fs::resize_file(path_, keep, ec);
        if (ec) throw io_error(fmt::format("cannot repair the journal '{}'", path_));
        if (keep == 0) fs::remove(path_, ec);
    }
    const bool fresh = !fs::exists(path_, ec);
    file_ = std::fopen(path_.c_str(), "ab");
    if (!file_) throw io_error(fmt::format("cannot open the survey journal '{}'", path_));
    if (fresh) append(header_line(fingerprint));
}

survey_journal::~survey_journal() {
    close();
}

void survey_journal::close() {
    if (file_) std::fclose(file_);
    file_ = nullptr;
}

void survey_journal::append(const std::string& line) {
    const std::string whole = line + "\n";
    if (!file_ || std::fwrite(whole.data(), 1, whole.size(), file_) != whole.size() ||
        std::fflush(file_) != 0)
        throw io_error(fmt::format("cannot write the survey journal '{}'", path_));
}

bool survey_journal::replay(const std::string& path, const std::string& fingerprint,
                            const std::function<void(const survey_design_record&)>& on_design,
                            const std::function<void(const survey_task_result&)>& on_task) {
    std::ifstream in(path, std::ios::binary);
    if (!in) return false;
    std::string line;
    bool first = true;
    std::size_t number = 0;
    while (std::getline(in, line)) {
        ++number;
        if (in.eof()) break; // no newline: a torn last line
        if (first) {
            if (line != header_line(fingerprint))
                throw input_error(source_location{path, 1},
                                  "this journal belongs to a survey with other settings");
            first = false;
            continue;
        }
        try {
            const json j = json::parse(line);
            const std::string type = j.at("type").get<std::string>();
            if (type == "design")
                on_design(survey_design_from_json(line));
            else if (type == "task")
                on_task(survey_result_from_json(line));
        } catch (const json::exception& e) {
            throw input_error(source_location{path, static_cast<int>(number)},
                              fmt::format("unreadable journal line: {}", e.what()));
        }
    }
    return !first;
}

// ---------------------------------------------------------------------------------------------
// Contents

void normalize_survey_contents(survey_contents& c) {
    auto& d = c.designs;
    std::sort(d.begin(), d.end(),
              [](const auto& a, const auto& b) { return a.design_index < b.design_index; });
    auto& t = c.tasks;
    std::sort(t.begin(), t.end(), [](const auto& a, const auto& b) {
        return a.design_index != b.design_index ? a.design_index < b.design_index
                                                : a.clone < b.clone;
    });
    // A task finished twice (a crash between journal write and bookkeeping) gives the same row:
    // keep one. Different rows for one task mean mixed-up inputs.
    auto same_task = [](const survey_task_result& a, const survey_task_result& b) {
        return a.design_index == b.design_index && a.clone == b.clone;
    };
    std::vector<survey_task_result> unique;
    for (auto& row : t) {
        if (!unique.empty() && same_task(unique.back(), row)) {
            if (survey_result_to_json(unique.back()) != survey_result_to_json(row))
                throw input_error(source_location{"<survey>"},
                                  fmt::format("design {} clone {} has two different results",
                                              row.design_index, row.clone));
            continue;
        }
        unique.push_back(std::move(row));
    }
    t = std::move(unique);
    std::vector<survey_design_record> designs;
    for (auto& rec : d) {
        if (!designs.empty() && designs.back().design_index == rec.design_index) continue;
        designs.push_back(std::move(rec));
    }
    d = std::move(designs);

    const survey_settings& s = c.settings;
    std::size_t at = 0;
    for (std::size_t k = 0; k < d.size(); ++k) {
        const bool own = survey_design_in_shard(s, d[k].design_index);
        if (s.shard_count == 1 && d[k].design_index != k)
            throw input_error(source_location{"<survey>"}, fmt::format("design {} is missing", k));
        (void)own;
        std::size_t have = 0;
        while (at < t.size() && t[at].design_index < d[k].design_index) ++at;
        while (at + have < t.size() && t[at + have].design_index == d[k].design_index) ++have;
        if (s.shard_count == 1) {
            const std::size_t want = d[k].valid ? s.clones : 0;
            if (have != want)
                throw input_error(source_location{"<survey>"},
                                  fmt::format("design {} has {} of its {} clones", k, have, want));
        }
    }
}

std::vector<survey_design_summary> summarize_survey(const survey_contents& c) {
    std::vector<survey_design_summary> out;
    out.reserve(c.designs.size());
    std::size_t at = 0;
    for (const auto& rec : c.designs) {
        std::vector<survey_task_result> rows;
        while (at < c.tasks.size() && c.tasks[at].design_index < rec.design_index) ++at;
        while (at < c.tasks.size() && c.tasks[at].design_index == rec.design_index)
            rows.push_back(c.tasks[at++]);
        out.push_back(summarize_design(rec, std::move(rows)));
    }
    return out;
}

// ---------------------------------------------------------------------------------------------
// HDF5

namespace {

using rt = record_field::type;

const std::vector<record_field> task_fields = {
    {"design", rt::integer, "1"},
    {"design_name", rt::text, "", 96},
    {"clone", rt::integer, "1"},
    {"seed", rt::integer, "1"},
    {"verdict", rt::text, "", 16},
    {"first_event", rt::text, "", 24},
    {"first_event_bodies", rt::text, "", 128},
    {"first_event_time", rt::real, "s"},
    {"orbits_survived", rt::real, "1"},
    {"max_e", rt::real, "1"},
    {"energy_error", rt::real, "1"},
    {"span", rt::real, "s"},
    {"simulated", rt::real, "s"},
    {"reference_period", rt::real, "s"},
    {"note", rt::text, "", 256},
};

const std::vector<record_field> design_fields = {
    {"design", rt::integer, "1"},
    {"name", rt::text, "", 96},
    {"source", rt::text, "", 256},
    {"valid", rt::integer, "1"},
};

const std::vector<record_field> finding_fields = {
    {"design", rt::integer, "1"}, {"level", rt::text, "", 8},     {"code", rt::text, "", 48},
    {"body", rt::text, "", 96},   {"message", rt::text, "", 512},
};

const std::vector<record_field> statistics_fields = {
    {"design", rt::integer, "1"},
    {"name", rt::text, "", 96},
    {"verdict", rt::text, "", 16},
    {"clones", rt::integer, "1"},
    {"survivors", rt::integer, "1"},
    {"unreliable", rt::integer, "1"},
    {"survival_fraction", rt::real, "1"},
    {"wilson_lower", rt::real, "1"},
    {"wilson_upper", rt::real, "1"},
    {"median_survival", rt::real, "s"},
    {"median_survival_orbits", rt::real, "1"},
    {"headline", rt::text, "", 384},
};

std::string level_name(severity s) {
    return std::string(severity_name(s));
}

std::string design_group(std::uint64_t index) {
    return fmt::format("/design/{:06d}", index);
}

void write_contents(result_file& f, const survey_contents& c) {
    const survey_settings& s = c.settings;
    f.set_attribute("/", "format", std::string("moonwright survey"));
    f.set_attribute("/", "version", std::string("0.1.0"));
    f.set_attribute("/", "settings", s.fingerprint());
    f.set_attribute("/", "survey_seed", fmt::format("{}", s.seed));
    f.set_attribute("/", "clones", static_cast<std::int64_t>(s.clones));
    f.set_attribute("/", "orbits", s.orbits.value_or(nan));
    f.set_attribute("/", "span_s", s.span_s.value_or(nan));
    f.set_attribute("/", "megno", std::int64_t{s.megno ? 1 : 0});
    f.set_attribute("/", "integrator", s.integrator);
    f.set_attribute("/", "samples", static_cast<std::int64_t>(s.samples));
    f.set_attribute("/", "nudge", s.nudge);
    f.set_attribute("/", "shard_index", static_cast<std::int64_t>(s.shard_index));
    f.set_attribute("/", "shard_count", static_cast<std::int64_t>(s.shard_count));
    f.set_attribute("/", "designs", static_cast<std::int64_t>(c.designs.size()));
    f.set_attribute("/", "tasks", static_cast<std::int64_t>(c.tasks.size()));

    f.create_record_table("/tasks", task_fields,
                          "one row per task (design, clone), sorted by design then clone: the "
                          "clone's seed, verdict, first event and its time (NaN when none), orbits "
                          "of the reference body survived, largest eccentricity, largest relative "
                          "energy error");
    for (const auto& r : c.tasks)
        f.append_record("/tasks",
                        {static_cast<std::int64_t>(r.design_index), r.design_name,
                         static_cast<std::int64_t>(r.clone), static_cast<std::int64_t>(r.seed),
                         r.verdict, r.first_event, r.first_event_bodies,
                         r.first_event_time_s.value_or(nan), r.orbits_survived, r.max_e,
                         r.energy_error, r.span_s, r.simulated_s, r.reference_period_s, r.note});
    f.create_record_table("/designs", design_fields,
                          "one row per design: name, where it was read from, and whether it "
                          "passed the check (1) or was recorded as invalid (0)");
    f.create_record_table("/findings", finding_fields,
                          "findings of the invalid designs (parse errors, resolve errors and the "
                          "check's errors, warnings and notes)");
    for (const auto& d : c.designs) {
        f.append_record("/designs", {static_cast<std::int64_t>(d.design_index), d.name, d.source,
                                     std::int64_t{d.valid ? 1 : 0}});
        for (const auto& x : d.findings)
            f.append_record("/findings", {static_cast<std::int64_t>(d.design_index),
                                          level_name(x.level), x.code, x.body, x.message});
    }
    if (s.shard_count != 1) return; // statistics need every clone: survey-merge adds them

    const auto summaries = summarize_survey(c);
    f.create_group("/design"); // result_file::create_group needs the parent to exist first
    f.create_record_table("/statistics", statistics_fields,
                          "one row per design: overall verdict, survival fraction with its "
                          "Wilson 95% interval, Kaplan-Meier median survival (NaN when not "
                          "reached), headline");
    for (const auto& m : summaries) {
        const auto i = static_cast<std::int64_t>(m.record.design_index);
        f.append_record("/statistics",
                        {i, m.record.name, m.verdict, static_cast<std::int64_t>(m.clones),
                         static_cast<std::int64_t>(m.survivors),
                         static_cast<std::int64_t>(m.unreliable), m.survival.estimate,
                         m.survival.lower, m.survival.upper, m.median_s.value_or(nan),
                         m.median_orbits.value_or(nan), m.headline});
        const std::string g = design_group(m.record.design_index);
        f.create_group(g);
        f.set_attribute(g, "name", m.record.name);
        f.set_attribute(g, "source", m.record.source);
        f.set_attribute(g, "verdict", m.verdict);
        f.set_attribute(g, "headline", m.headline);
        if (!m.record.valid) {
            f.create_record_table(g + "/findings", finding_fields,
                                  "why this design was not integrated");
            for (const auto& x : m.record.findings)
                f.append_record(g + "/findings",
                                {i, level_name(x.level), x.code, x.body, x.message});
            continue;
        }
        const double wilson[3] = {m.survival.estimate, m.survival.lower, m.survival.upper};
        f.write_array(g + "/survival", wilson, {3}, "1",
                      fmt::format("survival fraction (clones with no event over the span, "
                                  "reliable clones only: {} of {}) and its Wilson 95% interval "
                                  "(lower, upper)",
                                  m.survivors, m.clones - m.unreliable));
        std::vector<double> curve;
        for (const auto& st : m.curve.steps) {
            curve.insert(curve.end(),
                         {st.time, static_cast<double>(st.at_risk), static_cast<double>(st.events),
                          st.survival, st.lower, st.upper});
        }
        f.write_array(g + "/kaplan_meier", curve, {m.curve.steps.size(), 6},
                      "time: s; at_risk: 1; events: 1; survival: 1; lower: 1; upper: 1",
                      "Kaplan-Meier survival curve, one row per distinct first-event time: time, "
                      "clones at risk, events, S(t) after it, 95% interval (log-log); survivors "
                      "censored at the span; no rows when no clone had an event");
        f.set_attribute(g + "/kaplan_meier", "columns",
                        std::string("time,at_risk,events,survival,lower,upper"));
        f.set_attribute(g + "/kaplan_meier", "median_survival_s", m.median_s.value_or(nan));
        std::vector<double> counts;
        std::string names;
        for (const auto& [kind, n] : m.first_events) {
            counts.push_back(static_cast<double>(n));
            names += (names.empty() ? "" : ",") + kind;
        }
        f.write_array(g + "/first_events", counts, {counts.size()}, "1",
                      "number of clones by first event kind (none = survived the span)");
        f.set_attribute(g + "/first_events", "columns", names);
    }
}

std::string text_of(const record_value& v) {
    return std::get<std::string>(v);
}
std::int64_t int_of(const record_value& v) {
    return std::get<std::int64_t>(v);
}
double real_of(const record_value& v) {
    return std::get<double>(v);
}

severity severity_from(const std::string& s) {
    return s == "error" ? severity::error : s == "warning" ? severity::warning : severity::note;
}

} // namespace

void write_survey_file(const std::string& path, const survey_contents& c) {
    const std::string tmp = fmt::format("{}.tmp{}", path, ::getpid());
    try {
        result_file f(tmp, result_file::mode::create);
        write_contents(f, c);
        f.flush();
    } catch (...) {
        std::error_code ec;
        fs::remove(tmp, ec);
        throw;
    }
    std::error_code ec;
    fs::rename(tmp, path, ec);
    if (ec) {
        fs::remove(tmp, ec);
        throw io_error(fmt::format("cannot write '{}': {}", path, ec.message()));
    }
}

survey_contents read_survey_file(const std::string& path) {
    std::error_code ec;
    if (!fs::exists(path, ec)) throw input_error(source_location{path}, "no such survey file");
    survey_contents c;
    try {
        const result_file f(path, result_file::mode::read);
        if (!f.has_attribute("/", "format") ||
            f.string_attribute("/", "format") != "moonwright survey")
            throw input_error(source_location{path}, "not a moonwright survey file");
        survey_settings& s = c.settings;
        s.seed = std::stoull(f.string_attribute("/", "survey_seed"));
        s.clones = static_cast<std::size_t>(f.integer_attribute("/", "clones"));
        const double orbits = f.real_attribute("/", "orbits");
        const double span = f.real_attribute("/", "span_s");
        if (std::isfinite(orbits)) s.orbits = orbits;
        if (std::isfinite(span)) s.span_s = span;
        s.megno = f.integer_attribute("/", "megno") != 0;
        s.integrator = f.string_attribute("/", "integrator");
        s.samples = static_cast<std::size_t>(f.integer_attribute("/", "samples"));
        s.nudge = f.real_attribute("/", "nudge");
        s.shard_index = static_cast<std::size_t>(f.integer_attribute("/", "shard_index"));
        s.shard_count = static_cast<std::size_t>(f.integer_attribute("/", "shard_count"));
        for (const auto& r : f.read_records("/tasks")) {
            survey_task_result t;
            t.design_index = static_cast<std::uint64_t>(int_of(r[0]));
            t.design_name = text_of(r[1]);
            t.clone = static_cast<std::uint64_t>(int_of(r[2]));
            t.seed = static_cast<std::uint64_t>(int_of(r[3]));
            t.verdict = text_of(r[4]);
            t.first_event = text_of(r[5]);
            t.first_event_bodies = text_of(r[6]);
            if (std::isfinite(real_of(r[7]))) t.first_event_time_s = real_of(r[7]);
            t.orbits_survived = real_of(r[8]);
            t.max_e = real_of(r[9]);
            t.energy_error = real_of(r[10]);
            t.span_s = real_of(r[11]);
            t.simulated_s = real_of(r[12]);
            t.reference_period_s = real_of(r[13]);
            t.note = text_of(r[14]);
            c.tasks.push_back(std::move(t));
        }
        std::map<std::uint64_t, std::vector<finding>> findings;
        for (const auto& r : f.read_records("/findings"))
            findings[static_cast<std::uint64_t>(int_of(r[0]))].push_back(
                {severity_from(text_of(r[1])), text_of(r[2]), text_of(r[3]), text_of(r[4])});
        for (const auto& r : f.read_records("/designs")) {
            survey_design_record d;
            d.design_index = static_cast<std::uint64_t>(int_of(r[0]));
            d.name = text_of(r[1]);
            d.source = text_of(r[2]);
            d.valid = int_of(r[3]) != 0;
            if (auto it = findings.find(d.design_index); it != findings.end())
                d.findings = it->second;
            c.designs.push_back(std::move(d));
        }
    } catch (const io_error& e) {
        throw input_error(source_location{path},
                          fmt::format("not a readable survey file: {}", e.what()));
    } catch (const std::bad_variant_access&) {
        throw input_error(source_location{path}, "a survey table has unexpected field types");
    } catch (const std::out_of_range&) {
        throw input_error(source_location{path}, "a survey table has too few fields");
    }
    return c;
}

// ---------------------------------------------------------------------------------------------
// Summaries

namespace {

std::string csv_field(const std::string& s) {
    if (s.find_first_of(",\"\n\r") == std::string::npos) return s;
    std::string out = "\"";
    for (char ch : s) {
        if (ch == '"') out += '"';
        out += ch;
    }
    return out + "\"";
}

std::string csv_number(const std::optional<double>& x) {
    return x ? fmt::format("{}", *x) : std::string();
}

} // namespace

std::string survey_summary_jsonl(const std::vector<survey_design_summary>& summaries) {
    using ordered = nlohmann::ordered_json; // fields in the documented order
    std::string out;
    for (const auto& m : summaries) {
        ordered events = ordered::object();
        for (const auto& [kind, n] : m.first_events) events[kind] = n;
        const bool valid = m.record.valid;
        auto number = [](std::optional<double> x) { return x ? ordered(*x) : ordered(); };
        ordered j = {{"design", m.record.design_index},
                     {"name", m.record.name},
                     {"source", m.record.source},
                     {"verdict", m.verdict},
                     {"clones", m.clones},
                     {"survivors", m.survivors},
                     {"unreliable", m.unreliable},
                     {"survival_fraction", valid ? ordered(m.survival.estimate) : ordered()},
                     {"wilson_lower", valid ? ordered(m.survival.lower) : ordered()},
                     {"wilson_upper", valid ? ordered(m.survival.upper) : ordered()},
                     {"median_survival_s", number(m.median_s)},
                     {"median_survival_orbits", number(m.median_orbits)},
                     {"first_events", events},
                     {"headline", m.headline}};
        out += j.dump(-1, ' ', false, ordered::error_handler_t::replace) + "\n";
    }
    return out;
}

std::string survey_summary_csv(const std::vector<survey_design_summary>& summaries) {
    std::string out = "design,name,source,verdict,clones,survivors,unreliable,survival_fraction,"
                      "wilson_lower,wilson_upper,median_survival_s,median_survival_orbits";
    for (const auto& kind : survey_first_event_kinds()) out += ",first_" + kind;
    out += ",headline\n";
    for (const auto& m : summaries) {
        const bool valid = m.record.valid;
        out += fmt::format("{},{},{},{},{},{},{},{},{},{},{},{}", m.record.design_index,
                           csv_field(m.record.name), csv_field(m.record.source), m.verdict,
                           m.clones, m.survivors, m.unreliable,
                           csv_number(valid ? std::optional(m.survival.estimate) : std::nullopt),
                           csv_number(valid ? std::optional(m.survival.lower) : std::nullopt),
                           csv_number(valid ? std::optional(m.survival.upper) : std::nullopt),
                           csv_number(m.median_s), csv_number(m.median_orbits));
        for (const auto& [kind, n] : m.first_events) out += fmt::format(",{}", n);
        out += "," + csv_field(m.headline) + "\n";
    }
    return out;
}

void write_survey_summary(const std::string& path,
                          const std::vector<survey_design_summary>& summaries) {
    const fs::path p(path);
    if (p.extension() == ".jsonl")
        write_atomically(path, survey_summary_jsonl(summaries));
    else if (p.extension() == ".csv")
        write_atomically(path, survey_summary_csv(summaries));
    else
        throw input_error(source_location{"<options>"}, "--summary", path,
                          "a file name ending in .jsonl or .csv");
}

} // namespace moonwright
