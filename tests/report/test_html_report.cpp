// HTML report tests: escaping, base64, structure (ids, data-figure), self-containment, CSS rules.
#include "tools/report/html_report.hpp"

#include "engine/error.hpp"

#include <doctest/doctest.h>

#include <fstream>
#include <iterator>

using namespace moonwright::report;

namespace {
std::size_t count(const std::string& text, const std::string& what) {
    std::size_t n = 0;
    for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
    return n;
}

embedded_figure tiny_figure(const std::string& id) {
    // A hand-made 1x1 PNG is not needed: any bytes are embedded as given.
    return {id, "bars", "caption <b>", "alt \"quoted\"", "image/png", {1, 2, 3, 4}, 10, 10};
}
} // namespace

TEST_CASE("html_escape escapes the five special characters") {
    CHECK(html_escape("a<b>&\"c'") == "a&lt;b&gt;&amp;&quot;c&#39;");
    CHECK(html_escape("plain text, 3.4 g/cm3") == "plain text, 3.4 g/cm3");
    CHECK(html_escape("") == "");
}

TEST_CASE("base64 matches the RFC 4648 test vectors") {
    // RFC 4648, section 10 (test vectors).
    auto b64 = [](std::string s) { return base64_encode({s.begin(), s.end()}); };
    CHECK(b64("") == "");
    CHECK(b64("f") == "Zg==");
    CHECK(b64("fo") == "Zm8=");
    CHECK(b64("foo") == "Zm9v");
    CHECK(b64("foob") == "Zm9vYg==");
    CHECK(b64("fooba") == "Zm9vYmE=");
    CHECK(b64("foobar") == "Zm9vYmFy");
    CHECK(base64_encode({0xff, 0xfe, 0xfd}) == "//79");
}

TEST_CASE("the page holds the verdict, sections, tables and figures, all text escaped") {
    html_report page("Title <x>", "sub & title");
    page.verdict({"stable", "No events in 1e6 yr.", {"MEGNO 2.01 <regular>"}, verdict_tone::good});
    html_section s("design", "Design");
    s.paragraph("<script>alert(1)</script>")
        .key_values("kv", {{"mass", "5.97e24", "kg", "note & more"}})
        .table({"events", {"t", "kind"}, {"yr", ""}, {{"12", "close <encounter>"}}})
        .findings("f", {{severity::error, "moon 'A'", "e = 1.2 > 1"}})
        .figure(tiny_figure("fig-one"));
    page.section(s);
    const std::string h = page.render();
    CHECK(h.rfind("<!DOCTYPE html>", 0) == 0);
    CHECK(count(h, "id=\"verdict\"") == 1);
    CHECK(h.find("class=\"verdict tone-good\"") != std::string::npos);
    CHECK(h.find(">stable</span>") != std::string::npos);
    CHECK(h.find("<section class=\"section\" id=\"design\">") != std::string::npos);
    CHECK(h.find("<figure id=\"fig-one\" data-figure=\"bars\">") != std::string::npos);
    CHECK(h.find("<img data-figure=\"bars\" alt=\"alt &quot;quoted&quot;\"") != std::string::npos);
    CHECK(h.find("src=\"data:image/png;base64,AQIDBA==\"") != std::string::npos);
    CHECK(h.find("<figcaption>caption &lt;b&gt;</figcaption>") != std::string::npos);
    CHECK(h.find("<script>") == std::string::npos);
    CHECK(h.find("&lt;script&gt;alert(1)&lt;/script&gt;") != std::string::npos);
    CHECK(h.find("Title &lt;x&gt;") != std::string::npos);
    CHECK(h.find("close &lt;encounter&gt;") != std::string::npos);
    CHECK(h.find("<th scope=\"col\">t (yr)</th>") != std::string::npos);
    CHECK(h.find("class=\"sev sev-error\">error</td>") != std::string::npos);
    CHECK(h.find("<td class=\"unit\">kg</td>") != std::string::npos);
}

