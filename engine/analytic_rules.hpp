// The quick analytic rules people use to size moons, each with its published source.
// All inputs and outputs are SI (m, kg, s, kg/m^3, rad).
#pragma once

#include <optional>
#include <span>

namespace moonwright {

/// Bulk density of a mixture by mass fractions: 1/rho = sum w_i / rho_i (ideal mixing, no
/// compression). `fractions` and `densities` have the same length; fractions sum to 1.
double mixture_density(std::span<const double> fractions, std::span<const double> densities);

/// Volume of a sphere of radius r [m^3].
double sphere_volume(double r);
/// Volume of a triaxial ellipsoid with semi-axes a, b, c: 4/3 pi a b c [m^3].
double ellipsoid_volume(double a, double b, double c);
/// Radius of the sphere with the ellipsoid's volume: (a b c)^(1/3) [m].
double volume_equivalent_radius(double a, double b, double c);

/// Surface gravity g = G M / R^2 [m/s^2].
double surface_gravity(double mass, double radius);
/// Escape velocity sqrt(2 G M / R) [m/s].
double escape_velocity(double mass, double radius);

/// Kepler's third law with both masses: P = 2 pi sqrt(a^3 / (G (M1 + M2))) [s].
double kepler_period(double a, double m1, double m2);
/// Inverse of kepler_period: a = (G (M1 + M2) P^2 / (4 pi^2))^(1/3) [m].
double kepler_semi_major_axis(double period, double m1, double m2);

/// Hill radius of a body of mass m orbiting M at semi-major axis a and eccentricity e,
/// evaluated at pericentre: a (1 - e) (m / (3 M))^(1/3) (Murray & Dermott, Solar System
/// Dynamics, eq. 3.75, with the pericentre distance, common practice for eccentric orbits).
double hill_radius(double a, double e, double m, double big_m);

/// Roche limit of a fluid satellite: 2.44 R_p (rho_p / rho_s)^(1/3) (Roche 1849; the
/// coefficient as in Murray & Dermott, Solar System Dynamics, Sec. 4.12).
double roche_limit_fluid(double parent_radius, double parent_density, double satellite_density);
/// Roche limit of a rotating fluid satellite with Chandrasekhar's coefficient 2.456
/// (Chandrasekhar 1969, Ellipsoidal Figures of Equilibrium).
double roche_limit_fluid_rotating(double parent_radius, double parent_density,
                                  double satellite_density);
/// Roche limit of a rigid, strengthless spherical satellite: 1.26 R_p (rho_p / rho_s)^(1/3)
/// (the rigid-body form, e.g. Murray & Dermott Sec. 4.12).
double roche_limit_rigid(double parent_radius, double parent_density, double satellite_density);

/// Critical semi-major axis of a satellite as a fraction of the parent's Hill radius
/// R_H = a_p (m_p / 3 M_*)^(1/3), fitted by Domingos, Winter & Yokoyama (2006, MNRAS 373, 1227;
/// coefficients as recalled, from memory):
/// prograde 0.4895 (1 - 1.0305 e_p - 0.2738 e_s); retrograde 0.9309 (1 - 1.0764 e_p - 0.9812 e_s).
/// Returns the fraction (may be <= 0 for extreme eccentricities: no stable orbit).
double stability_limit_fraction(double e_parent, double e_satellite, bool retrograde);
/// The same limit in metres: fraction * a_p (m_p / (3 M_*))^(1/3).
double stability_limit(double a_parent, double e_parent, double m_parent, double m_star,
                       double e_satellite, bool retrograde);

/// Mutual Hill radius of two bodies around a central mass M:
/// ((m1 + m2) / (3 M))^(1/3) (a1 + a2) / 2 (Chambers, Wetherill & Boss 1996).
double mutual_hill_radius(double a1, double a2, double m1, double m2, double big_m);
/// Separation in mutual Hill radii: |a2 - a1| / mutual_hill_radius.
double mutual_hill_spacing(double a1, double a2, double m1, double m2, double big_m);
/// Gladman (1993): two circular coplanar orbits are Hill stable when separated by more than
/// 2 sqrt(3) mutual Hill radii.
inline constexpr double gladman_hill_stable_spacing = 3.4641016151377544;
/// Chambers, Wetherill & Boss (1996): systems spaced closer than about 10 mutual Hill radii
/// tend to go unstable over long spans.
inline constexpr double chambers_long_term_spacing = 10.0;

/// Radius of the synchronous orbit of a body of mass M spinning with period P:
/// (G M P^2 / (4 pi^2))^(1/3) [m].
double synchronous_orbit_radius(double mass, double rotation_period);

/// Second zonal harmonic of a body in hydrostatic equilibrium from its rotation:
/// J2 = k2_fluid q / 3 with q = omega^2 R^3 / (G M) (Murray & Dermott Sec. 4.5 notation).
double j2_from_rotation(double rotation_period, double radius, double mass, double k2_fluid);

/// Fluid Love number used to derive J2 from rotation when a design gives none. A choice, not a
/// fit: 0.94 for rocky bodies (Earth's fluid Love number, from memory) and 0.5 for giant planets
/// (Jupiter's and Saturn's are about 0.5, from memory). "Giant" means 10 Earth masses or more and
/// a bulk density under 3000 kg/m^3 (common practice, no source); every other body counts as
/// rocky. Icy bodies fall under "rocky", which slightly underestimates their flattening.
double fluid_love_number(double mass, double density);

/// A near-commensurability p:q of two periods (p > q, outer : inner).
struct commensurability {
    int p = 0, q = 0;
    double offset = 0; ///< ratio / (p / q) - 1
};
/// The lowest-order p:q (p > q >= 1, gcd 1, p - q <= max_order, p <= max_p) within the relative
/// `tolerance` of `period_ratio` (outer / inner period, >= 1), or none. Orders are tried from
/// 1 up, and within an order the closest ratio wins (common practice, no source).
std::optional<commensurability> nearest_commensurability(double period_ratio,
                                                         double tolerance = 0.01, int max_order = 3,
                                                         int max_p = 10);

/// Shape class of an ellipsoid with semi-axes a >= b >= c.
enum class shape_class { sphere, oblate, prolate, triaxial };
/// Classifies semi-axes: equal within `tolerance` (relative) counts as equal.
shape_class classify_shape(double a, double b, double c, double tolerance = 0.02);

} // namespace moonwright
