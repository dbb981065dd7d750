// Figures for reports: plain data in, PNG or SVG files (or PNG bytes) out, drawn with PLplot.
#pragma once

#include <array>
#include <cstdint>
#include <filesystem>
#include <string>
#include <variant>
#include <vector>

// Only figures.cpp includes the PLplot headers; callers see these plain structs.
//
// Conventions for every figure:
// - White background, black axes and text, DejaVu/sans fonts at a readable height.
// - Labels are plain UTF-8 text (a '#' is printed as '#', not read as a PLplot escape);
//   axis labels should carry their unit, e.g. "a (planet radii)", "t (yr)".
// - Values are plotted as given: the caller picks the display unit and says it in the label.
// - Series are told apart by line style and marker as well as colour, and colour scales have
//   monotonic luminance, so a figure still reads when printed in greyscale.
// - Output is deterministic: the same data give the same bytes (pngcairo, svg, svgcairo).
// - PLplot is not thread-safe; figures.cpp serialises all drawing with one mutex.

namespace moonwright::report {

/// File formats a figure can be written in.
enum class figure_format {
    png,      ///< PLplot device "pngcairo"
    svg,      ///< PLplot device "svg" (PLplot's own SVG writer, text as SVG text)
    svgcairo, ///< PLplot device "svgcairo" (text as outlines)
};

/// Where and how large to write a figure. width/height in pixels (PNG) or SVG user units.
struct figure_output {
    std::filesystem::path path_;
    figure_format format_ = figure_format::png;
    int width_px_ = 1000;
    int height_px_ = 700;
};

/// Sequential colour scales for heat maps; both have strictly monotonic luminance.
enum class colour_scale {
    viridis_like, ///< dark violet -> blue -> green -> yellow
    grey,         ///< light grey -> black
};

/// A labelled analytic curve drawn over a plot (e.g. "Roche limit", "Domingos et al. 2006 limit").
struct overlay_curve {
    enum class shape {
        vertical,   ///< a vertical line at value_ (x), spanning the plot
        horizontal, ///< a horizontal line at value_ (y), spanning the plot
        polyline,   ///< the points (x_[k], y_[k])
    };
    std::string label_;
    shape shape_ = shape::polyline;
    double value_ = 0.0;
    std::vector<double> x_, y_;