TEST_CASE("the page is self-contained and has responsive and print rules") {
    html_report page("t");
    page.verdict({"chaotic", "", {}, verdict_tone::caution});
    const std::string h = page.render();
    // No external resources and no scripts.
    CHECK(h.find("http://") == std::string::npos);
    CHECK(h.find("https://") == std::string::npos);
    CHECK(h.find("<script") == std::string::npos);
    CHECK(h.find("<link") == std::string::npos);
    // Phone: viewport meta, bounded width, scrolling tables, shrinking images; print rules.
    CHECK(h.find("name=\"viewport\" content=\"width=device-width, initial-scale=1\"") !=
          std::string::npos);
    CHECK(h.find("max-width:60rem") != std::string::npos);
    CHECK(h.find(".table-wrap{overflow-x:auto") != std::string::npos);
    CHECK(h.find("figure img{display:block;max-width:100%;height:auto") != std::string::npos);
    CHECK(h.find("@media (max-width:600px)") != std::string::npos);
    CHECK(h.find("@media print") != std::string::npos);
    // Each tone has its own border style, so the banner reads without colour.
    CHECK(h.find(".tone-good{background:#e3f2e6;border-style:solid") != std::string::npos);
    CHECK(h.find(".tone-caution{background:#fff1cf;border-style:dashed") != std::string::npos);
    CHECK(h.find(".tone-bad{background:#fbe0de;border-style:double") != std::string::npos);
}

TEST_CASE("bad ids and duplicate ids are refused") {
    CHECK_THROWS_AS(html_section("1abc", "x"), std::invalid_argument);
    CHECK_THROWS_AS(html_section("a b", "x"), std::invalid_argument);
    CHECK_THROWS_AS(html_section("verdict", "x"), std::invalid_argument);
    html_section s("one", "One");
    s.figure(tiny_figure("fig"));
    CHECK_THROWS_AS(s.figure(tiny_figure("fig")), std::invalid_argument);
    CHECK_THROWS_AS(s.figure(tiny_figure("bad\"id")), std::invalid_argument);
    html_report page("t");
    page.section(s);
    CHECK_THROWS_AS(page.section(html_section("one", "again")), std::invalid_argument);
    html_section t("two", "Two");
    t.figure(tiny_figure("fig"));
    CHECK_THROWS_AS(page.section(t), std::invalid_argument);
    CHECK_THROWS_AS(html_section("x", "x").table({"t", {"a", "b"}, {}, {{"only one"}}}),
                    std::invalid_argument);
}

TEST_CASE("a rendered figure is embedded as a PNG data URI") {
    bar_chart_data d{"Verdicts", "designs", {"stable", "unstable"}, {3, 1}};
    html_section s("figs", "Figures");
    s.figure("fig-bars", d, "Verdict counts.", "Bar chart of verdict counts", 400, 300);
    const std::string h = s.render();
    CHECK(h.find("data-figure=\"bars\"") != std::string::npos);
    CHECK(h.find("width=\"400\" height=\"300\"") != std::string::npos);
    // base64 of the PNG signature 89 50 4E 47 0D 0A 1A 0A begins with "iVBORw0KGgo".
    CHECK(h.find("src=\"data:image/png;base64,iVBORw0KGgo") != std::string::npos);
}

TEST_CASE("write puts the page on disk and fails cleanly for an unwritable path") {
    html_report page("t");
    const std::filesystem::path p =
        std::filesystem::path(MOONWRIGHT_BINARY_DIR) / "test_output" / "html_write.html";
    std::filesystem::create_directories(p.parent_path());
    page.write(p);
    std::ifstream in(p);
    const std::string text{std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
    CHECK(text == page.render());
    CHECK_FALSE(std::filesystem::exists(p.string() + ".partial"));
    CHECK_THROWS_AS(page.write("/nonexistent-dir/x/report.html"), moonwright::io_error);
}
