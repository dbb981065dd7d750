// Capture figures built from the capture summary: durations histogram and final a-e scatter.
#include "tools/report/capture_figures.hpp"

#include "engine/constants.hpp"

namespace moonwright::report {

std::pair<histogram_data, scatter_data> capture_figures(const capture_result& r) {
    const capture_summary& s = r.summary;
    histogram_data h;
    h.title_ = "Capture durations";
    h.x_label_ = "duration [yr]";
    h.y_label_ = "capture episodes";
    for (double d : s.durations_s) h.values_.push_back(d / constants::year);
    scatter_data sc;
    sc.title_ = "Final orbits of kept members";
    sc.x_label_ = "a [Hill radii]";
    sc.y_label_ = "e";
    scatter_group pro{"prograde", {}, {}}, retro{"retrograde", {}, {}};
    for (std::size_t k = 0; k < s.final_a_hill.size(); ++k) {
        scatter_group& g = s.final_i_rad[k] > constants::pi / 2 ? retro : pro;
        g.x_.push_back(s.final_a_hill[k]);
        g.y_.push_back(s.final_e[k]);
    }
    sc.groups_ = {pro, retro};
    return {h, sc};
}

} // namespace moonwright::report
