// The planet's spin axis: precession constant from the star's and the moons' torques, and the
// Laplace-Lagrange secular frequencies of the planets it may resonate with (chaotic obliquity).
#pragma once

#include <optional>
#include <span>
#include <string>
#include <vector>

namespace moonwright {

/// Laplace coefficient b_s^(j)(alpha) = (1/pi) int_0^{2 pi} cos(j psi) /
/// (1 - 2 alpha cos psi + alpha^2)^s dpsi (Murray & Dermott 1999, eq. 6.67), 0 <= alpha < 1,
/// by the trapezoid rule on the periodic integrand (spectrally accurate), doubling the number
/// of points until two results agree to 1e-14 relative.
double laplace_coefficient(double s, int j, double alpha);

/// One planet for Laplace-Lagrange theory. `mean_motion_rad_s` empty: Kepler's third law with
/// the star's and the planet's mass.
struct secular_planet {
    std::string name;
    double mass_kg = 0, a_m = 0;
    std::optional<double> mean_motion_rad_s;
};

/// Secular eigenfrequencies [rad/s] of the linear theory: g (apsidal, eigenvalues of A) and
/// f (nodal, eigenvalues of B; one is 0), each sorted ascending.
struct secular_frequencies {
    std::vector<double> g_rad_s, f_rad_s;
    std::vector<std::vector<double>> a_matrix, b_matrix; ///< A and B [rad/s], row-major
};

/// Laplace-Lagrange secular theory for N planets around a star of mass `star_mass` [kg]
/// (Murray & Dermott 1999, Sec. 7.2-7.4, eq. 7.128-7.131): A_jj = n_j/4 sum_k m_k/(M_c + m_j)
/// alpha_jk abar_jk b_{3/2}^(1), A_jk = -n_j/4 m_k/(M_c + m_j) alpha_jk abar_jk b_{3/2}^(2),
/// B_jj = -A_jj-like sum with b_{3/2}^(1), B_jk = +n_j/4 m_k/(M_c + m_j) alpha_jk abar_jk
/// b_{3/2}^(1). Throws input_error for fewer than 1 planet, equal or non-positive a.
secular_frequencies laplace_lagrange(double star_mass, std::span<const secular_planet> planets);

/// A moon as seen by the spin axis: mass [kg], a [m], e, inclination to the planet's orbital
/// plane [rad].
struct precession_moon {
    std::string name;
    double mass_kg = 0, a_m = 0, e = 0, i_rad = 0;
};

struct precession_result {
    double alpha_rad_s = 0;          ///< precession constant with the moons
    double alpha_no_moons_rad_s = 0; ///< the star alone
    double rate_rad_s = 0;           ///< alpha cos(obliquity): the axis's precession rate
    double rate_no_moons_rad_s = 0;
    double laplace_radius_m = 0; ///< moons inside it move with the equator
    std::vector<std::string> close_moons, distant_moons;
};

/// Precession constant of a planet's spin axis [rad/s].
/// Star and distant moons (Kinoshita 1977; Laskar, Joutel & Robutel 1993 form; the (1 - 3/2
/// sin^2 i) factor averages a moon's node; from memory):
///   alpha = 3/(2 omega) (J2 + q)/(C + l) [G M_*/(a_p^3 (1-e_p^2)^{3/2})
///           + sum_distant G m_j (1 - 3/2 sin^2 i_j) / (a_j^3 (1-e_j^2)^{3/2})]
/// Close moons (inside the Laplace radius r_L^5 = J2 R^2 a_p^3 (1-e_p^2)^{3/2} M_p/M_*,
/// Tremaine, Touma & Namouni 2009, from memory) precess with the equator and add
/// q = 1/2 sum (m_j/M_p)(a_j/R)^2 to J2 and l = sum (m_j/M_p)(a_j/R)^2 n_j/omega to C
/// (French et al. 1993, Icarus 103, 163; Ward & Hamilton 2004; from memory).
/// omega = spin rate [rad/s], c_norm = C/(M R^2).
precession_result precession_constant(double spin_rate, double j2, double c_norm,
                                      double planet_mass, double planet_radius,
                                      double obliquity_rad, double star_mass, double a_planet,
                                      double e_planet, std::span<const precession_moon> moons);

/// Fraction of a nodal frequency within which a precession rate is flagged as a chaotic-obliquity
/// risk (Laskar & Robutel 1993, Nature 361, 608, found chaos where the precession frequency
/// overlaps the secular nodal frequencies; the 25 % band is common practice, no source).
inline constexpr double default_resonance_fraction = 0.25;

/// One near-resonance between the spin axis and a nodal frequency.
struct obliquity_warning {
    int mode = 0;           ///< index into secular_frequencies::f_rad_s
    double nodal_rad_s = 0; ///< f_k
    double precession_rad_s = 0;
    double relative_gap = 0; ///< |p - |f_k|| / |f_k|
    bool with_moons = true;  ///< false: found for the moonless precession rate
};

/// Compares the precession rates (with and without moons) with every nonzero nodal frequency.
std::vector<obliquity_warning> obliquity_resonances(const precession_result& p,
                                                    const secular_frequencies& s,
                                                    double fraction = default_resonance_fraction);

} // namespace moonwright
