// Secular tidal evolution of one planet, its moons and its spin: constant-Q or constant time-lag
// tides, spin locks, and the fates (Roche limit, stability limit, double synchronous lock).
#pragma once

// design.hpp (via resolved_system.hpp) uses source_location without including error.hpp.
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"

#include <optional>
#include <string>
#include <vector>

namespace moonwright {

/// Which tidal model drives the planet's tide (the moons' own tides follow the same choice when
/// the moon gives the needed parameter, otherwise the constant-Q form).
enum class tide_model {
    constant_q,       ///< constant phase lag (Goldreich & Soter 1966; Murray & Dermott Sec. 4.9)
    constant_time_lag ///< constant time lag (Hut 1981, A&A 99, 126)
};

/// Which Roche limit ends a spiral-in.
enum class roche_rule {
    automatic, ///< fluid for moons of radius >= 200 km, rigid below (common practice, no source:
               ///< small moons hold together by strength inside the fluid limit)
    fluid,     ///< 2.44 R_p (rho_p/rho_s)^(1/3) (Roche 1849)
    rigid      ///< 1.26 R_p (rho_p/rho_s)^(1/3)
};

/// How the default span was chosen.
enum class span_rule { given, star_age, main_sequence_lifetime };

struct tidal_options {
    tide_model model = tide_model::constant_q;
    /// Integration span [s]. Empty: the star's age when given, otherwise its main-sequence
    /// lifetime 10 Gyr (M/M_sun)^-2.5 (common practice, no source).
    std::optional<double> span_s;
    int samples = 201;     ///< rows of the time series, evenly spaced in time (>= 2)
    double rel_tol = 1e-9; ///< adaptive stepper tolerances (on scaled variables)
    double abs_tol = 1e-12;
    long max_steps = 2'000'000; ///< step budget; the run stops early (and says so) past it
    /// Largest step as a fraction of the span (the stepper never takes longer steps, so a run
    /// takes at least 1/max_step_fraction steps). Larger values are cheaper and coarser.
    double max_step_fraction = 1.0 / 2000.0;
    bool star_tide = true; ///< include the star's tide on the planet's spin
    roche_rule roche = roche_rule::automatic;
    /// Planet's moment of inertia factor C/(M R^2). Empty: 0.3307 (Earth, from memory) for a
    /// planet denser than 2000 kg/m^3, otherwise 0.254 (Jupiter, from memory).
    std::optional<double> moment_of_inertia_factor;
    /// Constant time-lag model only: relative spin-orbit mismatch |Omega - n|/n under which a lock
    /// is declared and held (the lag model has no jump at n = Omega, so locks are approached
    /// asymptotically; common practice, no source).
    double lag_lock_tolerance = 1e-4;
};

/// Tidal parameters actually used for a body (given, or filled by a documented default).
struct tidal_parameters {
    double k2 = 0, q = 0;  ///< Love number and quality factor
    double time_lag_s = 0; ///< 0 when not used
    bool k2_assumed = false, q_assumed = false;
};

/// One row of the time series. Lost moons have NaN a and e after their loss.
struct tidal_sample {
    double t_s = 0;
    double planet_spin_period_s = 0; ///< sidereal rotation period (negative: retrograde spin)
    std::vector<double> a_m, e;      ///< one per moon, in tidal_evolution::moons order
};

enum class moon_fate {
    survives,        ///< still orbiting at the end of the span
    roche_limit,     ///< spiralled in to the fluid Roche limit (or the planet's surface)
    stability_limit, ///< migrated out past the stability limit (Domingos et al. 2006)
};

struct tidal_moon_result {
    std::string name;
    int body_index = -1;
    bool retrograde = false;
    double mass_kg = 0;
    tidal_parameters tides;
    double a0_m = 0, e0 = 0;             ///< start
    double a_end_m = 0, e_end = 0;       ///< at the end of the span or at the loss
    double initial_da_dt_m_s = 0;        ///< da/dt at the start [m/s]
    double initial_de_dt_per_s = 0;      ///< de/dt at the start [1/s]
    double inner_limit_m = 0;            ///< Roche limit, or R_p + R_s when larger
    bool inner_limit_is_surface = false; ///< true when the planet's surface lies outside Roche
    bool roche_is_fluid = true;          ///< which Roche limit was used
    double stability_limit_m = 0;        ///< at the start eccentricities
    double synchronous_orbit_m = 0;      ///< at the start spin
    moon_fate fate = moon_fate::survives;
    std::optional<double> fate_time_s;        ///< when the moon was lost
    std::optional<double> double_sync_time_s; ///< first time the planet's spin locked to it
    double double_sync_period_s = 0;          ///< the common day and month at that time [s]
    std::optional<double> lock_broken_time_s; ///< when such a lock broke, if it did
    double despin_time_s = 0;                 ///< Gladman et al. (1996) despinning time of the moon
    double initial_spin_period_s = 0;         ///< the moon's initial spin used in despin_time_s
    bool initial_spin_assumed = false;
};

struct tidal_evolution {
    std::string planet_name, star_name;
    int planet_index = -1;
    tide_model model = tide_model::constant_q;
    tidal_parameters planet_tides;
    double moment_of_inertia_factor = 0;
    bool moment_of_inertia_assumed = false;
    double span_s = 0;
    span_rule span_from = span_rule::given;
    double t_end_s = 0;         ///< equals span_s unless the step budget ran out
    bool stopped_early = false; ///< the step budget ran out
    long steps = 0;
    double spin_period0_s = 0, spin_period_end_s = 0;
    double initial_spin_rate_change_rad_s2 = 0; ///< dOmega/dt at the start [rad/s^2]
    double planet_mean_motion_rad_s = 0;        ///< the planet's orbital mean motion [rad/s]
    std::optional<double> star_lock_time_s;     ///< spin became synchronous with the orbit
    std::optional<double> star_lock_broken_time_s;
    std::vector<tidal_moon_result> moons; ///< the planet's direct children, innermost first
    std::vector<tidal_sample> series;
    /// Barnes & O'Brien (2002) maximum mass of a moon that the planet can keep for the span [kg],
    /// empty when it cannot be computed (no star, or a planet with no tidal Q).
    std::optional<double> max_moon_mass_kg;
    double max_moon_mass_f = 0;     ///< the fraction of the Hill radius used in it
    std::vector<std::string> notes; ///< assumptions made (defaults filled in), in plain words
};

/// Constant-Q rate of change of a moon's semi-major axis from the tide it raises on the planet
/// [m/s] (Goldreich & Soter 1966; Murray & Dermott 1999, Sec. 4.9, eq. 4.162, number from
/// memory): da/dt = sign(Omega - n) 3 (k2/Q) (m/M) (R/a)^5 n a. Retrograde moons always decay.
/// `planet_spin` [rad/s], masses [kg], radius and a [m].
double constant_q_da_dt(double k2, double q, double planet_mass, double planet_radius,
                        double planet_spin, double moon_mass, double a, bool retrograde = false);

/// Constant time-lag (Hut 1981, eq. 9, 10, 11) rates from the tide raised on a body of mass M,
/// radius R, time lag tau, spin Omega by a companion of mass m on an orbit (a, e). Hut's k/T is
/// taken as k2 G M tau / R^3 (Love number k2; see docs/tides.md for this normalization). Returns
/// {da/dt [m/s], de/dt [1/s], dOmega/dt [rad/s^2]}; `gyration_factor` is I/(M R^2).
struct hut_rates {
    double da_dt = 0, de_dt = 0, dspin_dt = 0;
};
hut_rates constant_time_lag_rates(double k2, double time_lag_s, double body_mass,
                                  double body_radius, double gyration_factor, double spin,
                                  double companion_mass, double a, double e);

/// Love number of a homogeneous elastic sphere: k2 = (3/2) / (1 + 19 mu / (2 rho g R))
/// (the "effective rigidity" form of Murray & Dermott 1999, Sec. 4.9; Gladman et al. 1996). [1]
double homogeneous_k2(double mass, double radius, double rigidity_pa);

/// Despinning time of a moon from an initial spin rate omega [rad/s] (Gladman et al. 1996,
/// Icarus 122, 166): tau = omega a^6 I Q / (3 G M_p^2 k2 R^5), I = 0.4 m R^2 (uniform). [s]
double despin_time(double spin_rate, double a, double moon_mass, double moon_radius, double moon_k2,
                   double moon_q, double planet_mass);

/// Barnes & O'Brien (2002, ApJ 575, 1087) largest moon that stays for time T, from a moon
/// migrating out from the planet to f times the Hill radius under constant-Q tides:
/// M_max = (2/13) [(f a_p)^3 / (3 M_*)]^(13/6) M_p^(8/3) Q_p / (3 k2p T sqrt(G) R_p^5) [kg].
double max_moon_mass(double f, double a_planet, double star_mass, double planet_mass,
                     double planet_radius, double k2p, double qp, double span_s);

/// Evolves the planet `planet_index` of `sys` (its direct children are the moons) over the
/// span. Throws input_error when the planet has no rotation period or no parent star, or when
/// the time-lag model is asked for and the planet gives no time lag; numerical_error when the
/// state stops being finite.
tidal_evolution evolve_tides(const resolved_system& sys, int planet_index,
                             const tidal_options& opt = {});

} // namespace moonwright
