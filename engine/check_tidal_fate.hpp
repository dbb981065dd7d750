// The short tidal fate inside the design check: a cheap secular tidal run per planet with moons,
// turned into `tidal_fate` notes and the per-body `tidal_fate` field.
#pragma once

#include "engine/design_check.hpp"
#include "engine/tidal_evolution.hpp"

#include <vector>

namespace moonwright {

/// Settings of the check's tidal run: the constant-Q model, the library's default span, two
/// samples (the check needs no time series), looser tolerances (relative 1e-7), steps up to 1/100
/// of the span (the full run allows 1/2000) and a budget of 20,000 steps, so that a 20-body
/// check stays well under 0.1 s of process time.
tidal_options check_tidal_options();

/// For each planet with moons and a rotation period: runs evolve_tides with
/// check_tidal_options(), sets `tidal_fate` of the planet (every line of its system) and of each
/// moon (its own lines), and adds one `tidal_fate` note per moon (and one for the planet when it
/// has its own lines: a spin locked to the star, an early stop). A failure of the tidal run
/// never escapes: it becomes a `tidal_fate` note on the planet saying why. `per_body` holds the
/// findings by body index.
void add_tidal_fate_findings(const resolved_system& sys, std::vector<body_check>& bodies,
                             std::vector<std::vector<finding>>& per_body);

} // namespace moonwright
