// Figure tests: each kind writes a valid, correctly sized, non-blank, deterministic PNG and SVG.
#include "tests/report/sample_figures.hpp"
#include "tools/report/figures.hpp"

#include "engine/error.hpp"

#include <doctest/doctest.h>

#include <array>
#include <cstdio>
#include <fstream>
#include <iterator>
#include <regex>
#include <string>

using namespace moonwright::report;

namespace {

std::filesystem::path out_dir() {
    const std::filesystem::path d =
        std::filesystem::path(MOONWRIGHT_BINARY_DIR) / "test_output" / "figures";
    std::filesystem::create_directories(d);
    return d;
}

std::string slurp(const std::filesystem::path& p) {
    std::ifstream in(p, std::ios::binary);
    return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

// Width and height from the IHDR chunk, after checking the 8-byte signature (PNG specification,
// ISO/IEC 15948:2003, sections 5.2 and 11.2.2).
struct png_header {
    bool valid = false;
    unsigned width = 0, height = 0;
};
png_header read_png_header(const std::string& b) {
    static const std::string signature("\x89PNG\r\n\x1a\n", 8);
    png_header h;
    if (b.size() < 24 || b.compare(0, 8, signature) != 0 || b.compare(12, 4, "IHDR") != 0) return h;
    auto be32 = [&](std::size_t at) {
        return (unsigned(static_cast<unsigned char>(b[at])) << 24) |
               (unsigned(static_cast<unsigned char>(b[at + 1])) << 16) |
               (unsigned(static_cast<unsigned char>(b[at + 2])) << 8) |
               unsigned(static_cast<unsigned char>(b[at + 3]));
    };
    h.valid = true;
    h.width = be32(16);
    h.height = be32(20);
    return h;
}

// Pixel statistics from tests/report/png_stats.py (decodes with zlib from Python's library).
struct pixel_stats {
    long width = 0, height = 0, non_white = 0, dark = 0, colours = 0;
};
pixel_stats stats(const std::filesystem::path& png) {
    const std::string cmd = std::string(MOONWRIGHT_PYTHON) + " " + MOONWRIGHT_SOURCE_DIR +
                            "/tests/report/png_stats.py '" + png.string() + "'";
    FILE* p = ::popen(cmd.c_str(), "r");
    REQUIRE(p != nullptr);
    std::string text;
    std::array<char, 256> buf{};
    while (std::fgets(buf.data(), static_cast<int>(buf.size()), p) != nullptr) text += buf.data();
    REQUIRE(::pclose(p) == 0);
    auto field = [&](const char* name) {
        const std::regex re(std::string("\"") + name + "\": (\\d+)");
        std::smatch m;
        REQUIRE(std::regex_search(text, m, re));
        return std::stol(m[1].str());
    };
    return {field("width"), field("height"), field("non_white"), field("dark"), field("colours")};
}

// Writes f as PNG twice (determinism) and as SVG; checks what every figure must satisfy.
void check_figure(const figure& f, const std::string& name) {
    const auto dir = out_dir();
    const auto png = dir / (name + ".png");
    const auto png2 = dir / (name + ".again.png");
    const auto svg = dir / (name + ".svg");
    std::filesystem::remove(png);
    write_figure(f, {png, figure_format::png, 640, 480});
    write_figure(f, {png2, figure_format::png, 640, 480});
    write_figure(f, {svg, figure_format::svg, 640, 480});
    REQUIRE(std::filesystem::exists(png));
    const std::string bytes = slurp(png);
    const auto h = read_png_header(bytes);
    CHECK(h.valid);
    CHECK(h.width == 640);
    CHECK(h.height == 480);
    CHECK_MESSAGE(bytes == slurp(png2), "same data must give the same PNG bytes");

    const auto s = stats(png);
    CHECK(s.width == 640);
    CHECK(s.height == 480);
    const long total = s.width * s.height;
    // Not blank, not flooded: a plot with axes, text and data marks a few percent of the page
    // at least, and leaves white margins (common practice, no source).
    CHECK_MESSAGE(s.non_white > total / 50, name << ": non-white pixels " << s.non_white);
    CHECK_MESSAGE(s.non_white < total * 95 / 100, name << ": non-white pixels " << s.non_white);
    CHECK_MESSAGE(s.dark > total / 200, name << ": dark (text, axes) pixels " << s.dark);
    CHECK_MESSAGE(s.colours >= 3, name << ": distinct colours " << s.colours);

    const std::string text = slurp(svg);
    CHECK(text.find("<svg") != std::string::npos);
    std::size_t shapes = 0;
    for (const char* tag : {"<path", "<polyline", "<polygon", "<rect", "<image"}) {
        for (std::size_t at = text.find(tag); at != std::string::npos; at = text.find(tag, at + 1))
            ++shapes;
    }
    CHECK_MESSAGE(shapes > 10, name << ": SVG drawing elements " << shapes);
    CHECK(text.find("</svg>") != std::string::npos);
}

} // namespace

TEST_CASE("the cairo PNG and the SVG devices are available") {
    CHECK(device_available(figure_format::png));
    CHECK(device_available(figure_format::svg));
}

TEST_CASE("heat map PNG/SVG: valid, sized, non-blank, deterministic") {
    check_figure(samples::heat_map_sample(), "heat_map");
}
TEST_CASE("line plot (1-D scan, log y, envelope) PNG/SVG") {
    check_figure(samples::line_plot_sample(), "line_plot");
}
TEST_CASE("time series (three panels, envelopes, reference line) PNG/SVG") {
    check_figure(samples::time_series_sample(), "time_series");
}
TEST_CASE("bar chart PNG/SVG") {
    check_figure(samples::bars_sample(), "bars");
}
TEST_CASE("Kaplan-Meier survival plot PNG/SVG") {
    check_figure(samples::survival_sample(), "survival");
}
TEST_CASE("orbit diagram PNG/SVG") {
    check_figure(samples::orbit_sample(), "orbit_diagram");
}
TEST_CASE("scatter PNG/SVG") {
    check_figure(samples::scatter_sample(), "scatter");
}
TEST_CASE("histogram PNG/SVG") {
    check_figure(samples::histogram_sample(), "histogram");
}

TEST_CASE("requested pixel sizes are honoured and png_bytes matches the file") {
    const figure f = samples::bars_sample();
    const auto bytes = png_bytes(f, 1200, 500);
    const std::string b(bytes.begin(), bytes.end());
    const auto h = read_png_header(b);
    CHECK(h.valid);
    CHECK(h.width == 1200);
    CHECK(h.height == 500);
    const auto path = out_dir() / "bars_1200x500.png";
    write_figure(f, {path, figure_format::png, 1200, 500});
    CHECK(slurp(path) == b);
}

TEST_CASE("overlays and data change the picture") {
    // If overlays were silently dropped, the two files would be the same.
    auto with = samples::heat_map_sample();
    auto without = with;
    without.overlays_.clear();
    const auto a = png_bytes(with, 640, 480);
    const auto b = png_bytes(without, 640, 480);
    CHECK(a != b);
    auto other = with;
    other.z_[10][10] = 0.5;
    CHECK(png_bytes(other, 640, 480) != a);
}

TEST_CASE("censoring marks are drawn on a survival curve") {
    // If the marks (and their legend entry) were dropped, the two pictures would be the same.
    auto with = samples::survival_sample();
    REQUIRE_FALSE(with.curves_[0].censored_.empty());
    auto without = with;
    without.curves_[0].censored_.clear();
    CHECK(png_bytes(with, 640, 480) != png_bytes(without, 640, 480));
}

TEST_CASE("heat map cells given by edges draw the same as by centres") {
    // Uniform cells: edges are the midpoints between centres, extended by half a cell.
    auto by_centres = samples::heat_map_sample();
    auto by_edges = by_centres;
    by_edges.edges_ = true;
    auto edges_of = [](const std::vector<double>& c) {
        std::vector<double> e;
        const double h = 0.5 * (c[1] - c[0]);
        for (double v : c) e.push_back(v - h);
        e.push_back(c.back() + h);
        return e;
    };
    by_edges.x_ = edges_of(by_centres.x_);
    by_edges.y_ = edges_of(by_centres.y_);
    CHECK(png_bytes(by_edges, 640, 480) == png_bytes(by_centres, 640, 480));
}

TEST_CASE("the same figure kind gets its data-figure name") {
    CHECK(figure_kind(samples::heat_map_sample()) == "heat_map");
    CHECK(figure_kind(samples::survival_sample()) == "survival");
    CHECK(figure_kind(samples::orbit_sample()) == "orbit_diagram");
}

TEST_CASE("colour scales have strictly rising luminance (they survive greyscale printing)") {
    for (const auto scale : {colour_scale::viridis_like, colour_scale::grey}) {
        double prev = -1.0;
        for (int k = 0; k <= 200; ++k) {
            const double y = relative_luminance(scale_colour(scale, k / 200.0));
            if (scale == colour_scale::grey) {
                // grey runs light to dark: check the reverse order.
                const double yr = relative_luminance(scale_colour(scale, 1.0 - k / 200.0));
                CHECK(yr > prev);
                prev = yr;
            } else {
                CHECK_MESSAGE(y > prev, "viridis_like at t = " << k / 200.0);
                prev = y;
            }
        }
    }
    // sRGB luminance end points: black 0, white 1 (IEC 61966-2-1 / ITU-R BT.709).
    CHECK(relative_luminance({0, 0, 0}) == doctest::Approx(0.0));
    CHECK(relative_luminance({255, 255, 255}) == doctest::Approx(1.0));
    // Mid grey 128 is about 0.2159 linear (IEC 61966-2-1 transfer curve, computed by hand).
    CHECK(relative_luminance({128, 128, 128}) == doctest::Approx(0.2159).epsilon(1e-3));
}

TEST_CASE("inconsistent data is refused before anything is written") {
    const auto dir = out_dir();
    const auto path = dir / "refused.png";
    std::filesystem::remove(path);
    auto h = samples::heat_map_sample();
    h.z_.pop_back(); // one row short
    CHECK_THROWS_AS(heat_map(h, {path}), std::invalid_argument);

    auto edges = samples::heat_map_sample();
    edges.edges_ = true; // centres given where edges are declared: one value short per axis
    CHECK_THROWS_WITH_AS(heat_map(edges, {path}), doctest::Contains("edges"),
                         std::invalid_argument);

    auto t = samples::time_series_sample();
    t.panels_[0].series_[0].y_max_.pop_back();
    CHECK_THROWS_WITH_AS(time_series(t, {path}), doctest::Contains("envelope"),
                         std::invalid_argument);

    auto o = samples::orbit_sample();
    o.orbits_[0].e_ = 1.0;
    CHECK_THROWS_WITH_AS(orbit_diagram(o, {path}), doctest::Contains("0 <= e < 1"),
                         std::invalid_argument);

    auto b = samples::bars_sample();
    b.values_.push_back(3.0);
    CHECK_THROWS_AS(bars(b, {path}), std::invalid_argument);

    CHECK_THROWS_AS(write_figure(samples::bars_sample(), {path, figure_format::png, 10, 10}),
                    std::invalid_argument);
    CHECK_FALSE(std::filesystem::exists(path));
    // No temporary files are left behind either.
    for (const auto& e : std::filesystem::directory_iterator(dir))
        CHECK(e.path().filename().string().find(".refused.png.") == std::string::npos);
}

TEST_CASE("an unwritable path is an io_error") {
    CHECK_THROWS_AS(write_figure(samples::bars_sample(), {"/nonexistent-dir/x/figure.png"}),
                    moonwright::io_error);
}
