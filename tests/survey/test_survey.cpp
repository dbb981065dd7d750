// Survey library: design verdict rules and statistics from task rows, clone set-up (clone 0 as
// written, nudge size), streaming inputs, the journal (torn lines, other settings), shards and
// exact round trips of task rows. Wilson and Kaplan–Meier themselves are validated in
// tests/unit/test_statistics.cpp; here they are only wired up.
#include "engine/design_generator.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/nbody_system.hpp"
#include "engine/survey_file.hpp"
#include "engine/survey_input.hpp"
#include "engine/survey_summary.hpp"
#include "engine/survey_task.hpp"

#include <cmath>
#include <doctest/doctest.h>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>

using namespace moonwright;
namespace fs = std::filesystem;

namespace {

survey_task_result row(std::uint64_t clone, const std::string& verdict, std::optional<double> t) {
    survey_task_result r;
    r.design_index = 0;
    r.clone = clone;
    r.verdict = verdict;
    r.span_s = 100;
    r.simulated_s = t.value_or(100);
    r.reference_period_s = 1;
    if (t) r.first_event = "close_approach", r.first_event_time_s = t;
    return r;
}

survey_design_record valid_record() {
    return {0, "Test", "test.toml", true, {}};
}

fs::path scratch(const std::string& name) {
    const fs::path p = fs::path(MOONWRIGHT_BINARY_DIR) / "tests" / "survey" / "scratch" / name;
    fs::remove_all(p);
    fs::create_directories(p);
    return p;
}

} // namespace

TEST_CASE("design verdict: every clone survived -> stable") {
    const auto s = summarize_design(
        valid_record(), {row(0, "stable", {}), row(1, "stable", {}), row(2, "stable", {})});
    CHECK(s.verdict == "stable");
    CHECK(s.survivors == 3);
    CHECK(s.survival.estimate == 1.0);
    CHECK(s.curve.steps.empty());
    CHECK(!s.median_s);
    CHECK(s.headline == "Stable: all 3 clones survived 100 orbits.");
}

TEST_CASE("design verdict: mixed -> at_risk with fraction, Wilson interval and KM median") {
    // Events at 10 and 20, two survivors censored at the span: S = 3/4 after 10, 1/2 after 20,
    // so the median survival time is 20 (the smallest t with S <= 0.5).
    const auto s =
        summarize_design(valid_record(), {row(3, "stable", {}), row(0, "unstable", 20.0),
                                          row(1, "stable", {}), row(2, "unstable", 10.0)});
    CHECK(s.verdict == "at_risk");
    CHECK(s.survivors == 2);
    const auto w = wilson_interval(2, 4);
    CHECK(s.survival.lower == w.lower);
    CHECK(s.survival.upper == w.upper);
    REQUIRE(s.curve.steps.size() == 2);
    CHECK(s.curve.steps[0].survival == doctest::Approx(0.75));
    REQUIRE(s.median_s);
    CHECK(*s.median_s == 20.0);
    CHECK(*s.median_orbits == 20.0);
    CHECK(s.first_events[0] == std::pair<std::string, std::size_t>{"none", 2});
    CHECK(s.first_events[1] == std::pair<std::string, std::size_t>{"close_approach", 2});
    CHECK(s.headline.find("2 of 4 clones survived") != std::string::npos);
}

TEST_CASE("design verdict: none survived -> unstable, unreliable clones left out and named") {
    const auto s =
        summarize_design(valid_record(), {row(0, "unstable", 5.0), row(1, "unstable", 7.0),
                                          row(2, "unreliable", {})});
    CHECK(s.verdict == "unstable");
    CHECK(s.unreliable == 1);
    CHECK(s.survival.estimate == 0.0);
    CHECK(s.headline.find("1 of 3 clones were unreliable") != std::string::npos);
    // The unreliable clone is censored at the span, not an event: three at risk at 5, so S falls
    // to 2/3 at 5 and to 1/3 at 7 (it would be 1/2 at 5 were the clone dropped or an event).
    REQUIRE(s.curve.steps.size() == 2);
    CHECK(s.curve.steps[0].survival == doctest::Approx(2.0 / 3.0));
    REQUIRE(s.median_s);
    CHECK(*s.median_s == 7.0);

    const auto all_bad = summarize_design(valid_record(), {row(0, "unreliable", {})});
    CHECK(all_bad.verdict == "unreliable");
    const auto chaotic =
        summarize_design(valid_record(), {row(0, "stable", {}), row(1, "chaotic", {})});
    CHECK(chaotic.verdict == "chaotic");
}

TEST_CASE("design verdict: invalid designs keep their findings and have no clones") {
    survey_design_record rec{4,
                             "Bad",
                             "bad.toml",
                             false,
                             {{severity::error, "roche", "Sel", "Sel is inside the Roche limit"}}};
    const auto s = summarize_design(rec, {});
    CHECK(s.verdict == "invalid");
    CHECK(s.headline == "Invalid: Sel is inside the Roche limit");
}

