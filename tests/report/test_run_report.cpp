// The run report page built from small runs made in-process (run_driver + write_run_file):
// verdict, derived quantities, figures, events, escaping, and bad result files.
#include "engine/constants.hpp"
#include "engine/design_check.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"
#include "engine/result_file.hpp"
#include "engine/run_driver.hpp"
#include "engine/run_file.hpp"
#include "tools/report/run_report.hpp"

#include <cmath>
#include <doctest/doctest.h>
#include <filesystem>
#include <regex>
#include <string>
#include <unistd.h>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

/// A Sun-like star, a Jupiter-like planet on a circular orbit at 5.2 AU and two moons far apart
/// (about 40 mutual Hill radii), one with markup characters in its name.
const char* quiet_design = R"(
[system]
name = "Quiet & <calm>"
seed = 11
[[body]]
name = "Sol-like"
mass = "1 Msun"
radius = "1 Rsun"
[[body]]
name = "Jove-like"
orbits = "Sol-like"
mass = "1 Mjup"
radius = "1 Rjup"
J2 = 0
orbit = { a = "5.2 AU", e = 0, i = "0 deg", node = "0 deg", peri = "0 deg", mean_anomaly = "0 deg" }
[[body]]
name = "Arvel"
orbits = "Jove-like"
radius = "1800 km"
density = "3.0 g/cm3"
orbit = { a = "6 Rp", e = 0.01, i = "0.5 deg", node = "0 deg", peri = "0 deg", mean_anomaly = "0 deg" }
[[body]]
name = "Mira <b>&"
orbits = "Jove-like"
radius = "1500 km"
density = "2.0 g/cm3"
orbit = { a = "12 Rp", e = 0.02, i = "1 deg", node = "30 deg", peri = "10 deg", mean_anomaly = "180 deg" }
)";

/// A result file in a private temporary folder, removed at the end.
struct temp_result {
    std::filesystem::path dir;
    std::string path;
    temp_result() {
        dir = std::filesystem::temp_directory_path() /
              ("moonwright-run-report-" + std::to_string(::getpid()));
        std::filesystem::create_directories(dir);
        path = (dir / "run.h5").string();
    }
    ~temp_result() {
        std::error_code ec;
        std::filesystem::remove_all(dir, ec);
    }
};

/// Runs a design for `orbits` orbits of its outermost moon and writes the result file.
void make_run(const design& d, double orbits, std::size_t samples, const std::string& path) {
    const resolved_system sys = resolve(d, d.seed.value_or(1));
    run_options o;
    o.orbits = orbits;
    o.samples = samples;
    o.seed = d.seed.value_or(1);
    run_driver run(sys, o);
    run.advance();
    const verdict v = decide_verdict(run.outcome());
    run_metadata meta;
    meta.seed = o.seed;
    meta.design_format = "toml";
    write_run_file(path, d, run, meta, &v, false);
}

report::run_result read_back(const std::string& path) {
    const result_file f(path, result_file::mode::read);
    return report::read_run_result(f);
}

/// The page text with no-break spaces (U+00A0, between numbers and units and in digit groups)
/// and the spaces of digit groups taken out, so numbers can be looked up as printed by
/// format_significant.
std::string plain_numbers(std::string html) {
    const std::string nbsp = "\u00a0";
    for (auto at = html.find(nbsp); at != std::string::npos; at = html.find(nbsp, at))
        html.replace(at, nbsp.size(), " ");
    static const std::regex groups(R"((\d) (\d{3})\b)");
    for (int k = 0; k < 3; ++k) html = std::regex_replace(html, groups, "$1$2");
    return html;
}

/// The number in cell `column` (0 = the name) of the orbits table's row for `body`, in km.
double orbits_cell_km(const std::string& text, const std::string& body, std::size_t column) {
    const auto table = text.find("Orbits and limits");
    REQUIRE(table != std::string::npos);
    const auto row = text.find("<tr><td>" + body + "</td>", table);
    REQUIRE(row != std::string::npos);
    const std::string tr = text.substr(row, text.find("</tr>", row) - row);
    static const std::regex cell(R"(<td[^>]*>([^<]*)</td>)");
    std::vector<std::string> cells;
    for (auto it = std::sregex_iterator(tr.begin(), tr.end(), cell); it != std::sregex_iterator();
         ++it)
        cells.push_back((*it)[1].str());
    REQUIRE(cells.size() > column);
    INFO(cells[column]);
    REQUIRE(cells[column].ends_with(" km"));
    return std::stod(cells[column]);
}

std::size_t count(const std::string& text, const std::string& what) {
    std::size_t n = 0;
    for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
    return n;
}

} // namespace

