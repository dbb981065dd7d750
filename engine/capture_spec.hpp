// What a capture experiment is asked to do: the intruder (one body or a bound pair), how it
// arrives, the capture mechanism and the gas envelope, read from short "key=value" specs.
#pragma once

#include "engine/units.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace moonwright {

/// Which physics a capture experiment switches on.
enum class capture_mechanism { gravity, binary, drag };
/// "gravity", "binary", "drag".
std::string_view capture_mechanism_name(capture_mechanism m);
/// Parses a mechanism name; throws input_error (field --mechanism) for any other word.
capture_mechanism parse_capture_mechanism(std::string_view text);

/// How the intruder (or the pair's centre of mass) arrives.
enum class arrival_kind {
    hyperbolic,  ///< planetocentric speed at infinity and a range of impact parameters
    heliocentric ///< heliocentric elements; left-out angles drawn per trial
};

/// One intruder and its arrival (SI; Hill and planet-radius lengths kept as multiples).
struct intruder_spec {
    double mass_kg = 0;          ///< 0 when a pair gives the masses
    double radius_m = 0;         ///< 0: from density_kg_m3
    double density_kg_m3 = 2000; ///< bulk density used when no radius is given
    arrival_kind arrival = arrival_kind::hyperbolic;
    // Hyperbolic arrival.
    double vinf_m_s = 0;                          ///< planetocentric speed at infinity [m/s]
    quantity range_min{}, range_max{};            ///< impact parameter b (or pericentre q) range
    bool range_is_pericentre = false;             ///< true when the range was given as q=...
    quantity start{3.0, length_ref::parent_hill}; ///< starting distance from the planet
    bool planar =
        false; ///< approach in the planet's orbital plane (both senses) instead of isotropic
    // Heliocentric arrival.
    double a_m = 0, e = 0;
    std::optional<double> i_rad, node_rad, peri_rad, mean_anomaly_rad;
};

/// A bound pair: member 1 and member 2 on a Keplerian orbit of semi-major axis sep_m.
struct pair_spec {
    double m1_kg = 0, m2_kg = 0;
    double r1_m = 0, r2_m = 0; ///< 0: from the intruder's density
    double sep_m = 0;          ///< semi-major axis of the mutual orbit [m]
    double e = 0;              ///< eccentricity of the mutual orbit
};

/// Gas around the planet: rho(r) = rho0 (r / R_p)^-k for R_p <= r <= cutoff, 0 beyond.
struct envelope_spec {
    double rho0_kg_m3 = 0;
    double k = 2;
    quantity cutoff{10.0, length_ref::parent_radii};
    double drag_coefficient = 1; ///< C_D
    bool corotating = false;     ///< gas turns with the planet's rotation period
};

/// Parses `--intruder` text: comma-separated key=value with units, e.g.
/// "mass=1e18 kg, vinf=1 km/s, b=0.1:1 RH" (see docs/capture.md for every key).
/// `label` names the option in messages. Throws input_error on unknown keys, bad values,
/// missing keys or contradictions.
intruder_spec parse_intruder_spec(std::string_view text, const std::string& label = "--intruder");
/// Parses `--pair` text, e.g. "m1=1e18 kg, m2=5e17 kg, sep=200 km, e=0".
pair_spec parse_pair_spec(std::string_view text, const std::string& label = "--pair");
/// Parses `--envelope` text, e.g. "rho0=1e-6 kg/m3, k=2, cutoff=10 Rp, cd=1, gas=static".
envelope_spec parse_envelope_spec(std::string_view text, const std::string& label = "--envelope");

/// Parses a speed "<number> <length>/<time>" (e.g. "1 km/s", "300 m/s"); a bare number is m/s.
/// Throws quantity_error.
double parse_speed(std::string_view text);

} // namespace moonwright
