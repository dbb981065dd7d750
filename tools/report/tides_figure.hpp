// The tides figure: each moon's semi-major axis against time, with its Roche and stability
// limits drawn as horizontal lines (for `moonwright tides --plot` and the HTML report).
#pragma once

#include "engine/tides_report.hpp"
#include "tools/report/figures.hpp"

namespace moonwright::report {

/// a(t) of every moon in km on a log axis, one panel per planet that has moons, against time in
/// years on a log axis (the t = 0 row cannot be shown on it and is left out). Overlays: each
/// moon's inner limit (Roche limit, or the planet's surface) and its stability limit at the
/// start (Domingos, Winter & Yokoyama 2006); limits equal within 0.5 % are drawn once. A lost
/// moon's line ends at its last sample before the loss. When no planet has moons, the panels
/// show each planet's day in hours instead.
[[nodiscard]] figure tides_figure(const tides_report& r);

} // namespace moonwright::report
