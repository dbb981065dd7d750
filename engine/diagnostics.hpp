// Conserved quantities and osculating elements of an N-body state, for error monitoring and
// for events (eccentricity growth, escapes).
#pragma once

#include "engine/forces.hpp"
#include "engine/orbital_elements.hpp"

#include <vector>

namespace moonwright {

/// Total energy [J]: kinetic (summed over hierarchical Jacobi velocities, which equals the
/// inertial sum exactly and keeps moons' digits) plus the point-mass and zonal-harmonic
/// potential of the model (extra forces are not included). rel_q, rel_v: parent-relative
/// positions [m] and velocities [m/s], 3 n each.
double total_energy(const force_model& model, const double* rel_q, const double* rel_v);
/// Total angular momentum [kg m^2 s^-1] about the origin, from parent-relative coordinates
/// (sum over Jacobi orbits of mu r x v plus the barycentre's). With oblate bodies whose spin
/// axes are fixed only the component along a common axis is conserved.
vec3 angular_momentum(const jacobi_tree& tree, const double* rel_q, const double* rel_v);
/// Osculating elements of every Jacobi orbit: body k's subsystem about the barycentre of its
/// parent subsystem with GM = G (M_inner + M_k), in the inertial frame. Entry 0 (the root) is
/// left default-constructed.
std::vector<orbital_elements> osculating_elements(const jacobi_tree& tree, const double* rel_q,
                                                  const double* rel_v);
/// |value - reference| / |reference| (or |value| when the reference is 0).
double relative_error(double value, double reference) noexcept;

/// Convenience forms on a system's own inertial state.
double total_energy(const nbody_system& sys);
vec3 angular_momentum(const nbody_system& sys);
std::vector<orbital_elements> osculating_elements(const nbody_system& sys);

} // namespace moonwright
