// The tangent (variational) Kepler drift: the derivative of kepler_drift's map (r, v) -> (r', v')
// applied to a deviation (dr, dv), for the tangent map of the Wisdom–Holman integrator.
#pragma once

namespace moonwright {

/// Advances r [m], v [m/s] by kepler_drift(gm, r, v, dt) (bitwise the same result) and the
/// deviation dr, dv (3 doubles each, any units consistent with r and v) by the derivative of
/// that drift with respect to the initial position and velocity (Mikkola & Innanen 1999, AJ 118,
/// 1063, the variational Kepler drift). The derivative is computed exactly by forward-mode
/// differentiation (dual numbers) of the universal-variable f and g functions (Danby 1988,
/// Secs. 6.9-6.10), with the universal anomaly's derivative from the implicit function theorem
/// on the universal Kepler equation: ds = -(dF/dparams . delta) / r. Returns false when the
/// Kepler solver did not converge (nothing is changed then).
bool kepler_drift_variation(double gm, double* r, double* v, double* dr, double* dv,
                            double dt) noexcept;

} // namespace moonwright
