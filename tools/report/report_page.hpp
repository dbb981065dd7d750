// What every result-kind page builder returns: the HTML page and its figures as PNG bytes.
#pragma once

#include "engine/design_check.hpp"
#include "tools/report/figures.hpp"
#include "tools/report/html_report.hpp"

#include <string>
#include <vector>

namespace moonwright::report {

/// A built report page. The figures are embedded in the page already; they are kept here as
/// well so that `moonwright report --figures DIR` can write each one as DIR/<id>.png.
struct report_page {
    html_report page_{"moonwright report"};
    std::vector<embedded_figure> figures_;
};

/// Draws `f` as a PNG, embeds it in `section` and keeps it for --figures.
inline void add_figure(report_page& out, html_section& section, const std::string& id,
                       const figure& f, const std::string& caption, const std::string& alt,
                       int width_px = 1000, int height_px = 700) {
    embedded_figure e;
    e.id_ = id;
    e.kind_ = figure_kind(f);
    e.caption_ = caption;
    e.alt_ = alt;
    e.width_px_ = width_px;
    e.height_px_ = height_px;
    e.bytes_ = png_bytes(f, width_px, height_px);
    section.figure(e);
    out.figures_.push_back(std::move(e));
}

/// A finding of the analytic check (engine/design_check.hpp) as a page lists it: about its body,
/// or about `whole` (e.g. the system's name) when it names none; its code follows in brackets.
inline finding page_finding(const moonwright::finding& f, const std::string& whole) {
    severity level = severity::note;
    if (f.level == moonwright::severity::error) level = severity::error;
    if (f.level == moonwright::severity::warning) level = severity::warning;
    return {level, f.body.empty() ? whole : f.body,
            f.message + (f.code.empty() ? "" : " [" + f.code + "]")};
}

} // namespace moonwright::report
