// Capture figures: a histogram of capture durations and a scatter of the final orbits (a in
// Hill radii against e) of kept members, for `moonwright capture --plot`.
#pragma once

#include "engine/capture_experiment.hpp"
#include "tools/report/figures.hpp"

#include <utility>

namespace moonwright::report {

/// Histogram of every capture episode's duration [yr] (summary.durations_s) and scatter of the
/// kept members' final semi-major axis [Hill radii] against eccentricity, split into prograde
/// and retrograde groups (inclination to the planet's orbit below or above 90 deg).
[[nodiscard]] std::pair<histogram_data, scatter_data> capture_figures(const capture_result& r);

} // namespace moonwright::report