    /// A vertical line x = x0 with a legend label.
    static overlay_curve vertical(double x0, std::string label);
    /// A horizontal line y = y0 with a legend label.
    static overlay_curve horizontal(double y0, std::string label);
    /// A polyline through (x[k], y[k]); x and y have equal length >= 2.
    static overlay_curve polyline(std::vector<double> x, std::vector<double> y, std::string label);
};

/// A 2-D scan shown as coloured cells with a colour bar. Cells are z_[j][i] for x cell i and
/// y cell j (row-major by y). Non-finite z marks a cell without data (drawn light grey, hatched
/// by its absence of colour; the colour bar says what the colours mean).
struct heat_map_data {
    std::string title_, x_label_, y_label_, colour_bar_label_;
    /// x cell centres (nx values), or edges (nx + 1 values) when edges_; strictly increasing.
    std::vector<double> x_;
    /// y cell centres (ny values), or edges (ny + 1 values) when edges_; strictly increasing.
    std::vector<double> y_;
    bool edges_ = false;                 ///< x_ and y_ hold cell edges instead of cell centres
    std::vector<std::vector<double>> z_; ///< ny rows of nx values
    /// Colour range; when z_min_ >= z_max_ the finite range of z is used.
    double z_min_ = 0.0, z_max_ = 0.0;
    colour_scale scale_ = colour_scale::viridis_like;
    std::vector<overlay_curve> overlays_;
};

/// One curve of a line plot or time series, with an optional min/max envelope.
struct series {
    std::string label_;
    std::vector<double> y_;     ///< one value per x (non-finite values break the line)
    std::vector<double> y_min_; ///< empty, or one lower envelope value per x
    std::vector<double> y_max_; ///< empty, or one upper envelope value per x
};

/// One panel of stacked plots sharing the x axis.
struct series_panel {
    std::string y_label_;
    bool log_y_ = false; ///< log10 axis; non-positive values are left out
    std::vector<series> series_;
    std::vector<overlay_curve> overlays_; ///< reference lines, e.g. "MEGNO = 2 (regular)"
};

/// Curves against time, one or more stacked panels (e.g. a, e, i; or MEGNO).
struct time_series_data {
    std::string title_, x_label_;
    std::vector<double> t_; ///< shared abscissa, non-decreasing
    bool log_x_ = false;
    std::vector<series_panel> panels_;
};

/// A 1-D scan: curves over a scanned parameter, with optional analytic limits.
struct line_plot_data {
    std::string title_, x_label_;
    std::vector<double> x_; ///< shared abscissa, non-decreasing
    bool log_x_ = false;
    series_panel panel_;
};

/// A bar chart, e.g. how many designs got each verdict.
struct bar_chart_data {
    std::string title_, y_label_;
    std::vector<std::string> categories_;
    std::vector<double> values_; ///< one non-negative value per category
};

/// One Kaplan-Meier survival curve: S(t) holds from t_[k] up to t_[k+1], with its band.
struct survival_curve {
    std::string label_;
    std::vector<double> t_;        ///< step times, non-decreasing, t_[0] usually 0
    std::vector<double> survival_; ///< S after the step at t_[k], in [0, 1]
    std::vector<double> lower_;    ///< empty, or lower confidence bound per step
    std::vector<double> upper_;    ///< empty, or upper confidence bound per step
    double t_end_ = 0.0;           ///< where the last step ends (span of the run); 0: last t
    std::vector<double> censored_; ///< times of censored subjects, marked '+' on the curve
};

/// Survival curves (Kaplan-Meier) with confidence bands.
struct survival_plot_data {
    std::string title_, x_label_;
    std::string y_label_ = "surviving fraction";
    bool log_x_ = false;
    std::vector<survival_curve> curves_;
};

/// An orbit seen from above in the parent's frame, focus at the parent.
struct orbit_ellipse {
    std::string label_;
    double a_m_ = 0.0;            ///< semi-major axis (m), > 0
    double e_ = 0.0;              ///< eccentricity, 0 <= e < 1
    double pericentre_rad_ = 0.0; ///< argument (longitude) of pericentre from +x (rad)
};

/// A circle around the parent drawn to scale (Hill sphere, stability limit, Roche limit).
struct reference_circle {
    enum class kind { hill, stability, roche, other };
    std::string label_;
    double radius_m_ = 0.0; ///< radius (m), > 0
    kind kind_ = kind::other;
};

/// A top-down, equal-aspect diagram of orbits around one parent.
struct orbit_diagram_data {
    std::string title_;
    std::string parent_label_;
    double parent_radius_m_ = 0.0;        ///< drawn as a filled disc when > 0 (m)
    double length_unit_m_ = 1.0;          ///< one axis unit in metres, e.g. the planet radius
    std::string length_unit_label_ = "m"; ///< e.g. "planet radii", "1000 km"
    std::vector<orbit_ellipse> orbits_;
    std::vector<reference_circle> circles_;
};

/// Points in groups (each group its own marker), e.g. final a and e of captured bodies.
struct scatter_group {
    std::string label_;
    std::vector<double> x_, y_; ///< equal length; non-finite points are left out
};

/// A scatter plot.
struct scatter_data {
    std::string title_, x_label_, y_label_;
    bool log_x_ = false, log_y_ = false;
    std::vector<scatter_group> groups_;
    std::vector<overlay_curve> overlays_;
};

/// A histogram of values in equal bins.
struct histogram_data {
    std::string title_, x_label_;
    std::string y_label_ = "count";
    std::vector<double> values_; ///< non-finite values are left out (and counted in the note)
    int bins_ = 20;              ///< number of equal bins, >= 1
    /// Range of the bins; when lo_ >= hi_ the finite range of the values is used.
    double lo_ = 0.0, hi_ = 0.0;
};

/// Any figure kind, for code that handles figures generically (the HTML report).
using figure = std::variant<heat_map_data, line_plot_data, time_series_data, bar_chart_data,
                            survival_plot_data, orbit_diagram_data, scatter_data, histogram_data>;

/// Short name of a figure kind ("heat_map", "line_plot", ...), used as data-figure in HTML.
[[nodiscard]] std::string figure_kind(const figure& f);

/// Draw a figure to a file. Throws std::invalid_argument for inconsistent data (sizes that do
/// not match, non-increasing edges, e >= 1), moonwright::io_error when the PLplot device is
/// missing or the file cannot be written.
void write_figure(const figure& f, const figure_output& out);

/// Draw a figure as PNG and return the bytes (via a private temporary file).
[[nodiscard]] std::vector<std::uint8_t> png_bytes(const figure& f, int width_px, int height_px);

// The named entry points below are write_figure for one kind each.
void heat_map(const heat_map_data& d, const figure_output& out);
void line_plot(const line_plot_data& d, const figure_output& out);
void time_series(const time_series_data& d, const figure_output& out);
void bars(const bar_chart_data& d, const figure_output& out);
void survival_plot(const survival_plot_data& d, const figure_output& out);
void orbit_diagram(const orbit_diagram_data& d, const figure_output& out);
void scatter(const scatter_data& d, const figure_output& out);
void histogram(const histogram_data& d, const figure_output& out);

/// True when this PLplot installation has the device behind a format (checked with plgDevs).
[[nodiscard]] bool device_available(figure_format format);

/// The colour of a scale at t in [0, 1] (clamped), as 8-bit sRGB, interpolated linearly between
/// the scale's control points exactly as PLplot does for its colour map 1.
[[nodiscard]] std::array<std::uint8_t, 3> scale_colour(colour_scale scale, double t);

/// Relative luminance of an 8-bit sRGB colour, 0 (black) to 1 (white).
/// Formula: IEC 61966-2-1 (sRGB transfer) and ITU-R BT.709 weights 0.2126, 0.7152, 0.0722.
[[nodiscard]] double relative_luminance(const std::array<std::uint8_t, 3>& rgb);

} // namespace moonwright::report
