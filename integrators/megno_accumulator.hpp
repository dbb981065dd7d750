// MEGNO sums accumulated step by step from the length of the tangent vector, with
// renormalisation by powers of two, and the initial deviation vector drawn from a seed.
#pragma once

#include "engine/hierarchy.hpp"
#include "integrators/checkpoint_data.hpp"
#include "integrators/integrator.hpp"

#include <cstdint>

namespace moonwright {

/// Per-body scales of the tangent metric, taken from the state when MEGNO starts:
/// |delta|^2 = sum_(k >= 1) |dq_k|^2 / length_k^2 + |dv_k|^2 / speed_k^2, so every orbit's
/// relative deviation counts alike and positions and velocities are comparable. Any fixed
/// metric gives the same asymptotic MEGNO and Lyapunov exponent; this one keeps a slow outer
/// orbit's velocity deviation from swamping the moons' (common practice, no source).
struct megno_scales {
    std::vector<double> length; ///< [m] |q_k| at the start (3 n coordinates: per body)
    std::vector<double> speed;  ///< [m/s] |v_k| at the start
};

/// The scales of a state q [m], v [m/s] (3 n each, in the coordinates the tangent vector uses);
/// a zero length or speed falls back to 1.
megno_scales megno_scales_of(std::size_t n, const double* q, const double* v);

/// Fills dq, dv (3 n each; entries of body 0 zero) with a random unit vector of the tangent
/// metric, drawn from rng(seed) as 6 (n - 1) standard normals u, normalised: dq_k = length_k
/// u_k, dv_k = speed_k u'_k.
void megno_initial_deviation(std::uint64_t seed, const megno_scales& scales, std::size_t n,
                             double* dq, double* dv);

/// Length of (dq, dv) in the tangent metric (body 0 excluded).
double megno_norm(const megno_scales& scales, std::size_t n, const double* dq, const double* dv);

/// Writes and reads the scales in a checkpoint.
void save_megno_scales(const megno_scales& scales, checkpoint_writer& w);
megno_scales load_megno_scales(checkpoint_reader& r, std::size_t n);

/// Y and <Y> (Cincotta & Simó 2000, A&AS 147, 205) in the discrete form of Goździewski et al.
/// (2001, A&A 378, 569, from memory), written for variable steps: with tau_k = t_k - t0 and
/// l_k = ln |delta_k|,
///     Y_k = (tau_(k-1) / tau_k) Y_(k-1) + 2 (l_k - l_(k-1)),
///     <Y>_k = (tau_(k-1) <Y>_(k-1) + (tau_k - tau_(k-1)) Y_k) / tau_k,
/// i.e. Y = (2 / t) int_0^t (delta' . delta / delta . delta) s ds with the step's increment of
/// ln |delta| (its exact integral) weighted by the step's end time; for equal steps this is
/// their recurrence y(k) = (k - 1)/k y(k - 1) + 2 ln(|delta_k| / |delta_(k-1)|).
class megno_accumulator {
  public:
    /// Starts at time t0 [s] with the initial deviation's length.
    void start(double t0, double norm0) noexcept;
    /// After a step ending at t [s] with deviation length `norm` (same metric). Returns the
    /// power of two e by which the caller must multiply the deviation (ldexp(x, e)); 0 when no
    /// renormalisation is due. Powers of two keep the rescaling exact, so it changes no digit
    /// of the ratios that follow.
    int update(double t, double norm) noexcept;
    [[nodiscard]] megno_reading reading() const noexcept;
    void save(checkpoint_writer& w) const;
    void load(checkpoint_reader& r);

  private:
    double t0_ = 0, tau_prev_ = 0, norm_prev_ = 1, norm0_ = 1;
    double y_ = 0, mean_y_ = 0, log_growth_ = 0;
};

} // namespace moonwright
