// Figures for reports drawn with PLplot: validation of plain data, page layout, each figure kind.
#include "tools/report/figures.hpp"

#include "engine/error.hpp"

#include <plplot/plstream.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <iterator>
#include <limits>
#include <mutex>
#include <numbers>
#include <optional>
#include <sstream>
#include <stdexcept>
#include <string_view>
#include <system_error>
#include <type_traits>

#include <unistd.h>

namespace moonwright::report {

namespace {

// ---------------------------------------------------------------------------------------------
// Colours. Colour map 0 indices used by every figure.
constexpr PLINT col_background = 0;
constexpr PLINT col_foreground = 1;
constexpr PLINT col_series_first = 2; // 2..9: the series palette below
constexpr int n_series_colours = 8;
constexpr PLINT col_grid = 10;
constexpr PLINT col_no_data = 11;
constexpr PLINT col_band = 12; // set per band, with transparency
constexpr PLINT col_white = 13;
constexpr PLINT col_bar = 14;
constexpr int n_cmap0 = 16;

// Series colours: the colour-blind-safe palette of Okabe & Ito (2008), "Color Universal Design",
// without its yellow (too light on white), plus two greys.
constexpr std::array<std::array<int, 3>, n_series_colours> series_rgb{{
    {0, 114, 178},   // blue
    {213, 94, 0},    // vermillion
    {0, 158, 115},   // bluish green
    {204, 121, 167}, // reddish purple
    {230, 159, 0},   // orange
    {86, 180, 233},  // sky blue
    {0, 0, 0},       // black
    {110, 110, 110}, // grey
}};

// PLplot's eight predefined line styles (plsty 1 = continuous, 2..8 dash patterns). Series and
// overlays cycle through them so that curves stay apart in greyscale.
constexpr int n_line_styles = 8;

// Markers for scatter groups: filled then open shapes (DejaVu Sans has all of them).
constexpr std::array<const char*, 8> markers{"●", "▲", "■", "◆", "○", "△", "□", "◇"};

// Control points of the sequential scales. viridis_like: sampled by eye from the viridis map of
// van der Walt & Smith (matplotlib 1.5, 2015), values from memory; the unit test checks that the
// luminance rises strictly, which is the property that matters here.
struct control_point {
    double t;
    std::array<int, 3> rgb;
};
constexpr std::array<control_point, 9> viridis_points{{
    {0.000, {68, 1, 84}},
    {0.125, {72, 40, 120}},
    {0.250, {62, 74, 137}},
    {0.375, {49, 104, 142}},
    {0.500, {38, 130, 142}},
    {0.625, {31, 158, 137}},
    {0.750, {53, 183, 121}},
    {0.875, {109, 205, 89}},
    {1.000, {253, 231, 37}},
}};
// grey: light grey to black (greyscale by construction; runs light-to-dark so that larger values
// read as "more", as ink does).
constexpr std::array<control_point, 2> grey_points{{
    {0.0, {235, 235, 235}},
    {1.0, {20, 20, 20}},
}};

std::vector<control_point> scale_points(colour_scale scale) {
    if (scale == colour_scale::grey) return {grey_points.begin(), grey_points.end()};
    return {viridis_points.begin(), viridis_points.end()};
}

// ---------------------------------------------------------------------------------------------
// PLplot access: one global lock (PLplot keeps global state) and device checks.
std::mutex& plplot_mutex() {
    static std::mutex m;
    return m;
}

const char* device_name(figure_format f) {
    switch (f) {
    case figure_format::png:
        return "pngcairo";
    case figure_format::svg:
        return "svg";
    case figure_format::svgcairo:
        return "svgcairo";
    }
    return "pngcairo";
}

// Must be called with the lock held. plgDevs lists the compiled-in and dynamically found devices;
// an unknown name given to plinit would show a menu and exit the process, so check first.
bool device_available_locked(figure_format f) {
    const char* wanted = device_name(f);
    constexpr int capacity = 128;
    std::array<const char*, capacity> menu{};
    std::array<const char*, capacity> names{};
    const char** menu_ptr = menu.data();
    const char** names_ptr = names.data();
    int n = capacity;
    plgDevs(&menu_ptr, &names_ptr, &n);
    for (int k = 0; k < n && k < capacity; ++k) {
        if (names[static_cast<std::size_t>(k)] != nullptr &&
            std::strcmp(names[static_cast<std::size_t>(k)], wanted) == 0)
            return true;
    }
    return false;
}

// PLplot reads '#' as the start of an escape sequence; "##" prints one '#'. Our labels are plain.
std::string plain(std::string_view s) {
    std::string r;
    r.reserve(s.size());
    for (char c : s) {
        r += c;
        if (c == '#') r += '#';
    }
    return r;
}

[[noreturn]] void bad(const std::string& what, const std::string& message) {
    throw std::invalid_argument(what + ": " + message);
}

PLINT as_plint(std::size_t n) {
    return static_cast<PLINT>(n);
}

bool finite(double v) {
    return std::isfinite(v);
}

// Log axes: PLplot draws log10 of the data with 'l' axis labels; non-positive values vanish.
double axis_value(double v, bool log) {
    if (!log) return v;
    return v > 0.0 ? std::log10(v) : std::numeric_limits<double>::quiet_NaN();
}

struct range {
    double lo = std::numeric_limits<double>::infinity();
    double hi = -std::numeric_limits<double>::infinity();
    void add(double v) {
        if (!finite(v)) return;
        lo = std::min(lo, v);
        hi = std::max(hi, v);
    }
    [[nodiscard]] bool empty() const { return !(lo <= hi); }
    // A drawable range: an empty range becomes [0, 1]; a single value gets some width.
    [[nodiscard]] range usable() const {
        if (empty()) return {0.0, 1.0};
        if (hi > lo) return *this;
        const double w = lo == 0.0 ? 0.5 : 0.1 * std::abs(lo);
        return {lo - w, hi + w};
    }
    [[nodiscard]] range padded(double fraction) const {
        const range u = usable();
        const double w = (u.hi - u.lo) * fraction;
        return {u.lo - w, u.hi + w};
    }
};

// ---------------------------------------------------------------------------------------------
// Files: draw into a temporary file beside the target, then rename, so that a failed drawing
// never leaves a half-written figure behind.
std::filesystem::path temp_beside(const std::filesystem::path& target) {
    std::filesystem::path dir = target.parent_path();
    if (dir.empty()) dir = ".";
    std::string templ = (dir / ("." + target.filename().string() + ".XXXXXX")).string();
    std::vector<char> buf(templ.begin(), templ.end());
    buf.push_back('\0');
    const int fd = ::mkstemp(buf.data());
    if (fd < 0)
        throw io_error("cannot write figure '" + target.string() + "': " + std::strerror(errno));
    ::close(fd);
    return {buf.data()};
}

struct page {
    double ch_x = 0.0; // one character height as a fraction of the page width
    double ch_y = 0.0; // one character height as a fraction of the page height
};

void set_colours(plstream& pls) {
    pls.scmap0n(n_cmap0);
    pls.scol0(col_background, 255, 255, 255);
    pls.scol0(col_foreground, 0, 0, 0);
    for (int k = 0; k < n_series_colours; ++k) {
        const auto& c = series_rgb[static_cast<std::size_t>(k)];
        pls.scol0(col_series_first + k, c[0], c[1], c[2]);
    }
    pls.scol0(col_grid, 215, 215, 215);
    pls.scol0(col_no_data, 228, 228, 228);
    pls.scol0a(col_band, 0, 0, 0, 0.2);
    pls.scol0(col_white, 255, 255, 255);
    pls.scol0(col_bar, 70, 110, 160);
}

void set_scale(plstream& pls, colour_scale scale) {
    const auto pts = scale_points(scale);
    std::vector<PLFLT> pos, r, g, b;
    for (const auto& p : pts) {
        pos.push_back(p.t);
        r.push_back(p.rgb[0] / 255.0);
        g.push_back(p.rgb[1] / 255.0);
        b.push_back(p.rgb[2] / 255.0);
    }
    pls.scmap1n(256);
    pls.scmap1l(true, as_plint(pts.size()), pos.data(), r.data(), g.data(), b.data(), nullptr);
}

// Draws with `draw(pls, page)` into out.path_ (via a temporary file); holds the PLplot lock.
template <class Draw>
void render(const figure_output& out, Draw&& draw) {
    if (out.width_px_ < 100 || out.height_px_ < 100 || out.width_px_ > 10000 ||
        out.height_px_ > 10000)
        bad("figure size", std::to_string(out.width_px_) + " x " + std::to_string(out.height_px_) +
                               " px: each side must be 100 to 10000 px");
    if (out.path_.empty()) bad("figure output", "no file path given");
    std::lock_guard lock(plplot_mutex());
    if (!device_available_locked(out.format_))
        throw io_error(std::string("PLplot device '") + device_name(out.format_) +
                       "' is not available (install plplot-driver-cairo)");
    const std::filesystem::path tmp = temp_beside(out.path_);
    try {
        plstream pls;
        pls.sdev(device_name(out.format_));
        pls.sfnam(tmp.string().c_str());
        pls.spage(0.0, 0.0, out.width_px_, out.height_px_, 0, 0);
        pls.scolbg(255, 255, 255);
        set_colours(pls);
        pls.init();
        pls.adv(0);
        // Character height: 1/42 of the shorter side, but at most 1/60 of the longer side so
        // that titles fit on square pages (common practice, no source).
        PLFLT def_mm = 0.0, ht_mm = 0.0;
        pls.gchr(def_mm, ht_mm);
        PLFLT x0 = 0.0, x1 = 0.0, y0 = 0.0, y1 = 0.0;
        pls.gspa(x0, x1, y0, y1);
        const double short_mm = std::min(x1 - x0, y1 - y0);
        const double long_mm = std::max(x1 - x0, y1 - y0);
        pls.schr(0.0, std::min(short_mm / 42.0, long_mm / 60.0) / def_mm);
        pls.gchr(def_mm, ht_mm);
        page pg;
        pg.ch_x = ht_mm / (x1 - x0);
        pg.ch_y = ht_mm / (y1 - y0);
        pls.col0(col_foreground);
        pls.width(1.0);
        draw(pls, pg);
    } catch (...) {
        std::error_code ec;
        std::filesystem::remove(tmp, ec);
        throw;
    }
    std::error_code ec;
    const auto size = std::filesystem::file_size(tmp, ec);
    if (ec || size == 0) {
        std::filesystem::remove(tmp, ec);
        throw io_error("cannot write figure '" + out.path_.string() + "': PLplot wrote nothing");
    }
    std::filesystem::rename(tmp, out.path_, ec);
    if (ec) {
        std::filesystem::remove(tmp, ec);
        throw io_error("cannot write figure '" + out.path_.string() + "': " + ec.message());
    }
}

// ---------------------------------------------------------------------------------------------
// Drawing helpers.

// Split (x, y) into runs of finite points and draw each run as a line.
void broken_line(plstream& pls, const std::vector<double>& x, const std::vector<double>& y) {
    std::vector<PLFLT> rx, ry;
    auto flush = [&] {
        if (rx.size() >= 2) pls.line(as_plint(rx.size()), rx.data(), ry.data());
        if (rx.size() == 1) pls.poin(1, rx.data(), ry.data(), 1);
        rx.clear();
        ry.clear();
    };
    for (std::size_t k = 0; k < x.size() && k < y.size(); ++k) {
        if (finite(x[k]) && finite(y[k])) {
            rx.push_back(x[k]);
            ry.push_back(y[k]);
        } else {
            flush();
        }
    }
    flush();
}

// Fill the band between lo and hi over x, run by run of finite points.
void band(plstream& pls, const std::vector<double>& x, const std::vector<double>& lo,
          const std::vector<double>& hi) {
    std::vector<PLFLT> rx, rlo, rhi;
    auto flush = [&] {
        if (rx.size() >= 2) {
            std::vector<PLFLT> px(rx), py(rhi);
            for (std::size_t k = rx.size(); k-- > 0;) {
                px.push_back(rx[k]);
                py.push_back(rlo[k]);
            }
            pls.fill(as_plint(px.size()), px.data(), py.data());
        }
        rx.clear();
        rlo.clear();
        rhi.clear();
    };
    for (std::size_t k = 0; k < x.size(); ++k) {
        if (finite(x[k]) && finite(lo[k]) && finite(hi[k])) {
            rx.push_back(x[k]);
            rlo.push_back(std::min(lo[k], hi[k]));
            rhi.push_back(std::max(lo[k], hi[k]));
        } else {
            flush();
        }
    }
    flush();
}

void set_band_colour(plstream& pls, PLINT series_colour_index) {
    const auto& c = series_rgb[static_cast<std::size_t>(series_colour_index - col_series_first)];
    pls.scol0a(col_band, c[0], c[1], c[2], 0.22);
}

struct legend_entry {
    legend_entry() = default;
    explicit legend_entry(std::string t, PLINT o = PL_LEGEND_LINE, PLINT c = col_foreground,
                          PLINT st = 1, PLFLT w = 2.0)
        : text(std::move(t)), opt(o), colour(c), style(st), line_width(w) {}
    std::string text;
    PLINT opt = PL_LEGEND_LINE;
    PLINT colour = col_foreground;
    PLINT style = 1;
    PLFLT line_width = 2.0;
    PLINT box_colour = col_background;
    std::string symbol;
};

// Number of legend rows for n entries (two columns when there are more than two short labels).
int legend_columns(const std::vector<legend_entry>& e) {
    if (e.size() <= 1) return 1;
    std::size_t longest = 0;
    for (const auto& x : e) longest = std::max(longest, x.text.size());
    return longest <= 30 ? 2 : 1;
}
int legend_rows(const std::vector<legend_entry>& e) {
    if (e.empty()) return 0;
    const int cols = legend_columns(e);
    return (static_cast<int>(e.size()) + cols - 1) / cols;
}

// The legend sits below the viewport, under the x-axis label.
void draw_legend(plstream& pls, const page& pg, const std::vector<legend_entry>& e,
                 double below_chars) {
    if (e.empty()) return;
    const auto n = e.size();
    std::vector<PLINT> opts, text_colours, box_colours, box_patterns, line_colours, line_styles,
        symbol_colours, symbol_numbers;
    std::vector<PLFLT> box_scales, box_widths, line_widths, symbol_scales;
    std::vector<std::string> texts;
    std::vector<const char*> text_ptrs, symbol_ptrs;
    texts.reserve(n);
    for (const auto& x : e) {
        opts.push_back(x.opt);
        text_colours.push_back(col_foreground);
        box_colours.push_back(x.box_colour);
        box_patterns.push_back(0);
        box_scales.push_back(0.8);
        box_widths.push_back(1.0);
        line_colours.push_back(x.colour);
        line_styles.push_back(x.style);
        line_widths.push_back(x.line_width);
        symbol_colours.push_back(x.colour);
        symbol_scales.push_back(1.0);
        symbol_numbers.push_back(x.symbol.empty() ? 1 : 2);
        texts.push_back(plain(x.text));
    }
    for (std::size_t k = 0; k < n; ++k) {
        text_ptrs.push_back(texts[k].c_str());
        symbol_ptrs.push_back(e[k].symbol.empty() ? "●" : e[k].symbol.c_str());
    }
    const int cols = legend_columns(e);
    const int rows = legend_rows(e);
    PLFLT w = 0.0, h = 0.0;
    // pllegend takes its offset in units of the current viewport, not of the page.
    PLFLT vx0 = 0.0, vx1 = 0.0, vy0 = 0.0, vy1 = 0.0;
    pls.gvpd(vx0, vx1, vy0, vy1);
    const double offset = below_chars * pg.ch_y / (vy1 - vy0);
    pls.col0(col_foreground);
    pls.lsty(1);
    pls.legend(&w, &h, PL_LEGEND_ROW_MAJOR, PL_POSITION_OUTSIDE | PL_POSITION_BOTTOM, 0.0, offset,
               0.07, col_background, col_foreground, 1, rows, cols, as_plint(n), opts.data(), 1.0,
               1.0, 2.0, 0.0, text_colours.data(), text_ptrs.data(), box_colours.data(),
               box_patterns.data(), box_scales.data(), box_widths.data(), line_colours.data(),
               line_styles.data(), line_widths.data(), symbol_colours.data(), symbol_scales.data(),
               symbol_numbers.data(), symbol_ptrs.data());
}

void title(plstream& pls, const std::string& text) {
    if (text.empty()) return;
    PLFLT def = 0.0, ht = 0.0;
    pls.gchr(def, ht);
    pls.schr(0.0, 1.2 * ht / def);
    pls.col0(col_foreground);
    pls.mtex("t", 1.2, 0.5, 0.5, plain(text).c_str());
    pls.schr(0.0, ht / def);
}

// Light grid first, black frame with ticks and numbers on top.
void axes(plstream& pls, bool log_x, bool log_y, bool x_numbers, bool grid = true) {
    const std::string lx = log_x ? "l" : "";
    const std::string ly = log_y ? "l" : "";
    if (grid) {
        pls.col0(col_grid);
        pls.lsty(1);
        pls.width(1.0);
        pls.box(("g" + lx).c_str(), 0.0, 0, ("g" + ly).c_str(), 0.0, 0);
    }
    pls.col0(col_foreground);
    pls.width(1.0);
    pls.box(("bcst" + lx + (x_numbers ? "n" : "")).c_str(), 0.0, 0, ("bcnstv" + ly).c_str(), 0.0,
            0);
}

void x_label(plstream& pls, const std::string& text) {
    pls.col0(col_foreground);
    pls.mtex("b", 2.8, 0.5, 0.5, plain(text).c_str());
}
void y_label(plstream& pls, const std::string& text) {
    pls.col0(col_foreground);
    pls.mtex("l", 4.6, 0.5, 0.5, plain(text).c_str());
}

// Margins in character heights (common practice, no source).
constexpr double left_chars = 6.5, right_chars = 2.0, top_chars = 3.2, x_label_chars = 4.2;
double bottom_chars(int legend_rows) {
    return x_label_chars + (legend_rows > 0 ? 2.0 * legend_rows + 0.8 : 0.0);
}

// Overlays: black lines in dash styles 2..8 (style 1, continuous, stays for data). On a heat map
// each is drawn over a wider white line so it shows on dark and light cells alike.
PLINT overlay_style(std::size_t k) {
    return static_cast<PLINT>(2 + k % (n_line_styles - 1));
}

void draw_overlays(plstream& pls, const std::vector<overlay_curve>& ov, bool log_x, bool log_y,
                   double xlo, double xhi, double ylo, double yhi, bool halo,
                   std::vector<legend_entry>& legend) {
    for (std::size_t k = 0; k < ov.size(); ++k) {
        const auto& o = ov[k];
        std::vector<double> x, y;
        switch (o.shape_) {
        case overlay_curve::shape::vertical: {
            const double v = axis_value(o.value_, log_x);
            x = {v, v};
            y = {ylo, yhi};
            break;
        }
        case overlay_curve::shape::horizontal: {
            const double v = axis_value(o.value_, log_y);
            x = {xlo, xhi};
            y = {v, v};
            break;
        }
        case overlay_curve::shape::polyline:
            for (std::size_t j = 0; j < o.x_.size(); ++j) {
                x.push_back(axis_value(o.x_[j], log_x));
                y.push_back(axis_value(o.y_[j], log_y));
            }
            break;
        }
        if (halo) {
            pls.col0(col_white);
            pls.lsty(1);
            pls.width(5.0);
            broken_line(pls, x, y);
        }
        pls.col0(col_foreground);
        pls.lsty(overlay_style(k));
        pls.width(2.5);
        broken_line(pls, x, y);
        legend.emplace_back(o.label_, PL_LEGEND_LINE, col_foreground, overlay_style(k), 2.5);
    }
    pls.lsty(1);
    pls.width(1.0);
}

// ---------------------------------------------------------------------------------------------
// Validation of plain data.

void check_overlays(const std::string& what, const std::vector<overlay_curve>& ov) {
    for (const auto& o : ov) {
        if (o.shape_ == overlay_curve::shape::polyline) {
            if (o.x_.size() != o.y_.size() || o.x_.size() < 2)
                bad(what, "overlay '" + o.label_ + "' needs x and y of equal length >= 2");
        } else if (!finite(o.value_)) {
            bad(what, "overlay '" + o.label_ + "' has a non-finite position");
        }
    }
}

void check_abscissa(const std::string& what, const std::vector<double>& x) {
    if (x.empty()) bad(what, "no abscissa values");
    for (std::size_t k = 0; k < x.size(); ++k) {
        if (!finite(x[k])) bad(what, "abscissa value " + std::to_string(k) + " is not finite");
        if (k > 0 && x[k] < x[k - 1]) bad(what, "abscissa must be non-decreasing");
    }
}

void check_panel(const std::string& what, const series_panel& p, std::size_t n) {
    for (const auto& s : p.series_) {
        if (s.y_.size() != n)
            bad(what, "series '" + s.label_ + "' has " + std::to_string(s.y_.size()) +
                          " values, expected " + std::to_string(n));
        if (s.y_min_.size() != s.y_max_.size() || (!s.y_min_.empty() && s.y_min_.size() != n))
            bad(what, "series '" + s.label_ + "' envelope needs y_min and y_max of " +
                          std::to_string(n) + " values each, or neither");
    }
    check_overlays(what, p.overlays_);
}

// Edges from edges (n+1) or centres (n): midpoints inside, half a cell beyond the ends.
std::vector<double> cell_edges(const std::string& what, const char* axis,
                               const std::vector<double>& v, std::size_t cells, bool edges) {
    for (std::size_t k = 0; k < v.size(); ++k) {
        if (!finite(v[k])) bad(what, std::string(axis) + " values must be finite");
        if (k > 0 && !(v[k] > v[k - 1])) bad(what, std::string(axis) + " must strictly increase");
    }
    const std::size_t expected = edges ? cells + 1 : cells;
    if (v.size() != expected)
        bad(what, std::string(axis) + " has " + std::to_string(v.size()) + " " +
                      (edges ? "edges" : "centres") + ", expected " + std::to_string(expected) +
                      " for " + std::to_string(cells) + " cells");
    if (edges) return v;
    std::vector<double> e(cells + 1);
    if (cells == 1) {
        e[0] = v[0] - 0.5;
        e[1] = v[0] + 0.5;
        return e;
    }
    for (std::size_t k = 1; k < cells; ++k) e[k] = 0.5 * (v[k - 1] + v[k]);
    e[0] = v[0] - (e[1] - v[0]);
    e[cells] = v[cells - 1] + (v[cells - 1] - e[cells - 1]);
    return e;
}

// ---------------------------------------------------------------------------------------------
// Series panels (time series and line plots).

struct style_table {
    std::vector<std::string> labels;
    std::size_t index(const std::string& label) {
        auto it = std::find(labels.begin(), labels.end(), label);
        if (it != labels.end()) return static_cast<std::size_t>(it - labels.begin());
        labels.push_back(label);
        return labels.size() - 1;
    }
};
PLINT series_colour(std::size_t k) {
    return col_series_first + static_cast<PLINT>(k % 8);
}
PLINT series_style(std::size_t k) {
    return static_cast<PLINT>(1 + (k / 1) % n_line_styles);
}

void draw_panels(plstream& pls, const page& pg, const std::string& title_text,
                 const std::string& x_label_text, const std::vector<double>& x_raw, bool log_x,
                 const std::vector<series_panel>& panels) {
    // Legend: one entry per distinct series label (same label = same style in every panel),
    // then the overlays of every panel, then one entry for envelopes when any are drawn.
    style_table styles;
    bool any_band = false;
    for (const auto& p : panels)
        for (const auto& s : p.series_) {
            styles.index(s.label_);
            any_band = any_band || !s.y_min_.empty();
        }
    std::vector<legend_entry> legend;
    for (std::size_t k = 0; k < styles.labels.size(); ++k)
        legend.emplace_back(styles.labels[k], PL_LEGEND_LINE, series_colour(k), series_style(k),
                            2.0);
    std::vector<legend_entry> sizing = legend;
    for (const auto& p : panels)
        for (const auto& o : p.overlays_) sizing.emplace_back(o.label_);
    if (any_band) sizing.emplace_back("shaded: min-max range");
    const int rows = legend_rows(sizing);
    const double bottom = bottom_chars(rows) * pg.ch_y;
    const double top = 1.0 - top_chars * pg.ch_y;
    const double left = (left_chars + 1.0) * pg.ch_x;
    const double right = 1.0 - right_chars * pg.ch_x;
    const double gap = 0.8 * pg.ch_y;
    const auto np = panels.size();
    const double h = (top - bottom - gap * static_cast<double>(np - 1)) / static_cast<double>(np);

    std::vector<double> x(x_raw.size());
    range rx;
    for (std::size_t k = 0; k < x.size(); ++k) {
        x[k] = axis_value(x_raw[k], log_x);
        rx.add(x[k]);
    }
    const range ux = rx.usable();
    std::vector<legend_entry> overlay_legend;
    for (std::size_t p = 0; p < np; ++p) {
        const auto& panel = panels[p];
        const double ptop = top - static_cast<double>(p) * (h + gap);
        pls.vpor(left, right, ptop - h, ptop);
        range ry;
        std::vector<std::vector<double>> ys, lo, hi;
        for (const auto& s : panel.series_) {
            std::vector<double> y(s.y_.size()), l, u;
            for (std::size_t k = 0; k < y.size(); ++k)
                ry.add(y[k] = axis_value(s.y_[k], panel.log_y_));
            if (!s.y_min_.empty()) {
                l.resize(y.size());
                u.resize(y.size());
                for (std::size_t k = 0; k < y.size(); ++k) {
                    ry.add(l[k] = axis_value(s.y_min_[k], panel.log_y_));
                    ry.add(u[k] = axis_value(s.y_max_[k], panel.log_y_));
                }
            }
            ys.push_back(std::move(y));
            lo.push_back(std::move(l));
            hi.push_back(std::move(u));
        }
        for (const auto& o : panel.overlays_) {
            if (o.shape_ == overlay_curve::shape::horizontal)
                ry.add(axis_value(o.value_, panel.log_y_));
            if (o.shape_ == overlay_curve::shape::polyline)
                for (double v : o.y_) ry.add(axis_value(v, panel.log_y_));
        }
        const range uy = ry.padded(0.05);
        pls.wind(ux.lo, ux.hi, uy.lo, uy.hi);
        axes(pls, log_x, panel.log_y_, p + 1 == np);
        // Bands under every line, then the lines.
        for (std::size_t s = 0; s < panel.series_.size(); ++s) {
            if (lo[s].empty()) continue;
            const PLINT c = series_colour(styles.index(panel.series_[s].label_));
            set_band_colour(pls, c);
            pls.col0(col_band);
            band(pls, x, lo[s], hi[s]);
        }
        for (std::size_t s = 0; s < panel.series_.size(); ++s) {
            const std::size_t k = styles.index(panel.series_[s].label_);
            pls.col0(series_colour(k));
            pls.lsty(series_style(k));
            pls.width(2.0);
            broken_line(pls, x, ys[s]);
        }
        pls.lsty(1);
        pls.width(1.0);
        draw_overlays(pls, panel.overlays_, log_x, panel.log_y_, ux.lo, ux.hi, uy.lo, uy.hi, false,
                      overlay_legend);
        pls.col0(col_foreground);
        axes(pls, log_x, panel.log_y_, p + 1 == np, false);
        y_label(pls, panel.y_label_);
        if (p == 0) title(pls, title_text);
        if (p + 1 == np) x_label(pls, x_label_text);
    }
    legend.insert(legend.end(), overlay_legend.begin(), overlay_legend.end());
    if (any_band) {
        legend_entry e{"shaded: min-max range", PL_LEGEND_COLOR_BOX, col_foreground, 1, 1.0};
        e.box_colour = col_grid;
        legend.push_back(e);
    }
    draw_legend(pls, pg, legend, x_label_chars);
}

// ---------------------------------------------------------------------------------------------
// The figure kinds.

void draw_heat_map(const heat_map_data& d, const figure_output& out) {
    const std::string what = "heat_map '" + d.title_ + "'";
    const std::size_t ny = d.z_.size();
    if (ny == 0 || d.z_[0].empty()) bad(what, "z grid is empty");
    const std::size_t nx = d.z_[0].size();
    for (const auto& row : d.z_)
        if (row.size() != nx) bad(what, "z rows differ in length");
    const auto xe = cell_edges(what, "x", d.x_, nx, d.edges_);
    const auto ye = cell_edges(what, "y", d.y_, ny, d.edges_);
    check_overlays(what, d.overlays_);
    range rz;
    for (const auto& row : d.z_)
        for (double v : row) rz.add(v);
    range zr = d.z_min_ < d.z_max_ ? range{d.z_min_, d.z_max_} : rz.usable();
    if (!(zr.lo < zr.hi)) zr = zr.usable();

    render(out, [&](plstream& pls, const page& pg) {
        set_scale(pls, d.scale_);
        std::vector<legend_entry> legend, sizing;
        for (const auto& o : d.overlays_) sizing.emplace_back(o.label_);
        const double bottom = bottom_chars(legend_rows(sizing)) * pg.ch_y;
        const double left = (left_chars + 1.0) * pg.ch_x;
        // Room on the right for the colour bar, its numbers and its label.
        const double right = 1.0 - 11.0 * pg.ch_x;
        pls.vpor(left, right, bottom, 1.0 - top_chars * pg.ch_y);
        pls.wind(xe.front(), xe.back(), ye.front(), ye.back());
        // Cells without data: a light grey under the image (values outside the colour range
        // are not drawn by plimagefr).
        pls.col0(col_no_data);
        {
            const std::array<PLFLT, 4> bx{xe.front(), xe.back(), xe.back(), xe.front()};
            const std::array<PLFLT, 4> by{ye.front(), ye.front(), ye.back(), ye.back()};
            pls.fill(4, bx.data(), by.data());
        }
        // z[i][j] with i along x, as PLplot wants; NaN becomes a value below the range.
        const double missing = zr.lo - 1.0 - std::abs(zr.hi - zr.lo);
        std::vector<std::vector<PLFLT>> z(nx, std::vector<PLFLT>(ny));
        std::vector<const PLFLT*> zp(nx);
        for (std::size_t i = 0; i < nx; ++i) {
            for (std::size_t j = 0; j < ny; ++j) {
                const double v = d.z_[j][i];
                z[i][j] = finite(v) ? std::clamp(v, zr.lo, zr.hi) : missing;
            }
            zp[i] = z[i].data();
        }
        struct edges_pair {
            const std::vector<double>* x;
            const std::vector<double>* y;
        } ep{&xe, &ye};
        auto transform = [](PLFLT ix, PLFLT iy, PLFLT* tx, PLFLT* ty, PLPointer data) {
            const auto* e = static_cast<const edges_pair*>(data);
            auto interp = [](const std::vector<double>& v, PLFLT t) {
                const double tc = std::clamp(t, 0.0, static_cast<double>(v.size() - 1));
                const auto k = std::min(static_cast<std::size_t>(tc), v.size() - 2);
                const double f = tc - static_cast<double>(k);
                return v[k] + f * (v[k + 1] - v[k]);
            };
            *tx = interp(*e->x, ix);
            *ty = interp(*e->y, iy);
        };
        pls.imagefr(zp.data(), as_plint(nx), as_plint(ny), xe.front(), xe.back(), ye.front(),
                    ye.back(), zr.lo, zr.hi, zr.lo, zr.hi, transform, &ep);
        draw_overlays(pls, d.overlays_, false, false, xe.front(), xe.back(), ye.front(), ye.back(),
                      true, legend);
        axes(pls, false, false, true, false);
        x_label(pls, d.x_label_);
        y_label(pls, d.y_label_);
        title(pls, d.title_);
        draw_legend(pls, pg, legend, x_label_chars);

        // Colour bar to the right of the map, as tall as the map.
        PLFLT cw = 0.0, chh = 0.0;
        const std::string label = plain(d.colour_bar_label_);
        std::array<const char*, 1> labels{label.c_str()};
        std::array<PLINT, 1> label_opts{PL_COLORBAR_LABEL_RIGHT};
        std::array<const char*, 1> axis_opts{"bcvtm"};
        std::array<PLFLT, 1> ticks{0.0};
        std::array<PLINT, 1> sub_ticks{0};
        const std::array<PLFLT, 2> values{zr.lo, zr.hi};
        std::array<const PLFLT*, 1> values_ptr{values.data()};
        std::array<PLINT, 1> n_values{2};
        pls.col0(col_foreground);
        pls.colorbar(&cw, &chh, PL_COLORBAR_GRADIENT, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE,
                     1.2 * pg.ch_x, 0.0, 1.8 * pg.ch_x, 1.0, col_background, col_foreground, 1, 0.0,
                     0.0, 0, 0.0, 1, label_opts.data(), labels.data(), 1, axis_opts.data(),
                     ticks.data(), sub_ticks.data(), n_values.data(), values_ptr.data());
    });
}

void draw_line_plot(const line_plot_data& d, const figure_output& out) {
    const std::string what = "line_plot '" + d.title_ + "'";
    check_abscissa(what, d.x_);
    check_panel(what, d.panel_, d.x_.size());
    render(out, [&](plstream& pls, const page& pg) {
        draw_panels(pls, pg, d.title_, d.x_label_, d.x_, d.log_x_, {d.panel_});
    });
}

void draw_time_series(const time_series_data& d, const figure_output& out) {
    const std::string what = "time_series '" + d.title_ + "'";
    check_abscissa(what, d.t_);
    if (d.panels_.empty()) bad(what, "no panels");
    for (const auto& p : d.panels_) check_panel(what, p, d.t_.size());
    render(out, [&](plstream& pls, const page& pg) {
        draw_panels(pls, pg, d.title_, d.x_label_, d.t_, d.log_x_, d.panels_);
    });
}

std::string format_value(double v) {
    char buf[32];
    if (v == std::round(v) && std::abs(v) < 1e9)
        std::snprintf(buf, sizeof buf, "%.0f", v);
    else
        std::snprintf(buf, sizeof buf, "%.3g", v);
    return buf;
}

void draw_bars(const bar_chart_data& d, const figure_output& out) {
    const std::string what = "bars '" + d.title_ + "'";
    if (d.categories_.empty()) bad(what, "no categories");
    if (d.values_.size() != d.categories_.size())
        bad(what, std::to_string(d.values_.size()) + " values for " +
                      std::to_string(d.categories_.size()) + " categories");
    double vmax = 0.0;
    for (double v : d.values_) {
        if (!finite(v) || v < 0.0) bad(what, "values must be finite and >= 0");
        vmax = std::max(vmax, v);
    }
    if (vmax == 0.0) vmax = 1.0;
    render(out, [&](plstream& pls, const page& pg) {
        const auto n = d.categories_.size();
        pls.vpor((left_chars + 1.0) * pg.ch_x, 1.0 - right_chars * pg.ch_x, x_label_chars * pg.ch_y,
                 1.0 - top_chars * pg.ch_y);
        pls.wind(0.0, static_cast<double>(n), 0.0, 1.12 * vmax);
        pls.col0(col_grid);
        pls.box("", 0.0, 0, "g", 0.0, 0);
        for (std::size_t k = 0; k < n; ++k) {
            const double x0 = static_cast<double>(k) + 0.15, x1 = static_cast<double>(k) + 0.85;
            const std::array<PLFLT, 4> bx{x0, x1, x1, x0};
            const std::array<PLFLT, 4> by{0.0, 0.0, d.values_[k], d.values_[k]};
            pls.col0(col_bar);
            pls.fill(4, bx.data(), by.data());
            pls.col0(col_foreground);
            const std::array<PLFLT, 5> ox{x0, x1, x1, x0, x0};
            const std::array<PLFLT, 5> oy{0.0, 0.0, d.values_[k], d.values_[k], 0.0};
            pls.line(5, ox.data(), oy.data());
            pls.ptex(static_cast<double>(k) + 0.5, d.values_[k] + 0.045 * vmax, 1.0, 0.0, 0.5,
                     format_value(d.values_[k]).c_str());
            const double pos = (static_cast<double>(k) + 0.5) / static_cast<double>(n);
            pls.mtex("b", 1.5, pos, 0.5, plain(d.categories_[k]).c_str());
        }
        pls.col0(col_foreground);
        pls.box("bc", 0.0, 0, "bcnstv", 0.0, 0);
        y_label(pls, d.y_label_);
        title(pls, d.title_);
    });
}

void draw_survival(const survival_plot_data& d, const figure_output& out) {
    const std::string what = "survival_plot '" + d.title_ + "'";
    if (d.curves_.empty()) bad(what, "no curves");
    for (const auto& c : d.curves_) {
        check_abscissa(what + " curve '" + c.label_ + "'", c.t_);
        if (c.survival_.size() != c.t_.size())
            bad(what, "curve '" + c.label_ + "' needs one survival value per time");
        if (c.lower_.size() != c.upper_.size() ||
            (!c.lower_.empty() && c.lower_.size() != c.t_.size()))
            bad(what, "curve '" + c.label_ + "' band needs lower and upper per time, or neither");
        for (double s : c.survival_)
            if (!(s >= 0.0 && s <= 1.0)) bad(what, "survival values must lie in [0, 1]");
    }
    render(out, [&](plstream& pls, const page& pg) {
        std::vector<legend_entry> legend;
        bool any_band = false;
        range rx;
        for (const auto& c : d.curves_) {
            for (double t : c.t_) rx.add(axis_value(t, d.log_x_));
            rx.add(axis_value(c.t_end_, d.log_x_));
            for (double t : c.censored_) rx.add(axis_value(t, d.log_x_));
            any_band = any_band || !c.lower_.empty();
        }
        for (std::size_t k = 0; k < d.curves_.size(); ++k)
            legend.emplace_back(d.curves_[k].label_, PL_LEGEND_LINE, series_colour(k),
                                series_style(k), 2.0);
        bool any_censored = false;
        for (const auto& c : d.curves_) any_censored = any_censored || !c.censored_.empty();
        if (any_censored) {
            legend_entry e{"censored (still surviving when last followed)", PL_LEGEND_SYMBOL,
                           col_foreground, 1, 1.0};
            e.symbol = "+";
            legend.push_back(e);
        }
        if (any_band) {
            legend_entry e{"shaded: confidence band", PL_LEGEND_COLOR_BOX, col_foreground, 1, 1.0};
            e.box_colour = col_grid;
            legend.push_back(e);
        }
        range ux = rx.usable();
        // A little room on the right, so that censoring marks at the span's end clear the frame.
        ux.hi += 0.02 * (ux.hi - ux.lo);
        pls.vpor((left_chars + 1.0) * pg.ch_x, 1.0 - right_chars * pg.ch_x,
                 bottom_chars(legend_rows(legend)) * pg.ch_y, 1.0 - top_chars * pg.ch_y);
        pls.wind(ux.lo, ux.hi, 0.0, 1.04);
        axes(pls, d.log_x_, false, true);
        // A step function: S(t_k) holds until t_{k+1}; the last step runs to t_end (or t_last).
        auto steps = [&](const survival_curve& c, const std::vector<double>& v) {
            std::vector<double> x, y;
            const std::size_t n = c.t_.size();
            const double end = c.t_end_ > c.t_.back() ? c.t_end_ : c.t_.back();
            for (std::size_t k = 0; k < n; ++k) {
                const double next = k + 1 < n ? c.t_[k + 1] : end;
                x.push_back(axis_value(c.t_[k], d.log_x_));
                y.push_back(v[k]);
                x.push_back(axis_value(next, d.log_x_));
                y.push_back(v[k]);
            }
            return std::pair{x, y};
        };
        for (std::size_t k = 0; k < d.curves_.size(); ++k) {
            const auto& c = d.curves_[k];
            if (c.lower_.empty()) continue;
            auto [x, lo] = steps(c, c.lower_);
            auto hi = steps(c, c.upper_).second;
            set_band_colour(pls, series_colour(k));
            pls.col0(col_band);
            band(pls, x, lo, hi);
        }
        for (std::size_t k = 0; k < d.curves_.size(); ++k) {
            auto [x, y] = steps(d.curves_[k], d.curves_[k].survival_);
            pls.col0(series_colour(k));
            pls.lsty(series_style(k));
            pls.width(2.5);
            broken_line(pls, x, y);
        }
        // Censoring marks: one '+' per distinct censored time, on the curve's value there.
        for (std::size_t k = 0; k < d.curves_.size(); ++k) {
            const auto& c = d.curves_[k];
            std::vector<double> mx, my;
            for (double t : c.censored_) {
                const double x = axis_value(t, d.log_x_);
                if (!finite(x) || (!mx.empty() && x == mx.back())) continue;
                std::size_t at = 0;
                while (at + 1 < c.t_.size() && c.t_[at + 1] <= t) ++at;
                mx.push_back(x);
                my.push_back(c.t_.empty() || t < c.t_[0] ? 1.0 : c.survival_[at]);
            }
            if (mx.empty()) continue;
            pls.col0(series_colour(k));
            pls.string(as_plint(mx.size()), mx.data(), my.data(), "+");
        }
        pls.lsty(1);
        pls.width(1.0);
        axes(pls, d.log_x_, false, true, false);
        x_label(pls, d.x_label_);
        y_label(pls, d.y_label_);
        title(pls, d.title_);
        draw_legend(pls, pg, legend, x_label_chars);
    });
}

// Points of a Keplerian ellipse with the parent at a focus: r = a (1 - e^2) / (1 + e cos f)
// (Murray & Dermott 1999, Solar System Dynamics, eq. 2.20), rotated by the pericentre angle.
std::pair<std::vector<double>, std::vector<double>> ellipse_points(double a, double e, double w,
                                                                   double unit) {
    constexpr int n = 360;
    std::vector<double> x(n + 1), y(n + 1);
    for (int k = 0; k <= n; ++k) {
        const double f = 2.0 * std::numbers::pi * k / n;
        const double r = a * (1.0 - e * e) / (1.0 + e * std::cos(f)) / unit;
        x[static_cast<std::size_t>(k)] = r * std::cos(f + w);
        y[static_cast<std::size_t>(k)] = r * std::sin(f + w);
    }
    return {x, y};
}

void draw_orbit_diagram(const orbit_diagram_data& d, const figure_output& out) {
    const std::string what = "orbit_diagram '" + d.title_ + "'";
    if (!(d.length_unit_m_ > 0.0) || !finite(d.length_unit_m_))
        bad(what, "length unit must be a positive length in metres");
    if (!(d.parent_radius_m_ >= 0.0)) bad(what, "parent radius must be >= 0 m");
    double extent = d.parent_radius_m_;
    for (const auto& o : d.orbits_) {
        if (!(o.a_m_ > 0.0) || !finite(o.a_m_)) bad(what, "orbit '" + o.label_ + "' needs a > 0");
        if (!(o.e_ >= 0.0 && o.e_ < 1.0))
            bad(what, "orbit '" + o.label_ + "' needs 0 <= e < 1 (a bound ellipse)");
        if (!finite(o.pericentre_rad_)) bad(what, "orbit '" + o.label_ + "' pericentre angle");
        extent = std::max(extent, o.a_m_ * (1.0 + o.e_));
    }
    for (const auto& c : d.circles_) {
        if (!(c.radius_m_ > 0.0) || !finite(c.radius_m_))
            bad(what, "circle '" + c.label_ + "' needs a radius > 0");
        extent = std::max(extent, c.radius_m_);
    }
    if (!(extent > 0.0)) bad(what, "nothing to draw");
    render(out, [&](plstream& pls, const page& pg) {
        std::vector<legend_entry> legend;
        const double u = d.length_unit_m_;
        const double lim = 1.08 * extent / u;
        const std::size_t n_entries = d.orbits_.size() + d.circles_.size() + 1;
        std::vector<legend_entry> sizing(n_entries);
        for (auto& s : sizing) s.text = "x";
        for (std::size_t k = 0; k < d.orbits_.size(); ++k) sizing[k].text = d.orbits_[k].label_;
        for (std::size_t k = 0; k < d.circles_.size(); ++k)
            sizing[d.orbits_.size() + k].text = d.circles_[k].label_;
        const double bottom = bottom_chars(legend_rows(sizing)) * pg.ch_y;
        // The title spans the page width (the square plot may be narrower than the title).
        pls.vpor(right_chars * pg.ch_x, 1.0 - right_chars * pg.ch_x, bottom,
                 1.0 - top_chars * pg.ch_y);
        title(pls, d.title_);
        // Equal scale on both axes: plvpas fits the largest viewport of aspect 1 in the box.
        pls.vpas((left_chars + 1.0) * pg.ch_x, 1.0 - right_chars * pg.ch_x, bottom,
                 1.0 - top_chars * pg.ch_y, 1.0);
        pls.wind(-lim, lim, -lim, lim);
        axes(pls, false, false, true);
        if (d.parent_radius_m_ > 0.0) {
            const auto [px, py] = ellipse_points(d.parent_radius_m_, 0.0, 0.0, u);
            pls.col0(col_grid);
            pls.fill(as_plint(px.size()), px.data(), py.data());
            pls.col0(col_foreground);
            pls.line(as_plint(px.size()), px.data(), py.data());
            legend_entry e{d.parent_label_.empty() ? "parent" : d.parent_label_,
                           PL_LEGEND_COLOR_BOX, col_foreground, 1, 1.0};
            e.box_colour = col_grid;
            legend.push_back(e);
        }
        // Reference circles: black, each kind its own dash pattern and width.
        for (std::size_t k = 0; k < d.circles_.size(); ++k) {
            const auto& c = d.circles_[k];
            PLINT style = 5;
            switch (c.kind_) {
            case reference_circle::kind::hill:
                style = 3;
                break;
            case reference_circle::kind::stability:
                style = 6;
                break;
            case reference_circle::kind::roche:
                style = 2;
                break;
            case reference_circle::kind::other:
                style = 5;
                break;
            }
            const auto [cx, cy] = ellipse_points(c.radius_m_, 0.0, 0.0, u);
            pls.col0(col_foreground);
            pls.lsty(style);
            pls.width(2.0);
            pls.line(as_plint(cx.size()), cx.data(), cy.data());
            legend.emplace_back(c.label_, PL_LEGEND_LINE, col_foreground, style, 2.0);
        }
        // Orbits: solid lines in the series colours, a dot at pericentre.
        for (std::size_t k = 0; k < d.orbits_.size(); ++k) {
            const auto& o = d.orbits_[k];
            const auto [ox, oy] = ellipse_points(o.a_m_, o.e_, o.pericentre_rad_, u);
            pls.col0(series_colour(k));
            pls.lsty(1);
            pls.width(2.5);
            pls.line(as_plint(ox.size()), ox.data(), oy.data());
            const std::array<PLFLT, 1> qx{ox[0]}, qy{oy[0]};
            pls.string(1, qx.data(), qy.data(), "●");
            legend_entry e{o.label_ + " (dot: pericentre)", PL_LEGEND_LINE | PL_LEGEND_SYMBOL,
                           series_colour(k), 1, 2.5};
            e.symbol = "●";
            legend.push_back(e);
        }
        pls.lsty(1);
        pls.width(1.0);
        axes(pls, false, false, true, false);
        x_label(pls, "x (" + d.length_unit_label_ + ")");
        y_label(pls, "y (" + d.length_unit_label_ + ")");
        draw_legend(pls, pg, legend, x_label_chars);
    });
}

void draw_scatter(const scatter_data& d, const figure_output& out) {
    const std::string what = "scatter '" + d.title_ + "'";
    if (d.groups_.empty()) bad(what, "no groups");
    for (const auto& g : d.groups_)
        if (g.x_.size() != g.y_.size())
            bad(what, "group '" + g.label_ + "' x and y differ in length");
    check_overlays(what, d.overlays_);
    render(out, [&](plstream& pls, const page& pg) {
        range rx, ry;
        std::vector<std::vector<double>> xs, ys;
        for (const auto& g : d.groups_) {
            std::vector<double> x, y;
            for (std::size_t k = 0; k < g.x_.size(); ++k) {
                const double vx = axis_value(g.x_[k], d.log_x_);
                const double vy = axis_value(g.y_[k], d.log_y_);
                if (!finite(vx) || !finite(vy)) continue;
                x.push_back(vx);
                y.push_back(vy);
                rx.add(vx);
                ry.add(vy);
            }
            xs.push_back(std::move(x));
            ys.push_back(std::move(y));
        }
        for (const auto& o : d.overlays_) {
            if (o.shape_ == overlay_curve::shape::vertical) rx.add(axis_value(o.value_, d.log_x_));
            if (o.shape_ == overlay_curve::shape::horizontal)
                ry.add(axis_value(o.value_, d.log_y_));
        }
        const range ux = rx.padded(0.04), uy = ry.padded(0.05);
        std::vector<legend_entry> legend;
        for (std::size_t k = 0; k < d.groups_.size(); ++k) {
            legend_entry e{d.groups_[k].label_ + " (" + std::to_string(xs[k].size()) + ")",
                           PL_LEGEND_SYMBOL, series_colour(k), 1, 1.0};
            e.symbol = markers[k % markers.size()];
            legend.push_back(e);
        }
        std::vector<legend_entry> sizing = legend;
        for (const auto& o : d.overlays_) sizing.emplace_back(o.label_);
        pls.vpor((left_chars + 1.0) * pg.ch_x, 1.0 - right_chars * pg.ch_x,
                 bottom_chars(legend_rows(sizing)) * pg.ch_y, 1.0 - top_chars * pg.ch_y);
        pls.wind(ux.lo, ux.hi, uy.lo, uy.hi);
        axes(pls, d.log_x_, d.log_y_, true);
        PLFLT def = 0.0, ht = 0.0;
        pls.gchr(def, ht);
        pls.schr(0.0, 0.8 * ht / def);
        for (std::size_t k = 0; k < d.groups_.size(); ++k) {
            if (xs[k].empty()) continue;
            pls.col0(series_colour(k));
            pls.string(as_plint(xs[k].size()), xs[k].data(), ys[k].data(),
                       markers[k % markers.size()]);
        }
        pls.schr(0.0, ht / def);
        draw_overlays(pls, d.overlays_, d.log_x_, d.log_y_, ux.lo, ux.hi, uy.lo, uy.hi, false,
                      legend);
        axes(pls, d.log_x_, d.log_y_, true, false);
        x_label(pls, d.x_label_);
        y_label(pls, d.y_label_);
        title(pls, d.title_);
        draw_legend(pls, pg, legend, x_label_chars);
    });
}

void draw_histogram(const histogram_data& d, const figure_output& out) {
    const std::string what = "histogram '" + d.title_ + "'";
    if (d.bins_ < 1 || d.bins_ > 100000) bad(what, "bins must be 1 to 100000");
    range rv;
    std::size_t non_finite = 0;
    for (double v : d.values_) {
        if (finite(v))
            rv.add(v);
        else
            ++non_finite;
    }
    const range r = d.lo_ < d.hi_ ? range{d.lo_, d.hi_} : rv.usable();
    const auto nb = static_cast<std::size_t>(d.bins_);
    std::vector<double> counts(nb, 0.0);
    std::size_t outside = 0;
    const double w = (r.hi - r.lo) / static_cast<double>(nb);
    for (double v : d.values_) {
        if (!finite(v)) continue;
        if (v < r.lo || v > r.hi) {
            ++outside;
            continue;
        }
        // Bins are [lo + k w, lo + (k+1) w); the top edge belongs to the last bin.
        auto k = static_cast<std::size_t>((v - r.lo) / w);
        counts[std::min(k, nb - 1)] += 1.0;
    }
    const double cmax = std::max(1.0, *std::max_element(counts.begin(), counts.end()));
    render(out, [&](plstream& pls, const page& pg) {
        pls.vpor((left_chars + 1.0) * pg.ch_x, 1.0 - right_chars * pg.ch_x, x_label_chars * pg.ch_y,
                 1.0 - top_chars * pg.ch_y);
        pls.wind(r.lo, r.hi, 0.0, 1.18 * cmax); // headroom for the note inside the top
        axes(pls, false, false, true);
        for (std::size_t k = 0; k < nb; ++k) {
            if (counts[k] == 0.0) continue;
            const double x0 = r.lo + w * static_cast<double>(k), x1 = x0 + w;
            const std::array<PLFLT, 4> bx{x0, x1, x1, x0};
            const std::array<PLFLT, 4> by{0.0, 0.0, counts[k], counts[k]};
            pls.col0(col_bar);
            pls.fill(4, bx.data(), by.data());
            const std::array<PLFLT, 5> ox{x0, x1, x1, x0, x0};
            const std::array<PLFLT, 5> oy{0.0, 0.0, counts[k], counts[k], 0.0};
            pls.col0(col_foreground);
            pls.line(5, ox.data(), oy.data());
        }
        axes(pls, false, false, true, false);
        std::string note = "n = " + std::to_string(d.values_.size() - non_finite - outside);
        if (outside > 0) note += ", " + std::to_string(outside) + " outside range";
        if (non_finite > 0) note += ", " + std::to_string(non_finite) + " non-finite left out";
        PLFLT def = 0.0, ht = 0.0;
        pls.gchr(def, ht);
        pls.schr(0.0, 0.85 * ht / def);
        pls.mtex("t", -1.3, 0.98, 1.0, note.c_str());
        pls.schr(0.0, ht / def);
        x_label(pls, d.x_label_);
        y_label(pls, d.y_label_);
        title(pls, d.title_);
    });
}

} // namespace

// ---------------------------------------------------------------------------------------------
// Public entry points.

overlay_curve overlay_curve::vertical(double x0, std::string label) {
    overlay_curve c;
    c.label_ = std::move(label);
    c.shape_ = shape::vertical;
    c.value_ = x0;
    return c;
}

overlay_curve overlay_curve::horizontal(double y0, std::string label) {
    overlay_curve c;
    c.label_ = std::move(label);
    c.shape_ = shape::horizontal;
    c.value_ = y0;
    return c;
}

overlay_curve overlay_curve::polyline(std::vector<double> x, std::vector<double> y,
                                      std::string label) {
    overlay_curve c;
    c.label_ = std::move(label);
    c.shape_ = shape::polyline;
    c.x_ = std::move(x);
    c.y_ = std::move(y);
    return c;
}

std::string figure_kind(const figure& f) {
    static constexpr std::array<const char*, 8> names{"heat_map", "line_plot", "time_series",
                                                      "bars",     "survival",  "orbit_diagram",
                                                      "scatter",  "histogram"};
    static_assert(std::variant_size_v<figure> == names.size());
    return names[f.index()];
}

void heat_map(const heat_map_data& d, const figure_output& out) {
    draw_heat_map(d, out);
}
void line_plot(const line_plot_data& d, const figure_output& out) {
    draw_line_plot(d, out);
}
void time_series(const time_series_data& d, const figure_output& out) {
    draw_time_series(d, out);
}
void bars(const bar_chart_data& d, const figure_output& out) {
    draw_bars(d, out);
}
void survival_plot(const survival_plot_data& d, const figure_output& out) {
    draw_survival(d, out);
}
void orbit_diagram(const orbit_diagram_data& d, const figure_output& out) {
    draw_orbit_diagram(d, out);
}
void scatter(const scatter_data& d, const figure_output& out) {
    draw_scatter(d, out);
}
void histogram(const histogram_data& d, const figure_output& out) {
    draw_histogram(d, out);
}

void write_figure(const figure& f, const figure_output& out) {
    std::visit(
        [&](const auto& d) {
            using T = std::decay_t<decltype(d)>;
            if constexpr (std::is_same_v<T, heat_map_data>)
                draw_heat_map(d, out);
            else if constexpr (std::is_same_v<T, line_plot_data>)
                draw_line_plot(d, out);
            else if constexpr (std::is_same_v<T, time_series_data>)
                draw_time_series(d, out);
            else if constexpr (std::is_same_v<T, bar_chart_data>)
                draw_bars(d, out);
            else if constexpr (std::is_same_v<T, survival_plot_data>)
                draw_survival(d, out);
            else if constexpr (std::is_same_v<T, orbit_diagram_data>)
                draw_orbit_diagram(d, out);
            else if constexpr (std::is_same_v<T, scatter_data>)
                draw_scatter(d, out);
            else
                draw_histogram(d, out);
        },
        f);
}

std::vector<std::uint8_t> png_bytes(const figure& f, int width_px, int height_px) {
    // A private file in the temporary directory; removed whatever happens.
    const std::filesystem::path dir = std::filesystem::temp_directory_path();
    std::string templ = (dir / "moonwright-figure-XXXXXX").string();
    std::vector<char> buf(templ.begin(), templ.end());
    buf.push_back('\0');
    const int fd = ::mkstemp(buf.data());
    if (fd < 0)
        throw io_error(std::string("cannot create a temporary figure file: ") +
                       std::strerror(errno));
    ::close(fd);
    const std::filesystem::path path(buf.data());
    struct remover {
        std::filesystem::path p;
        ~remover() {
            std::error_code ec;
            std::filesystem::remove(p, ec);
        }
    } cleanup{path};
    write_figure(f, {path, figure_format::png, width_px, height_px});
    std::ifstream in(path, std::ios::binary);
    std::vector<std::uint8_t> bytes((std::istreambuf_iterator<char>(in)),
                                    std::istreambuf_iterator<char>());
    if (!in.good() && !in.eof()) throw io_error("cannot read back the temporary figure file");
    return bytes;
}

bool device_available(figure_format format) {
    std::lock_guard lock(plplot_mutex());
    return device_available_locked(format);
}

std::array<std::uint8_t, 3> scale_colour(colour_scale scale, double t) {
    const auto pts = scale_points(scale);
    const double tc = finite(t) ? std::clamp(t, 0.0, 1.0) : 0.0;
    std::size_t k = 0;
    while (k + 2 < pts.size() && tc > pts[k + 1].t) ++k;
    const double f = (tc - pts[k].t) / (pts[k + 1].t - pts[k].t);
    std::array<std::uint8_t, 3> rgb{};
    for (std::size_t c = 0; c < 3; ++c) {
        const double v = pts[k].rgb[c] + f * (pts[k + 1].rgb[c] - pts[k].rgb[c]);
        rgb[c] = static_cast<std::uint8_t>(std::lround(std::clamp(v, 0.0, 255.0)));
    }
    return rgb;
}

double relative_luminance(const std::array<std::uint8_t, 3>& rgb) {
    // sRGB to linear light (IEC 61966-2-1), then BT.709 luminance weights.
    auto lin = [](std::uint8_t v) {
        const double c = v / 255.0;
        return c <= 0.04045 ? c / 12.92 : std::pow((c + 0.055) / 1.055, 2.4);
    };
    return 0.2126 * lin(rgb[0]) + 0.7152 * lin(rgb[1]) + 0.0722 * lin(rgb[2]);
}

} // namespace moonwright::report
