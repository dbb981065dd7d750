// The stability-map figure: a heat map (2-D grid) or a line plot (1-D scan) with the analytic
// limits of the varied moon drawn over it (for `moonwright map --plot`).
#pragma once

#include "engine/stability_map.hpp"
#include "tools/report/figures.hpp"

#include <string>

namespace moonwright::report {

/// What the colour (2-D) or the curve (1-D) shows.
enum class map_quantity {
    survival, ///< survival time in orbits of the reference planet
    megno,    ///< time-averaged MEGNO
};

/// A 2-D map becomes a heat map with a colour bar; a 1-D scan a line plot. When an axis is the
/// semi-major axis of a moon, the Domingos, Winter & Yokoyama (2006) limit for the moon's sense
/// (a curve over e when the other axis is that moon's e), its fluid Roche limit and the planet's
/// Hill radius are overlaid where they fall inside the plotted range.
[[nodiscard]] figure map_figure(const map_result& r, const std::string& title,
                                map_quantity q = map_quantity::survival);

} // namespace moonwright::report
