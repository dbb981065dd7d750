// What every result-kind page builder returns: the HTML page and its figures as PNG bytes.
#pragma once

#include "tools/report/html_report.hpp"

#include <vector>

namespace moonwright::report {

/// A built report page. The figures are embedded in the page already; they are kept here as
/// well so that `moonwright report --figures DIR` can write each one as DIR/<id>.png.
struct report_page {
    html_report page_{"moonwright report"};
    std::vector<embedded_figure> figures_;
};

} // namespace moonwright::report
