// The survey report page built from survey statistics made in-process (summarize_design on
// invented task rows): banner, table with Wilson intervals and medians, figures, invalid designs,
// caps for large surveys, and files that are not survey results.
#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/error.hpp"
#include "engine/result_file.hpp"
#include "engine/statistics.hpp"
#include "engine/survey_summary.hpp"
#include "tools/report/survey_page.hpp"

#include <doctest/doctest.h>
#include <filesystem>
#include <regex>
#include <string>
#include <unistd.h>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

constexpr double span_s = 10 * c::year;

survey_task_result clone_row(std::uint64_t design, std::uint64_t clone, const std::string& event,
                             double event_time_s) {
    survey_task_result r;
    r.design_index = design;
    r.clone = clone;
    r.span_s = span_s;
    r.reference_period_s = 0.01 * c::year;
    if (event.empty()) {
        r.verdict = "stable";
        r.simulated_s = span_s;
    } else {
        r.verdict = "unstable";
        r.first_event = event;
        r.first_event_time_s = event_time_s;
        r.simulated_s = event_time_s;
    }
    return r;
}

survey_design_record record(std::uint64_t index, const std::string& name, bool valid = true) {
    survey_design_record d;
    d.design_index = index;
    d.name = name;
    d.source = "batch.jsonl:" + std::to_string(index + 1);
    d.valid = valid;
    if (!valid)
        d.findings.push_back({severity::error, "roche_limit", name + " b",
                              "orbit inside the fluid Roche limit (1.2 planet radii)"});
    return d;
}

/// Three designs: one stable, one at risk (2 of 4 survive; escapes at 2 and 5 yr), one invalid.
report::stored_survey small_survey() {
    report::stored_survey s;
    s.path = "small-survey.h5";
    s.version = "0.1.0";
    s.settings.clones = 4;
    s.settings.orbits = 1000;
    std::vector<survey_task_result> stable, at_risk;
    for (std::uint64_t k = 0; k < 4; ++k) stable.push_back(clone_row(0, k, "", 0));
    at_risk = {clone_row(1, 0, "", 0), clone_row(1, 1, "escape", 2 * c::year),
               clone_row(1, 2, "", 0), clone_row(1, 3, "collision", 5 * c::year)};
    s.designs.push_back(summarize_design(record(0, "Arlen"), stable));
    s.designs.push_back(summarize_design(record(1, "Borrow"), at_risk));
    s.designs.push_back(summarize_design(record(2, "Cindral", false), {}));
    s.tasks = 8;
    return s;
}

std::string section(const std::string& html, const std::string& id) {
    const auto start = html.find("<section class=\"section\" id=\"" + id + "\"");
    if (start == std::string::npos) return {};
    return html.substr(start, html.find("</section>", start) - start);
}

std::size_t count(const std::string& text, const std::string& what) {
    std::size_t n = 0;
    for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
    return n;
}

} // namespace

TEST_CASE("survey page: banner, table, figures and invalid designs of a small survey") {
    const auto s = small_survey();
    REQUIRE(s.designs[1].verdict == "at_risk");
    const auto page = report::build_survey_page(s);
    const std::string html = page.page_.render();

    // One stable of three, one at risk, one invalid: a mixed survey, said in plain words.
    CHECK(html.find("data-tone=\"neutral\"") != std::string::npos);
    CHECK(html.find("1 of 3 designs survived 1000 orbits of each design&#39;s reference body in "
                    "every clone; 1 lost some clones, 0 lost all and 1 was invalid.") !=
          std::string::npos);
    CHECK(html.find("1 at risk: some clones survived") != std::string::npos);
    CHECK(html.find("8 clones in all: 6 survived the span; first events: collision 1, escape 1.") !=
          std::string::npos);

    // The table: worst first, so Borrow (at risk) before Arlen (stable); Wilson 95% interval of
    // 2 of 4 from the engine's wilson_interval, shown as percentages to 3 digits.
    const std::string designs = section(html, "designs");
    REQUIRE_FALSE(designs.empty());
    CHECK(designs.find("Borrow") < designs.find("Arlen"));
    CHECK(designs.find("Cindral") == std::string::npos); // listed with its findings instead
    const auto w = wilson_interval(2, 4);
    CHECK(designs.find(format_significant(100 * w.lower, 3) + " to " +
                       format_significant(100 * w.upper, 3)) != std::string::npos);
    // Kaplan-Meier: S = 3/4 after the escape at 2 yr, 1/2 after the collision at 5 yr, so the
    // median survival is 5 yr = 500 reference orbits.
    CHECK(designs.find("<td class=\"num\">5</td>") != std::string::npos);
    CHECK(designs.find("<td class=\"num\">500</td>") != std::string::npos);
    CHECK(designs.find("collision 1, escape 1") != std::string::npos);
    CHECK(designs.find("All 2 integrated designs, worst first") != std::string::npos);

    // Figures: the Kaplan-Meier step plot and two bar charts, embedded and kept for --figures.
    REQUIRE(page.figures_.size() == 3u);
    CHECK(page.figures_[0].id_ == "survey-survival");
    CHECK(page.figures_[0].kind_ == "survival");
    CHECK(page.figures_[1].id_ == "survey-verdicts");
    CHECK(page.figures_[2].id_ == "survey-first-events");
    CHECK(page.figures_[1].kind_ == "bars");
    for (const auto& f : page.figures_) {
        CAPTURE(f.id_);
        REQUIRE(f.bytes_.size() > 8);
        CHECK(f.bytes_[1] == 'P'); // PNG signature
        CHECK(html.find("id=\"" + f.id_ + "\"") != std::string::npos);
    }
    CHECK(section(html, "survival").find("All 2 designs with reliable clones are shown.") !=
          std::string::npos);
    // The span is in orbits, so the curves share an axis in orbits of the reference body.
    CHECK(section(html, "survival").find("time in orbits of each design&#39;s reference body") !=
          std::string::npos);

    const std::string invalid = section(html, "invalid");
    CHECK(invalid.find("#2 Cindral (batch.jsonl:3): 1 findings") != std::string::npos);
    CHECK(invalid.find("fluid Roche limit (1.2 planet radii) [roche_limit]") != std::string::npos);
    CHECK(invalid.find("Cindral b") != std::string::npos);
}

