// The text summary of a capture experiment, with units, for people at a terminal.
#pragma once

#include "engine/capture_experiment.hpp"

#include <string>

namespace moonwright {

/// Several lines: probabilities with Wilson 95% intervals, capture durations (median, range),
/// final orbits of kept members (a in Hill radii, e, i, prograde/retrograde share), collisions
/// and what happened to the existing moons.
std::string render_capture_summary(const capture_options& o, const capture_result& r);

} // namespace moonwright
