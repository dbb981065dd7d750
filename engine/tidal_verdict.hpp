// Joins the long-term tidal fate to a run's verdict: a design can be dynamically stable for the
// span yet be doomed by tides over the star's lifetime.
#pragma once

#include "engine/resolved_system.hpp"
#include "engine/run_outcome.hpp"

namespace moonwright {

/// Runs the quick secular tidal evolution of the check (check_tidal_options) and adds its fates
/// to the verdict: one reason per fate line, and, when the verdict is stable or chaotic and a
/// moon is lost to tides, a headline of the form "Stable for 688 yr (10,000 orbits of X), but
/// moon 'X' reaches the Roche limit (...) in 1.3 Gyr." Designs without the data for tides
/// (no rotation period) are left as they are; a failure of the tidal model becomes a reason.
void add_tidal_fate(verdict& v, const resolved_system& sys);

} // namespace moonwright