TEST_CASE("run page: a quiet two-moon run shows its verdict, derived quantities and figures") {
    temp_result tmp;
    make_run(parse_design(quiet_design, design_format::toml, "quiet.toml"), 30, 60, tmp.path);
    const report::run_result r = read_back(tmp.path);
    REQUIRE(r.bodies.size() == 4);
    CHECK(r.samples == 61);
    CHECK(r.seed == 11);
    REQUIRE(r.verdict.has_value());
    CHECK(r.events.empty());

    const report::report_page page = report::build_run_page(r);
    const std::string html = page.page_.render();
    const std::string text = plain_numbers(html);

    // The verdict banner carries the word and headline read from /verdict.
    const std::regex banner(R"re(<div id="verdict"[^>]*>([\s\S]*?)</div>)re");
    std::smatch m;
    REQUIRE(std::regex_search(html, m, banner));
    CHECK(m[1].str().find(*r.verdict) != std::string::npos);
    CHECK(m[1].str().find(report::html_escape(r.headline)) != std::string::npos);

    // Names with markup are escaped everywhere.
    CHECK(html.find("Mira &lt;b&gt;&amp;") != std::string::npos);
    CHECK(html.find("Mira <b>") == std::string::npos);
    CHECK(html.find("Quiet &amp; &lt;calm&gt;") != std::string::npos);

    // Derived quantities, recomputed here from their formulas.
    // Hill radius a (1 - e) (m / 3M)^(1/3) (Murray & Dermott 1999, eq. 3.75), e = 0.
    const double rh = 5.2 * c::au * std::cbrt(c::M_jup / (3.0 * c::M_sun));
    CHECK(orbits_cell_km(text, "Jove-like", 5) * 1e3 == doctest::Approx(rh).epsilon(1e-4));
    // Fluid Roche limit 2.44 R_p (rho_p / rho_s)^(1/3) (Roche 1849, as in docs/check.md).
    const double rho_p = c::M_jup / (4.0 / 3.0 * c::pi * std::pow(r.bodies[1].radius_m, 3));
    const double roche = 2.44 * r.bodies[1].radius_m * std::cbrt(rho_p / 3000.0);
    CHECK(orbits_cell_km(text, "Arvel", 6) * 1e3 == doctest::Approx(roche).epsilon(1e-4));

    // Figures: a, e, i; sibling pair; orbits; energy; MEGNO when the run recorded it.
    std::vector<std::string> ids;
    for (const auto& f : page.figures_) ids.push_back(f.id_);
    for (const char* id : {"fig-elements-1", "fig-pairs", "fig-energy"})
        CHECK_MESSAGE(std::find(ids.begin(), ids.end(), id) != ids.end(), std::string(id));
    const bool has_megno =
        std::any_of(r.megno.begin(), r.megno.end(), [](double y) { return std::isfinite(y); });
    CHECK((std::find(ids.begin(), ids.end(), "fig-megno") != ids.end()) == has_megno);
    if (!has_megno) CHECK(html.find("recorded no MEGNO value") != std::string::npos);
    CHECK(std::any_of(ids.begin(), ids.end(),
                      [](const std::string& id) { return id.starts_with("fig-orbits-1"); }));
    CHECK(count(html, "<img data-figure=") == page.figures_.size());
    for (const auto& f : page.figures_) {
        REQUIRE(f.bytes_.size() > 8);
        CHECK(f.bytes_[1] == 'P');
        CHECK(f.bytes_[2] == 'N');
        CHECK(f.bytes_[3] == 'G');
    }
    // Every section of the run page is there; no events means the plain sentence.
    for (const char* id :
         {"design", "elements", "approaches", "orbits", "chaos", "accuracy", "events", "run"})
        CHECK_MESSAGE(html.find("id=\"" + std::string(id) + "\"") != std::string::npos,
                      std::string(id));
    CHECK(html.find("No event over the") != std::string::npos);
    CHECK(html.find("Arvel – Mira &lt;b&gt;&amp;") != std::string::npos);
}

TEST_CASE("run page: the crowded scenario lists its close approach in the event table") {
    temp_result tmp;
    make_run(load_design_file(std::string(MOONWRIGHT_SOURCE_DIR) + "/scenarios/crowded.toml"), 1000,
             100, tmp.path);
    const report::run_result r = read_back(tmp.path);
    REQUIRE(r.verdict.has_value());
    CHECK(*r.verdict == "unstable");
    REQUIRE_FALSE(r.events.empty());
    CHECK(r.events.front().kind == "close_approach");

    const std::string html = plain_numbers(report::build_run_page(r).page_.render());
    const auto events = html.find("id=\"events\"");
    REQUIRE(events != std::string::npos);
    const std::string table = html.substr(events, html.find("</section>", events) - events);
    CHECK(table.find("close approach") != std::string::npos);
    CHECK(table.find(r.events.front().body_name) != std::string::npos);
    // Distance in the threshold's units: the event fires at 1 mutual Hill radius (default).
    const double in_hill = r.events.front().distance_m / r.events.front().threshold_m;
    CHECK(table.find(format_significant(in_hill, 3) + " mutual Hill radii") != std::string::npos);
    CHECK(table.find("orbits of " + r.reference_body) != std::string::npos);
}

TEST_CASE("run page: files that are not run results are input errors naming the problem") {
    temp_result tmp;
    {
        result_file f(tmp.path, result_file::mode::create);
        f.create_group("/run");
        f.set_attribute("/run", "command", std::string("run"));
    }
    CHECK_THROWS_WITH_AS(read_back(tmp.path), doctest::Contains("/design/text is missing"),
                         input_error);
    {
        result_file f(tmp.path, result_file::mode::create);
        f.create_group("/run");
        f.set_attribute("/run", "command", std::string("tides"));
    }
    CHECK_THROWS_WITH_AS(read_back(tmp.path), doctest::Contains("expected 'run'"), input_error);
    {
        result_file f(tmp.path, result_file::mode::create);
        f.create_group("/other");
    }
    CHECK_THROWS_WITH_AS(read_back(tmp.path), doctest::Contains("/run@command is missing"),
                         input_error);
}
