// Orbital elements <-> Cartesian state relative to a central GM, for elliptic, parabolic and
// hyperbolic orbits, and the anomalies that link them.
#pragma once

#include <array>

namespace moonwright {

using vec3 = std::array<double, 3>;

/// A relative Cartesian state: position [m] and velocity [m/s].
struct cartesian_state {
    vec3 r{}, v{};
};

/// Osculating elements of a two-body orbit. The size is the pericentre distance q, defined for
/// every e >= 0 (a = q / (1 - e) is negative for hyperbolic orbits and infinite for e = 1), and
/// the phase is the true anomaly, defined for every e. Angles [rad]: i in [0, pi] (> pi/2 is
/// retrograde); node, peri and nu in (-pi, pi]. Conventions for undefined angles: for i = 0 or
/// pi the node is 0 (the x axis); for e = 0 the pericentre is at the node, so nu is the
/// argument of latitude.
struct orbital_elements {
    double q = 0;    ///< pericentre distance [m], > 0
    double e = 0;    ///< eccentricity, >= 0
    double i = 0;    ///< inclination to the x-y plane [rad]
    double node = 0; ///< longitude of the ascending node from the x axis [rad]
    double peri = 0; ///< argument of pericentre from the node [rad]
    double nu = 0;   ///< true anomaly [rad]
};

/// Semi-major axis q / (1 - e) [m]: negative for hyperbolic orbits, +infinity for e = 1.
double semi_major_axis(const orbital_elements& el) noexcept;

/// Mean anomaly [rad] from the true anomaly. Elliptic: M = E - e sin E in (-pi, pi];
/// hyperbolic: M = e sinh H - H; parabolic: Barker's M = D + D^3 / 3 with D = tan(nu / 2), so
/// that time from pericentre is M sqrt(2 q^3 / GM) (Danby 1988, Sec. 6.3 and 6.5).
double mean_anomaly(double e, double nu);

/// True anomaly [rad] from the mean anomaly (same conventions as mean_anomaly). Kepler's
/// equation is solved by Newton steps inside a shrinking bracket (bisection fallback, bounded
/// iterations); the parabolic case by Cardano's formula for Barker's equation.
double true_anomaly(double e, double mean_anom);

/// Elements from (a, e, i, node, peri, mean anomaly) as a design gives them. a > 0 with
/// 0 <= e < 1, or a < 0 with e > 1. Throws input_error otherwise.
orbital_elements elements_from_mean(double a, double e, double i, double node, double peri,
                                    double mean_anom);

/// Cartesian state relative to the centre of attraction gm [m^3 s^-2] (Murray & Dermott, Solar
/// System Dynamics, Sec. 2.8, written with p = q (1 + e) so that every e works). Throws
/// input_error for q <= 0, e < 0, or a hyperbolic true anomaly beyond the asymptotes.
cartesian_state elements_to_cartesian(double gm, const orbital_elements& el);

/// Osculating elements of a relative state about gm [m^3 s^-2] (Murray & Dermott Sec. 2.8;
/// every angle by atan2 so nearly circular and nearly equatorial orbits stay well conditioned).
orbital_elements cartesian_to_elements(double gm, const cartesian_state& s);

} // namespace moonwright