TEST_CASE("survey page: a large survey is capped and says so") {
    report::stored_survey s;
    s.path = "large.h5";
    s.version = "0.1.0";
    s.settings.clones = 2;
    s.settings.orbits = 100;
    // 120 designs: the first 60 lose one clone of two at a time that grows with the index; the
    // other 60 keep both; every tenth design is invalid.
    for (std::uint64_t i = 0; i < 120; ++i) {
        if (i % 10 == 9) {
            s.designs.push_back(summarize_design(record(i, "D" + std::to_string(i), false), {}));
            continue;
        }
        std::vector<survey_task_result> rows = {
            clone_row(i, 0, "", 0),
            i < 60 ? clone_row(i, 1, "escape", (1.0 + 0.1 * static_cast<double>(i)) * c::year)
                   : clone_row(i, 1, "", 0)};
        s.designs.push_back(summarize_design(record(i, "D" + std::to_string(i)), rows));
        s.tasks += 2;
    }
    report::survey_page_limits limits;
    limits.table_rows = 20;
    limits.curves = 5;
    limits.invalid_designs = 4;
    const std::string html = report::build_survey_page(s, limits).page_.render();
    const std::string designs = section(html, "designs");
    CHECK(designs.find("The 20 worst of 108 integrated designs") != std::string::npos);
    CHECK(count(designs, "<tr>") == 21u); // header + 20 rows
    // At risk, all with 1 of 2: the earliest median (design 0, escape at 1 yr) comes first.
    CHECK(designs.find("<td>D0</td>") < designs.find("<td>D1</td>"));
    CHECK(designs.find("<td>D70</td>") == std::string::npos);
    CHECK(section(html, "survival").find("Shown: the 5 designs with the lowest survival") !=
          std::string::npos);
    const std::string invalid = section(html, "invalid");
    CHECK(count(invalid, "1 findings") == 4u);
    CHECK(invalid.find("8 more invalid designs are not listed") != std::string::npos);
}

TEST_CASE("survey page: every design stable, and a survey with no valid design") {
    report::stored_survey s = small_survey();
    s.designs.erase(s.designs.begin() + 1, s.designs.end());
    std::string html = report::build_survey_page(s).page_.render();
    CHECK(html.find("data-tone=\"good\"") != std::string::npos);
    CHECK(html.find("all survive") != std::string::npos);
    CHECK(section(html, "invalid").find("Every design passed the check.") != std::string::npos);
    // A span given in time: the axis and the table are in years.
    s.settings.orbits.reset();
    s.settings.span_s = span_s;
    html = report::build_survey_page(s).page_.render();
    CHECK(section(html, "survival").find("time in yr.") != std::string::npos);
    CHECK(html.find("survived 10\u00a0yr in every clone") != std::string::npos);

    report::stored_survey none = small_survey();
    none.designs.erase(none.designs.begin(), none.designs.begin() + 2);
    const auto page = report::build_survey_page(none);
    html = page.page_.render();
    CHECK(html.find("data-tone=\"caution\"") != std::string::npos);
    CHECK(section(html, "designs").find("No design passed the check") != std::string::npos);
    CHECK(section(html, "survival").find("no survival curve") != std::string::npos);
    CHECK(page.figures_.size() == 1u); // the verdict bars only: no clone, no first events
}

TEST_CASE("survey page reader: files that are not complete survey results") {
    const auto dir = std::filesystem::temp_directory_path() /
                     ("mw_survey_page_" + std::to_string(static_cast<long>(::getpid())));
    std::filesystem::create_directories(dir);
    const std::string path = (dir / "other.h5").string();
    {
        result_file f(path, result_file::mode::create);
        f.set_attribute("/", "format", std::string("something else"));
    }
    {
        const result_file f(path, result_file::mode::read);
        CHECK_THROWS_WITH_AS((void)report::read_survey_result(f),
                             doctest::Contains("format is not 'moonwright survey'"), input_error);
    }
    const std::string shard = (dir / "shard.h5").string();
    {
        result_file f(shard, result_file::mode::create);
        f.set_attribute("/", "format", std::string("moonwright survey"));
        f.set_attribute("/", "shard_index", std::int64_t{1});
        f.set_attribute("/", "shard_count", std::int64_t{3});
    }
    {
        const result_file f(shard, result_file::mode::read);
        CHECK_THROWS_WITH_AS((void)report::read_survey_result(f),
                             doctest::Contains("this is shard 1 of 3"), input_error);
    }
    std::filesystem::remove_all(dir);
}
