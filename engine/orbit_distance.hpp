// The minimum distance between two Keplerian ellipses that share a focus (the minimum orbit
// intersection distance), found numerically: a grid over both eccentric anomalies, then a
// local refinement of each grid minimum.
#pragma once

#include "engine/error.hpp" // before design.hpp, which uses source_location
#include "engine/resolved_system.hpp"

#include <array>

namespace moonwright {

/// Position on an orbit at eccentric anomaly E, relative to the focus, in the reference frame
/// of the elements [m]: a ((cos E - e) P + sqrt(1 - e^2) sin E Q), with the unit vectors P
/// (to pericentre) and Q of Murray & Dermott, Solar System Dynamics, eqs. 2.118-2.122.
std::array<double, 3> orbit_position_at_eccentric_anomaly(const resolved_orbit& o,
                                                          double ecc_anomaly);

/// Minimum distance between two bound orbits around the same focus [m] (both orbits as whole
/// curves; where the bodies are on them does not matter). Grid of 72 x 72 eccentric anomalies,
/// then a pattern search (step halving, 8 directions) from every grid local minimum, down to
/// steps of 1e-10 rad: the result is accurate to about 1e-9 of the larger orbit.
double minimum_orbit_distance(const resolved_orbit& o1, const resolved_orbit& o2);

} // namespace moonwright
