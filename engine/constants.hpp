// Physical and astronomical constants in SI, each with its published source.
#pragma once

namespace moonwright::constants {

// --- CODATA 2018 recommended values (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010) ---
/// Newtonian constant of gravitation [m^3 kg^-1 s^-2] (CODATA 2018).
inline constexpr double G = 6.67430e-11;

// --- IAU 2012 Resolution B2 ---
/// Astronomical unit [m], a defined constant (IAU 2012 Resolution B2).
inline constexpr double au = 149'597'870'700.0;

// --- IAU 2015 Resolution B3: nominal solar and planetary conversion constants ---
/// Nominal solar mass parameter GM_sun [m^3 s^-2] (IAU 2015 B3).
inline constexpr double GM_sun = 1.3271244e20;
/// Nominal solar radius [m] (IAU 2015 B3).
inline constexpr double R_sun = 6.957e8;
/// Nominal solar luminosity [W] (IAU 2015 B3).
inline constexpr double L_sun = 3.828e26;
/// Nominal terrestrial mass parameter GM_earth [m^3 s^-2] (IAU 2015 B3).
inline constexpr double GM_earth = 3.986004e14;
/// Nominal equatorial Earth radius [m] (IAU 2015 B3).
inline constexpr double R_earth = 6.3781e6;
/// Nominal polar Earth radius [m] (IAU 2015 B3).
inline constexpr double R_earth_polar = 6.3568e6;
/// Nominal jovian mass parameter GM_jup [m^3 s^-2] (IAU 2015 B3).
inline constexpr double GM_jup = 1.2668653e17;
/// Nominal equatorial Jupiter radius [m] (IAU 2015 B3).
inline constexpr double R_jup = 7.1492e7;
/// Nominal polar Jupiter radius [m] (IAU 2015 B3).
inline constexpr double R_jup_polar = 6.6854e7;

// --- Masses derived as GM / G, the way IAU 2015 B3 recommends (they carry G's uncertainty) ---
inline constexpr double M_sun = GM_sun / G;     ///< [kg]
inline constexpr double M_earth = GM_earth / G; ///< [kg]
inline constexpr double M_jup = GM_jup / G;     ///< [kg]

// --- Time (IAU: the SI second, the day of 86400 s, the Julian year of 365.25 days) ---
inline constexpr double day = 86'400.0;      ///< [s]
inline constexpr double hour = 3'600.0;      ///< [s]
inline constexpr double year = 365.25 * day; ///< Julian year [s]
inline constexpr double Myr = 1.0e6 * year;  ///< [s]
inline constexpr double Gyr = 1.0e9 * year;  ///< [s]

/// Standard acceleration of gravity g_n [m s^-2] (3rd CGPM 1901; exact by definition).
inline constexpr double standard_gravity = 9.80665;

inline constexpr double pi = 3.141592653589793238462643383279502884;
inline constexpr double two_pi = 2.0 * pi;
inline constexpr double deg = pi / 180.0; ///< one degree [rad]

} // namespace moonwright::constants
