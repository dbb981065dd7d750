// Universal-variable Kepler solver: Stumpff functions and the two-body drift of (r, v) by any
// time step, for elliptic, parabolic and hyperbolic orbits.
#pragma once

#include <cstddef>

namespace moonwright {

/// The Stumpff functions c_k(z) = sum_j (-z)^j / (2j + k)!, k = 0..3.
struct stumpff_values {
    double c0 = 1, c1 = 1, c2 = 0.5, c3 = 1.0 / 6.0;
};

/// Stumpff functions of z (any finite z): the series for |z| <= 1, else the closed forms in
/// cos / sin (z > 0) or cosh / sinh (z < 0) of sqrt|z| (Danby, Fundamentals of Celestial
/// Mechanics, 2nd ed. 1988, Sec. 6.9); a few ulp, with no error-amplifying doubling.
/// Non-finite z gives NaN values.
stumpff_values stumpff(double z) noexcept;

/// Outcome of one Kepler drift.
struct kepler_result {
    int iterations = 0;     ///< root-finder iterations used
    bool converged = false; ///< false only for r = 0, non-finite input or no convergence
    double s = 0;           ///< universal anomaly reached [s m^-1 ... i.e. time / length]
};

/// Largest number of root-finder iterations in kepler_drift (bisection guarantees progress).
inline constexpr int kepler_max_iterations = 100;

/// Advances the relative position r [m] and velocity v [m/s] (3 doubles each, in place) along
/// the two-body orbit about gm [m^3 s^-2] by dt [s] (any sign, any size). Universal variables
/// with Danby's G-functions and the f and g functions (Danby 1988, Secs. 6.9-6.10; written in
/// increments (f - 1), (g' - 1) as in Wisdom & Hernandez 2015, MNRAS 453, 3015). The root of
/// the universal Kepler equation is found by Laguerre–Conway steps (Conway 1986, Celest. Mech.
/// 39, 199) inside a bracket that every iteration shrinks, with bisection whenever a step
/// leaves it, so the loop is bounded by kepler_max_iterations. Elliptic steps longer than a
/// period are first reduced modulo the period.
kepler_result kepler_drift(double gm, double* r, double* v, double dt) noexcept;

/// Advances m two-body orbits by the same dt [s]: orbit j about gm[j] [m^3 s^-2] with its
/// relative position [m] and velocity [m/s] at r + 3 j and v + 3 j (in place). Orbits are
/// solved together in groups of lanes (structure of arrays): a fifth-order series-reversion
/// start, Halley steps with a branch-free Stumpff series (one pass for the group, more only
/// while some lane still needs one), the same work for every lane. A lane whose step is not
/// short (dt v >= r / 2), whose universal anomaly leaves the series' range or whose last Halley
/// step is not negligible is redone by kepler_drift, so every orbit is solved to round-off.
/// Deterministic: the same inputs give the same bits (also between the AVX2 and baseline
/// builds of the lane code). Returns the index of the first orbit that kepler_drift could not
/// solve (that orbit is left unchanged), or m when all succeeded.
std::size_t kepler_drift_many(std::size_t m, const double* gm, double* r, double* v,
                              double dt) noexcept;

} // namespace moonwright