TEST_CASE(
    "clone 0 is the design as written, the other clones are nudged by the documented amount") {
    const design d = generate_design(11, 3, generator_kind::giant);
    const resolved_system plain = resolve(d, d.seed.value_or(1));
    const resolved_system c0 = resolve_clone(d, 0, 12345, 1e-9);
    for (std::size_t k = 1; k < plain.bodies.size(); ++k) {
        CHECK(c0.bodies[k].orbit->a_m == plain.bodies[k].orbit->a_m);
        CHECK(c0.bodies[k].orbit->mean_anomaly_rad == plain.bodies[k].orbit->mean_anomaly_rad);
    }
    // Clone 1 against the same seed without the nudge: every relative position moved by 1e-9 of
    // its length (to rounding), in directions that differ between bodies.
    const std::uint64_t seed = survey_task_seed(1, 3, 1);
    const resolved_system base = resolve(d, seed);
    const resolved_system c1 = resolve_clone(d, 1, seed, 1e-9);
    const jacobi_tree tree = build_nbody(base).tree();
    std::set<double> dx;
    for (std::size_t k = 1; k < base.bodies.size(); ++k) {
        auto position = [&](const resolved_orbit& o) {
            return elements_to_cartesian(tree.kepler_gm(k),
                                         elements_from_mean(o.a_m, o.e, o.i_rad, o.node_rad,
                                                            o.peri_rad, o.mean_anomaly_rad))
                .r;
        };
        const vec3 r0 = position(*base.bodies[k].orbit), r1 = position(*c1.bodies[k].orbit);
        const double len = std::hypot(r0[0], r0[1], r0[2]);
        const double moved = std::hypot(r1[0] - r0[0], r1[1] - r0[1], r1[2] - r0[2]);
        CHECK(moved / len == doctest::Approx(1e-9).epsilon(1e-3));
        dx.insert((r1[0] - r0[0]) / moved);
    }
    CHECK(dx.size() == base.bodies.size() - 1);
}

TEST_CASE("task seeds and shards: every task in exactly one shard, seeds fixed") {
    survey_settings s;
    s.clones = 3;
    s.shard_count = 4;
    std::size_t owned = 0;
    for (std::uint64_t i = 0; i < 10; ++i)
        for (std::uint64_t c = 0; c < 3; ++c) {
            int owners = 0;
            for (std::size_t k = 0; k < 4; ++k) {
                s.shard_index = k;
                owners += survey_task_in_shard(s, i, c) ? 1 : 0;
            }
            CHECK(owners == 1);
            ++owned;
        }
    CHECK(owned == 30);
    CHECK(survey_task_seed(1, 2, 3) == survey_task_seed(1, 2, 3));
    CHECK(survey_task_seed(1, 2, 3) != survey_task_seed(1, 3, 2));
    CHECK(survey_task_seed(1, 2, 3) < (std::uint64_t{1} << 63));
}

TEST_CASE("task rows round-trip through JSON exactly") {
    survey_task_result r = row(2, "unstable", 0.1 + 0.2);
    r.max_e = 1.0 / 3.0;
    r.energy_error = 1.2345678901234567e-13;
    r.design_name = "Vé\"ra";
    const survey_task_result back = survey_result_from_json(survey_result_to_json(r));
    CHECK(survey_result_to_json(back) == survey_result_to_json(r));
    CHECK(*back.first_event_time_s == 0.1 + 0.2);
    CHECK(back.max_e == 1.0 / 3.0);
}

TEST_CASE(
    "inputs stream in order: folders sorted, JSON lines, blank lines skipped, bad ones kept") {
    const fs::path dir = scratch("inputs");
    const design a = generate_design(1, 0, generator_kind::rocky);
    const design b = generate_design(1, 1, generator_kind::rocky);
    fs::create_directories(dir / "folder");
    std::ofstream(dir / "folder" / "z.toml") << design_to_toml(a);
    std::ofstream(dir / "folder" / "m.json") << design_to_json(b);
    std::ofstream(dir / "folder" / "readme.txt") << "ignored";
    std::ofstream(dir / "lines.jsonl") << design_to_json_line(a) << "\n\n{broken\n"
                                       << design_to_json_line(b) << "\n";
    survey_input in({(dir / "folder").string(), (dir / "lines.jsonl").string()});
    std::vector<survey_entry> got;
    while (auto e = in.next()) got.push_back(std::move(*e));
    REQUIRE(got.size() == 5);
    for (std::size_t k = 0; k < got.size(); ++k) CHECK(got[k].record.design_index == k);
    CHECK(got[0].record.source.ends_with("m.json"));
    CHECK(got[1].record.source.ends_with("z.toml"));
    CHECK(got[3].record.source.ends_with("lines.jsonl:3"));
    CHECK(!got[3].record.valid);
    CHECK(got[3].record.findings.at(0).code == "parse_error");
    CHECK(got[4].record.valid);
    CHECK(*got[4].design_ == b);

    CHECK_THROWS_AS(survey_input({(dir / "missing.jsonl").string()}), input_error);
}

TEST_CASE("journal: a torn last line is dropped, other settings are refused") {
    const fs::path dir = scratch("journal");
    const std::string path = (dir / "s.h5.journal").string();
    {
        survey_journal j(path, "A");
        j.append(survey_design_to_json(valid_record()));
        j.append(survey_result_to_json(row(0, "stable", {})));
    }
    std::ofstream(path, std::ios::app) << R"({"type":"task","design":0,"clo)";
    std::size_t designs = 0, tasks = 0;
    CHECK(survey_journal::replay(
        path, "A", [&](const auto&) { ++designs; }, [&](const auto&) { ++tasks; }));
    CHECK(designs == 1);
    CHECK(tasks == 1);
    {
        survey_journal j(path, "A"); // cuts the torn line, appends after the last whole one
        j.append(survey_result_to_json(row(1, "stable", {})));
    }
    tasks = 0;
    survey_journal::replay(
        path, "A", [](const auto&) {}, [&](const auto&) { ++tasks; });
    CHECK(tasks == 2);
    CHECK_THROWS_AS(survey_journal(path, "B"), input_error);
}
