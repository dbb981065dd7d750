// The run loop: steps, event detection with interpolated event times, samples with envelopes,
// conservation errors, MEGNO, and exact checkpoints.
#include "engine/run_driver.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/constants.hpp"
#include "engine/diagnostics.hpp"
#include "engine/error.hpp"
#include "engine/forces.hpp"
#include "engine/nbody_system.hpp"
#include "engine/orbital_elements.hpp"
#include "engine/simd_clones.hpp"
#include "integrators/wisdom_holman.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <fmt/format.h>
#include <limits>
#include <type_traits>

namespace moonwright {

namespace {

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double checkpoint_tag = 20261203.0; ///< first word of a run checkpoint (layout version)

double norm(const double* u) {
    return std::sqrt(u[0] * u[0] + u[1] * u[1] + u[2] * u[2]);
}

/// Orthonormal frame (rows x, y, z) with z along a parent's orbit normal and x along that
/// orbit's ascending node on the inertial x-y plane (the inertial x axis when equatorial):
/// the frame a design's moon elements are written in (engine/nbody_system.hpp).
struct frame {
    double m[3][3] = {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}};
    void apply(const double* u, double* out) const {
        for (int r = 0; r < 3; ++r) out[r] = m[r][0] * u[0] + m[r][1] * u[1] + m[r][2] * u[2];
    }
};

frame orbit_frame(const double* r, const double* v) {
    double h[3] = {r[1] * v[2] - r[2] * v[1], r[2] * v[0] - r[0] * v[2], r[0] * v[1] - r[1] * v[0]};
    const double hn = norm(h);
    frame f;
    if (!(hn > 0)) return f;
    for (double& c : h) c /= hn;
    double x[3] = {-h[1], h[0], 0.0}; // z_inertial x h: the ascending node
    double xn = norm(x);
    if (xn < 1e-12) {
        x[0] = 1, x[1] = 0, x[2] = 0;
        xn = 1;
    }
    for (double& c : x) c /= xn;
    const double y[3] = {h[1] * x[2] - h[2] * x[1], h[2] * x[0] - h[0] * x[2],
                         h[0] * x[1] - h[1] * x[0]};
    for (int c = 0; c < 3; ++c) f.m[0][c] = x[c], f.m[1][c] = y[c], f.m[2][c] = h[c];
    return f;
}

struct sibling_pair {
    int a, b;
    double mutual_hill; ///< [m]
    double touch;       ///< collision distance [m]
    double close;       ///< close-approach distance [m]
};

/// cos i from the kept c |c| (the envelopes' form of a cosine; non-finite stays non-finite).
double cos_of(double cc) {
    return std::clamp(std::copysign(std::sqrt(std::abs(cc)), cc), -1.0, 1.0);
}

/// A body's envelope over the open interval: envelope_doubles, the smallest values (lanes
/// 0-3) and then the largest (envelope_hi + lanes 0-3) of x = 1/a over bound steps, e^2,
/// c |c| (c = cos i) and a over unbound steps: one step's values update it in two vector
/// operations.
constexpr std::size_t envelope_doubles = 8, envelope_hi = 4;
enum envelope_lane : std::size_t { lane_x = 0, lane_e2 = 1, lane_cc = 2, lane_unbound_a = 3 };

/// Angles [rad] from kept values c |c| of their cosines, one per body from the envelopes'
/// lane `at` (NaN for non-finite entries).
std::vector<double> angles_of(const std::vector<double>& env, std::size_t at) {
    std::vector<double> out(env.size() / envelope_doubles);
    for (std::size_t k = 0; k < out.size(); ++k) {
        const double cc = env[envelope_doubles * k + at];
        out[k] = std::isfinite(cc) ? std::acos(cos_of(cc)) : std::nan("");
    }
    return out;
}

/// Square roots of kept squares, one per body from the envelopes' lane `at` (NaN for
/// non-finite entries).
std::vector<double> roots_of(const std::vector<double>& env, std::size_t at) {
    std::vector<double> out(env.size() / envelope_doubles);
    for (std::size_t k = 0; k < out.size(); ++k) {
        const double e2 = env[envelope_doubles * k + at];
        out[k] = std::isfinite(e2) ? std::sqrt(e2) : std::nan("");
    }
    return out;
}

/// Linear interpolation of the time at which a distance crossed a threshold between checks.
double crossing_time(double t0, double d0, double t1, double d1, double threshold) {
    if (!std::isfinite(d0)) return t0; // no earlier check: it was already across at the start
    if (!(d0 != d1)) return t1;
    const double f = std::clamp((d0 - threshold) / (d0 - d1), 0.0, 1.0);
    return t0 + f * (t1 - t0);
}

/// Four doubles in one vector (GCC vector extensions). Every operation is the same IEEE
/// operation in each lane, so the AVX2 and baseline clones give the same bits, and the same
/// bits as the scalar expressions written out lane by lane.
/// The helpers below are always inlined into their cloned callers, so GCC's note on passing
/// such vectors by value (the baseline ABI passes them in memory) does not apply. GCC gives
/// it at the end of the file, so it is turned off for the file.
#pragma GCC diagnostic ignored "-Wpsabi"
using lanes4 = double __attribute__((vector_size(32)));
using lane_index4 = long long __attribute__((vector_size(32)));
using lane_mask4 = decltype(lanes4{} < lanes4{}); ///< a comparison's lanes: all bits or none

MOONWRIGHT_LANES_INLINE lanes4 load4(const double* p) {
    lanes4 u;
    std::memcpy(&u, p, sizeof u);
    return u;
}
MOONWRIGHT_LANES_INLINE void store4(double* p, lanes4 u) {
    std::memcpy(p, &u, sizeof u);
}

/// The smaller of kept and v in each lane (std::min(kept, v)): a NaN in v leaves kept.
MOONWRIGHT_LANES_INLINE lanes4 keep_min(lanes4 kept, lanes4 v) {
    return v < kept ? v : kept;
}
/// The larger of kept and v in each lane (std::max(kept, v)): a NaN in v leaves kept.
MOONWRIGHT_LANES_INLINE lanes4 keep_max(lanes4 kept, lanes4 v) {
    return kept < v ? v : kept;
}

/// The lane helpers of orbit_measures, for one value (double) and four (lanes4).
MOONWRIGHT_LANES_INLINE double pick(bool m, double a, double b) {
    return m ? a : b;
}
MOONWRIGHT_LANES_INLINE lanes4 pick(lane_mask4 m, lanes4 a, lanes4 b) {
    return m ? a : b;
}
MOONWRIGHT_LANES_INLINE double root(double u) {
    return std::sqrt(u);
}
MOONWRIGHT_LANES_INLINE lanes4 root(lanes4 u) {
    return lanes4{std::sqrt(u[0]), std::sqrt(u[1]), std::sqrt(u[2]), std::sqrt(u[3])};
}
MOONWRIGHT_LANES_INLINE double magnitude(double u) {
    return std::abs(u);
}
MOONWRIGHT_LANES_INLINE lanes4 magnitude(lanes4 u) { // the sign bit cleared, as std::abs
    constexpr long long bits = 0x7fffffffffffffffLL;
    return reinterpret_cast<lanes4>(reinterpret_cast<lane_index4>(u) & bits);
}

/// What the envelopes keep of one orbit at one step (T = double), or at four steps of one
/// orbit (T = lanes4, one step per lane): x = 1/a over bound steps (NaN otherwise), e^2,
/// c |c| with c = cos i, and a over unbound steps (NaN otherwise).
template <class T>
struct orbit_measures {
    T x, e2, cc, unbound_a;
};

/// The measures of a Jacobi orbit from its position r [m] and velocity w [m/s] about
/// GM = 1 / inv_gm, with z the parent's orbit normal: x = 1/a = 2/r - v^2/GM (vis-viva),
/// e^2 = (1 - r x)^2 + (r.v)^2 x / GM (e cos E = 1 - r/a and e sin E = r.v / sqrt(GM a) for
/// an ellipse; the same sum is e^2 = 1 - h^2 x / GM for any orbit, without its cancellation at
/// small e) and c |c| with c = z . h / |h|, h = r x v (Murray & Dermott, Solar System
/// Dynamics, ch. 2). 1/r is r / r^2, so the square root and the division run side by side.
/// One expression for one lane and for four: the same bits in each.
template <class T>
MOONWRIGHT_LANES_INLINE orbit_measures<T> measure_orbit(T rx, T ry, T rz, T wx, T wy, T wz,
                                                        const double* z, double inv_gm) {
    constexpr double nan = std::numeric_limits<double>::quiet_NaN();
    const T one = T{} + 1.0, nans = T{} + nan;
    const T hx = ry * wz - rz * wy, hy = rz * wx - rx * wz, hz = rx * wy - ry * wx;
    const T r2 = (rx * rx + ry * ry) + rz * rz, v2 = (wx * wx + wy * wy) + wz * wz;
    const T rv = (rx * wx + ry * wy) + rz * wz, h2 = (hx * hx + hy * hy) + hz * hz;
    const T zh = (z[0] * hx + z[1] * hy) + z[2] * hz;
    const T dist = root(r2), inv_r2 = 1.0 / r2;
    const T x = 2.0 * (dist * inv_r2) - v2 * inv_gm;
    const T e_cos = dist * v2 * inv_gm - 1.0; // 1 - r x
    const T e2 = e_cos * e_cos + rv * rv * x * inv_gm;
    const T cc = pick(h2 > 0, zh * magnitude(zh) / h2, one);
    return {pick(x > 0, x, nans), e2, cc, pick(x > 0, nans, 1.0 / x)};
}

/// Folds one step's measures of Jacobi orbits 1..n-1 into the envelopes (envelope_doubles per
/// original index in env; see measure_orbit). Velocities are vj + kick_step kick_acc when
/// kick_acc is set (the map's pending half kick). Returns the sum of v^2 (non-finite when a
/// velocity is). The comparisons with an envelope take one vector operation each for the
/// smallest and the largest values; a NaN measure leaves its lane. Every step but the plain
/// map's ordinary ones comes here (update_envelopes); those go through fold_kept_steps.
double fold_envelopes(std::size_t n, const int* orig, const double* rjp, const double* vjp,
                      double kick_step, const double* kick_acc, const double* inv_gms,
                      const double* zs, double* env) {
    double speeds = 0;
    for (std::size_t k = 1; k < n; ++k) {
        const double* r = &rjp[3 * k];
        double w[3] = {vjp[3 * k], vjp[3 * k + 1], vjp[3 * k + 2]};
        if (kick_acc)
            for (std::size_t c = 0; c < 3; ++c) w[c] = w[c] + kick_step * kick_acc[3 * k + c];
        const orbit_measures<double> m =
            measure_orbit(r[0], r[1], r[2], w[0], w[1], w[2], &zs[3 * k], inv_gms[k]);
        speeds += (w[0] * w[0] + w[1] * w[1]) + w[2] * w[2];
        const lanes4 values = {m.x, m.e2, m.cc, m.unbound_a};
        double* box = &env[envelope_doubles * static_cast<std::size_t>(orig[k])];
        const lanes4 lo = load4(box), hi = load4(box + envelope_hi);
        store4(box, keep_min(lo, values));
        store4(box + envelope_hi, keep_max(hi, values));
    }
    return speeds;
}

/// p[-1], p[0], p[1], p[2]: a 3-vector at p in lanes 1-3 with one load that stays inside the
/// array for any vector but the first (lane 0 holds the previous value and is never used).
MOONWRIGHT_LANES_INLINE lanes4 load_after(const double* p) {
    lanes4 u;
    std::memcpy(&u, p - 1, sizeof u);
    return u;
}

/// Lanes 1-3 of four vectors u[0..3] (3-vectors as load_after gives them) turned into x, y
/// and z of the four (structure of arrays).
MOONWRIGHT_LANES_INLINE void transpose_xyz(const lanes4* u, lanes4& x, lanes4& y, lanes4& z) {
    const lanes4 xz01 = __builtin_shuffle(u[0], u[1], lane_index4{1, 5, 3, 7}); // x0 x1 z0 z1
    const lanes4 xz23 = __builtin_shuffle(u[2], u[3], lane_index4{1, 5, 3, 7});
    const lanes4 y01 = __builtin_shuffle(u[0], u[1], lane_index4{0, 4, 2, 6}); // .. .. y0 y1
    const lanes4 y23 = __builtin_shuffle(u[2], u[3], lane_index4{0, 4, 2, 6});
    x = __builtin_shuffle(xz01, xz23, lane_index4{0, 1, 4, 5});
    y = __builtin_shuffle(y01, y23, lane_index4{2, 3, 6, 7});
    z = __builtin_shuffle(xz01, xz23, lane_index4{2, 3, 6, 7});
}

/// Four vectors a, b, c, d as rows, turned into columns: out[j] = (a[j], b[j], c[j], d[j]).
MOONWRIGHT_LANES_INLINE void transpose4(lanes4 a, lanes4 b, lanes4 c, lanes4 d, lanes4* out) {
    const lanes4 ab_even = __builtin_shuffle(a, b, lane_index4{0, 4, 2, 6}); // a0 b0 a2 b2
    const lanes4 ab_odd = __builtin_shuffle(a, b, lane_index4{1, 5, 3, 7});  // a1 b1 a3 b3
    const lanes4 cd_even = __builtin_shuffle(c, d, lane_index4{0, 4, 2, 6});
    const lanes4 cd_odd = __builtin_shuffle(c, d, lane_index4{1, 5, 3, 7});
    out[0] = __builtin_shuffle(ab_even, cd_even, lane_index4{0, 1, 4, 5});
    out[1] = __builtin_shuffle(ab_odd, cd_odd, lane_index4{0, 1, 4, 5});
    out[2] = __builtin_shuffle(ab_even, cd_even, lane_index4{2, 3, 6, 7});
    out[3] = __builtin_shuffle(ab_odd, cd_odd, lane_index4{2, 3, 6, 7});
}

/// Steps the plain map's ordinary steps keep before folding them (fold_batch, a multiple of
/// 4): for each step of one orbit, fold_stride doubles: its position in lanes 1-3 of a
/// vector as load_after gives it, then its velocity likewise.
constexpr std::size_t fold_batch = 16, fold_stride = 8;

/// Folds `count` (1..fold_batch) kept steps of one orbit (as above) into its envelope box,
/// four steps per vector: the same measures as fold_envelopes gives step by step, and the
/// same envelope (the smallest and largest of a set do not depend on the order they come in,
/// but for the sign of a zero). Steps past count up to a multiple of 4 repeat the last one.
MOONWRIGHT_LANES_INLINE void fold_kept_steps(double* kept, std::size_t count, const double* z,
                                             double inv_gm, double* box) {
    for (std::size_t s = count; s % 4 != 0; ++s)
        std::memcpy(&kept[fold_stride * s], &kept[fold_stride * (count - 1)],
                    fold_stride * sizeof(double));
    lanes4 lo_x = lanes4{} + inf, lo_e2 = lo_x, lo_cc = lo_x, lo_a = lo_x;
    lanes4 hi_x = lanes4{} - inf, hi_e2 = hi_x, hi_cc = hi_x, hi_a = hi_x;
    for (std::size_t s = 0; s < count; s += 4) {
        const double* at = &kept[fold_stride * s];
        const lanes4 r[4] = {load4(at), load4(at + fold_stride), load4(at + 2 * fold_stride),
                             load4(at + 3 * fold_stride)};
        at += 4;
        const lanes4 w[4] = {load4(at), load4(at + fold_stride), load4(at + 2 * fold_stride),
                             load4(at + 3 * fold_stride)};
        lanes4 rx, ry, rz, wx, wy, wz;
        transpose_xyz(r, rx, ry, rz);
        transpose_xyz(w, wx, wy, wz);
        const orbit_measures<lanes4> m = measure_orbit(rx, ry, rz, wx, wy, wz, z, inv_gm);
        lo_x = keep_min(lo_x, m.x), lo_e2 = keep_min(lo_e2, m.e2), lo_cc = keep_min(lo_cc, m.cc),
        lo_a = keep_min(lo_a, m.unbound_a);
        hi_x = keep_max(hi_x, m.x), hi_e2 = keep_max(hi_e2, m.e2), hi_cc = keep_max(hi_cc, m.cc),
        hi_a = keep_max(hi_a, m.unbound_a);
    }
    // Transposed, each vector holds one lane's (x, e^2, c |c|, unbound a): one vector
    // comparison per lane and side against the box.
    lanes4 t[4];
    transpose4(lo_x, lo_e2, lo_cc, lo_a, t);
    store4(box, keep_min(keep_min(keep_min(keep_min(load4(box), t[0]), t[1]), t[2]), t[3]));
    transpose4(hi_x, hi_e2, hi_cc, hi_a, t);
    double* top = box + envelope_hi;
    store4(top, keep_max(keep_max(keep_max(keep_max(load4(top), t[0]), t[1]), t[2]), t[3]));
}

/// Puts and takes doubles in order (checkpoints).
struct packer {
    std::vector<double> out;
    void put(double x) { out.push_back(x); }
    void put(const std::vector<double>& xs) {
        out.push_back(static_cast<double>(xs.size()));
        out.insert(out.end(), xs.begin(), xs.end());
    }
};
struct unpacker {
    const std::vector<double>& in;
    std::size_t at = 0;
    double get() {
        if (at >= in.size())
            throw input_error(source_location{"<checkpoint>"}, "the run checkpoint is cut short");
        return in[at++];
    }
    std::vector<double> get_vector() {
        const auto n = static_cast<std::size_t>(get());
        if (at + n > in.size())
            throw input_error(source_location{"<checkpoint>"}, "the run checkpoint is cut short");
        std::vector<double> xs(in.begin() + static_cast<std::ptrdiff_t>(at),
                               in.begin() + static_cast<std::ptrdiff_t>(at + n));
        at += n;
        return xs;
    }
};

} // namespace

struct run_driver::impl {
    // The current model: the bodies still in the run ("active"), renumbered 0..n-1.
    std::vector<int> orig;           ///< active index -> index in the resolved design
    std::vector<resolved_body> info; ///< physical data of the active bodies
    nbody_system sys;
    std::unique_ptr<integrator> integ;
    wisdom_holman* wh = nullptr; ///< the same integrator when it is the Wisdom–Holman map
    bool wh_plain = false;       ///< wh without corrector: its Jacobi state is the real one
    std::string active_name;     ///< the integrator now in use
    jacobi_tree tree;
    std::vector<double> inv_kepler_gm; ///< 1 / tree.kepler_gm(k) [s^2 m^-3]
    std::vector<double> z_axes; ///< by active index, 3 each: the parent's orbit normal (frames)
    std::size_t n = 0;
    std::vector<double> q, v, rj, vj;
    std::vector<sibling_pair> siblings;      ///< active sibling pairs (active indices)
    std::vector<std::size_t> sibling_record; ///< index into pairs_ of each active sibling pair
    std::vector<std::size_t> parent_record;  ///< index into pairs_ of each body-parent pair
    std::vector<double> touch_parent;        ///< impact distance body-parent [m]
    std::vector<double> roche;               ///< parent's fluid Roche limit for the body [m]
    std::vector<double> escape;              ///< escape distance [m] (planets: see run_options)
    /// Squared distances at the previous check (sibling pairs; bodies to parents, by active
    /// index): squares, so the per-step checks take no square root.
    std::vector<double> prev_sibling_d2, prev_parent_d2;
    /// The per-step checks' quick test: a squared distance above *_lo2 (and below parent_hi2)
    /// can change no record and fire no event, so only the squares are compared; anything else
    /// takes the exact test in distances. Refreshed by refresh_bounds().
    std::vector<double> sibling_lo2, parent_lo2, parent_hi2;
    std::vector<char> close_armed;            ///< a close approach fires once per entry
    std::vector<double> rebuild_x, rebuild_v; ///< inertial state the current model was built from
    double rebuild_t = 0;
    int changes = 0; ///< topology changes and integrator switches so far
    double step_s = 0;

    // Fixed for the run, by original index.
    std::size_t n0 = 0;
    std::vector<frame> frames; ///< the parent's orbit frame at the start
    double prev_t = 0;
    double energy0 = 0, momentum0 = 0;
    double max_energy_error = 0, max_momentum_error = 0;
    // Envelopes since the last sample (updated every step) and over the whole run (folded in
    // from the interval's when it closes: run_e_max() etc. include the open interval).
    // Every step is cheap: e is kept as e^2 and i as c |c| with c = cos i (both monotonic),
    // so the per-step work has one square root and no acos; they are turned into e and
    // angles only at samples. The plain map's ordinary steps are kept and folded four steps
    // to a vector (fold_kept).
    /// a is kept as x = 1/a = 2/r - v^2/GM over bound steps (x > 0) and
    /// as a over the others (unbound: rare). As 1/x rounds monotonically, 1 / max x is exactly
    /// the smallest a the steps gave, and 1 / min x the largest (interval_a_lo/hi).
    /// envelope_doubles per original index (see envelope_lane): 1/a [1/m], e^2, c |c| with
    /// c = cos i, a [m]; the smallest, then the largest. The accessors below name them.
    std::vector<double> env;
    [[nodiscard]] double env_lo(std::size_t k, envelope_lane l) const {
        return env[envelope_doubles * k + l];
    }
    [[nodiscard]] double env_hi(std::size_t k, envelope_lane l) const {
        return env[envelope_doubles * k + envelope_hi + l];
    }
    std::vector<double> e_initial, a_initial, e_top, a_bottom, a_top, ci_bottom; ///< e; cos i
    std::vector<double> el_a, el_e, el_i, el_node, el_peri, el_m; ///< elements at the last check
    std::size_t next_sample = 1;
    double t0 = 0;
    bool megno_on = false;
    int reference = -1;
    double reference_period = 0;
    /// ordinary_steps' squared distances of one step (swapped with prev_*_d2).
    std::vector<double> scratch_sibling_d2, scratch_parent_d2;
    /// ordinary_steps' kept steps, folded into the envelopes fold_batch at a time and before
    /// it returns (fold_kept_steps): by active index, fold_batch steps of fold_stride doubles.
    std::vector<double> kept_steps;
    std::size_t kept_count = 0;
    bool q_stale = false;       ///< q lags the integrator: the positions are at qp (see read_state)
    bool v_stale = false;       ///< v lags the integrator (see read_state)
    const double* qp = nullptr; ///< the current parent-relative positions (q or the map's own)

    /// Reads the integrator's state into q and v. With positions_only (the plain Wisdom–Holman
    /// map, every step) q and v are left stale until ensure_state(): the per-step checks read
    /// the map's own positions (qp), the envelopes its Jacobi coordinates, and copying or
    /// converting them every step showed in the run's profile. The map is only read, never
    /// moved (wisdom_holman::observe), so the run's trajectory is bitwise that of a bare loop
    /// of steps. The per-step checks then test that the state is finite.
    void read_state(bool positions_only = false) {
        if (positions_only && wh && wh_plain) {
            qp = wh->observe().data();
            q_stale = v_stale = true;
            return;
        }
        integ->relative_state(q, v);
        qp = q.data();
        q_stale = v_stale = false;
        double sum_q = 0, sum_v = 0; // a non-finite component makes its sum non-finite
        for (double x : v) sum_v += x;
        for (double x : q) sum_q += x;
        if (!std::isfinite(sum_q)) throw numerical_error("non-finite position");
        if (!std::isfinite(sum_v)) throw numerical_error("non-finite velocity");
    }
    /// Brings q and v up to date after read_state(true).
    void ensure_state() {
        if (q_stale) {
            std::copy(qp, qp + 3 * n, q.begin());
            qp = q.data();
            q_stale = false;
        }
        if (v_stale) {
            wh->synchronized_jacobi_velocities(vj.data());
            tree.jacobi_to_relative(vj.data(), v.data());
            v_stale = false;
        }
    }

    /// a, e and i of every active body's Jacobi orbit (i against its parent's starting orbit
    /// plane), every step, into the envelopes (fold_envelopes). Returns the sum of the squared
    /// Jacobi speeds: non-finite when a velocity is. The plain Wisdom–Holman map holds Jacobi
    /// coordinates already (after observe()), and its velocities are synchronized as they are
    /// read, one orbit at a time, by its pending half kick (so a step writes no velocity array).
    double update_envelopes() {
        if (wh && wh_plain) {
            const wisdom_holman::half_kick kick = wh->pending_half_kick();
            return fold_envelopes(n, orig.data(), wh->jacobi_positions().data(),
                                  wh->jacobi_velocities().data(), kick.step, kick.acceleration,
                                  inv_kepler_gm.data(), z_axes.data(), env.data());
        }
        tree.relative_to_jacobi(q.data(), rj.data());
        tree.relative_to_jacobi(v.data(), vj.data());
        return fold_envelopes(n, orig.data(), rj.data(), vj.data(), 0.0, nullptr,
                              inv_kepler_gm.data(), z_axes.data(), env.data());
    }

    /// Folds the steps ordinary_steps kept into the envelopes. Inlined, so ordinary_steps'
    /// AVX2 clone has it in AVX2 (the same bits as the baseline's).
    MOONWRIGHT_LANES_INLINE void fold_kept() {
        if (kept_count == 0) return;
        for (std::size_t k = 1; k < n; ++k)
            fold_kept_steps(&kept_steps[fold_stride * fold_batch * k], kept_count, &z_axes[3 * k],
                            inv_kepler_gm[k],
                            &env[envelope_doubles * static_cast<std::size_t>(orig[k])]);
        kept_count = 0;
    }
    /// fold_kept() on the way out of ordinary_steps, compiled for AVX2 and the baseline.
    void fold_rest_kept();

    /// Takes whole steps of the plain Wisdom–Holman map while each is ordinary: before the
    /// sample threshold and the end threshold, every distance passing the quick test and every
    /// value finite. An ordinary step's checks are done here exactly as advance() would do them
    /// (previous distances, the envelopes, prev_t), with the loop's invariants held in
    /// registers. Returns true when it took a step that is not ordinary, unchecked, for
    /// advance() to check in full; false when it took none that needs checking (a stop was
    /// asked for, or the next whole step would pass whole_limit).
    bool ordinary_steps(const std::atomic<bool>* stop, double whole_limit, double sample_at,
                        double end_at);

    /// The smallest and largest a of the open interval (infinite when no step filled it).
    [[nodiscard]] double interval_a_lo(std::size_t k) const {
        const double x_hi = env_hi(k, lane_x);
        return std::min(x_hi > 0 ? 1.0 / x_hi : inf, env_lo(k, lane_unbound_a));
    }
    [[nodiscard]] double interval_a_hi(std::size_t k) const {
        const double x_lo = env_lo(k, lane_x);
        return std::max(x_lo < inf ? 1.0 / x_lo : -inf, env_hi(k, lane_unbound_a));
    }

    // The whole run's extremes including the open interval, by original index.
    [[nodiscard]] double run_e_max(std::size_t k) const {
        const double e2 = env_hi(k, lane_e2);
        return e2 >= 0 ? std::max(e_top[k], std::sqrt(e2)) : e_top[k];
    }
    [[nodiscard]] double run_a_min(std::size_t k) const {
        const double lo = interval_a_lo(k);
        return std::isfinite(lo) ? std::min(a_bottom[k], lo) : a_bottom[k];
    }
    [[nodiscard]] double run_a_max(std::size_t k) const {
        const double hi = interval_a_hi(k);
        return std::isfinite(hi) ? std::max(a_top[k], hi) : a_top[k];
    }
    [[nodiscard]] double run_cos_i_min(std::size_t k) const {
        const double cc = env_lo(k, lane_cc);
        return std::isfinite(cc) ? std::min(ci_bottom[k], cos_of(cc)) : ci_bottom[k];
    }

    /// Full osculating elements of every active body relative to its parent subsystem, in its
    /// parent's starting orbit frame (at samples), by original index.
    void update_elements() {
        tree.relative_to_jacobi(q.data(), rj.data());
        tree.relative_to_jacobi(v.data(), vj.data());
        for (std::size_t k = 1; k < n; ++k) {
            const auto o = static_cast<std::size_t>(orig[k]);
            cartesian_state s;
            frames[o].apply(&rj[3 * k], s.r.data());
            frames[o].apply(&vj[3 * k], s.v.data());
            const orbital_elements el = cartesian_to_elements(tree.kepler_gm(k), s);
            el_a[o] = semi_major_axis(el), el_e[o] = el.e, el_i[o] = el.i, el_node[o] = el.node,
            el_peri[o] = el.peri;
            el_m[o] = el.e < 1 ? mean_anomaly(el.e, el.nu) : std::nan("");
        }
    }

    /// Closes the interval: folds its envelopes into the whole run's, then empties them.
    void reset_envelopes() {
        for (std::size_t k = 0; k < n0; ++k) {
            e_top[k] = run_e_max(k), a_bottom[k] = run_a_min(k), a_top[k] = run_a_max(k),
            ci_bottom[k] = run_cos_i_min(k);
            std::fill_n(&env[envelope_doubles * k], envelope_hi, inf);
            std::fill_n(&env[envelope_doubles * k + envelope_hi], envelope_hi, -inf);
        }
    }

    double energy_error() const {
        return relative_error(total_energy(integ->forces(), q.data(), v.data()), energy0);
    }
    double momentum_error() const {
        const vec3 l = angular_momentum(tree, q.data(), v.data());
        return std::abs(std::sqrt(l[0] * l[0] + l[1] * l[1] + l[2] * l[2]) - momentum0) / momentum0;
    }
    void reset_conservation_reference() {
        energy0 = total_energy(integ->forces(), q.data(), v.data());
        const vec3 l = angular_momentum(tree, q.data(), v.data());
        momentum0 = std::sqrt(l[0] * l[0] + l[1] * l[1] + l[2] * l[2]);
    }

    static double body_size(const resolved_body& b) {
        return b.semi_axes_m ? (*b.semi_axes_m)[0] : b.radius_m;
    }

    /// (Re)builds the integrator and every threshold for the active bodies from `model`.
    void build(nbody_system model, const std::string& name, const run_options& options,
               const std::vector<pair_record>& pairs, const resolved_system& design) {
        rebuild_x = model.x_, rebuild_v = model.v_, rebuild_t = model.t_;
        sys = std::move(model);
        tree = sys.tree();
        n = sys.size();
        inv_kepler_gm.assign(n, 0.0);
        for (std::size_t k = 1; k < n; ++k) inv_kepler_gm[k] = 1.0 / tree.kepler_gm(k);
        z_axes.assign(3 * n, 0.0);
        for (std::size_t k = 1; k < n; ++k)
            for (std::size_t c = 0; c < 3; ++c)
                z_axes[3 * k + c] = frames[static_cast<std::size_t>(orig[k])].m[2][c];
        active_name = name;
        integ = make_integrator(name, sys, {}, options.integration);
        wh = dynamic_cast<wisdom_holman*>(integ.get());
        wh_plain = wh != nullptr && options.integration.corrector_order == 0;
        q.resize(3 * n), v.resize(3 * n), rj.resize(3 * n), vj.resize(3 * n);
        kept_steps.assign(fold_stride * fold_batch * n, 0.0), kept_count = 0;
        read_state();
        step_s = wh ? wh->step_size()
                    : (options.integration.step > 0
                           ? options.integration.step
                           : wh_automatic_step(tree, q.data(), v.data(),
                                               options.integration.period_fraction,
                                               options.integration.pericentre_fraction));
        touch_parent.assign(n, 0), roche.assign(n, 0), escape.assign(n, inf);
        parent_record.assign(n, 0);
        for (std::size_t k = 1; k < n; ++k) {
            const auto p = static_cast<std::size_t>(tree.parent(k));
            const resolved_body& body = info[k];
            const resolved_body& parent = info[p];
            touch_parent[k] = parent.radius_m + body_size(body);
            // Fluid Roche limit for moons of 200 km radius or more, rigid below: the same rule
            // as the tidal model (engine/tidal_evolution.hpp, common practice, no source).
            if (parent.density_kg_m3 > 0 && body.density_kg_m3 > 0)
                roche[k] = body.radius_m >= 200e3
                               ? roche_limit_fluid(parent.radius_m, parent.density_kg_m3,
                                                   body.density_kg_m3)
                               : roche_limit_rigid(parent.radius_m, parent.density_kg_m3,
                                                   body.density_kg_m3);
            const resolved_body& parent0 = design.bodies[static_cast<std::size_t>(orig[p])];
            const resolved_body& body0 = design.bodies[static_cast<std::size_t>(orig[k])];
            if (p > 0 && parent0.orbit) {
                const auto gp = static_cast<std::size_t>(parent0.parent);
                escape[k] =
                    options.escape_hill * hill_radius(parent0.orbit->a_m, parent0.orbit->e,
                                                      parent.mass_kg, design.bodies[gp].mass_kg);
            } else if (body0.orbit) {
                escape[k] = options.escape_hill * body0.orbit->a_m * (1 + body0.orbit->e);
            }
            for (std::size_t r = 0; r < pairs.size(); ++r)
                if (pairs[r].a == orig[k] &&
                    pairs[r].b == design.bodies[static_cast<std::size_t>(orig[k])].parent &&
                    pairs[r].mutual_hill_m == 0)
                    parent_record[k] = r;
        }
        siblings.clear(), sibling_record.clear();
        for (std::size_t p = 0; p < n; ++p) {
            const auto& kids = tree.children(p);
            for (std::size_t x = 0; x < kids.size(); ++x)
                for (std::size_t y = x + 1; y < kids.size(); ++y) {
                    const auto a = static_cast<std::size_t>(kids[x]),
                               b = static_cast<std::size_t>(kids[y]);
                    const int oa = orig[a], ob = orig[b];
                    std::size_t rec = pairs.size();
                    for (std::size_t r = 0; r < pairs.size(); ++r)
                        if (pairs[r].mutual_hill_m > 0 && ((pairs[r].a == oa && pairs[r].b == ob) ||
                                                           (pairs[r].a == ob && pairs[r].b == oa)))
                            rec = r;
                    const double rh = rec < pairs.size() ? pairs[rec].mutual_hill_m : 0.0;
                    siblings.push_back({kids[x], kids[y], rh,
                                        body_size(info[a]) + body_size(info[b]),
                                        options.close_approach_hill * rh});
                    sibling_record.push_back(rec);
                }
        }
        prev_sibling_d2.assign(siblings.size(), std::nan(""));
        prev_parent_d2.assign(n, std::nan(""));
        close_armed.assign(siblings.size(), 1);
        refresh_bounds(pairs, options.continue_after_event);
    }

    /// The quick test's bounds from the current records and thresholds. The margin 1e-12 keeps
    /// the squares' rounding from hiding a distance the exact test would catch.
    void refresh_sibling_bound(std::size_t s, const std::vector<pair_record>& pairs,
                               bool every_step) {
        const sibling_pair& sp = siblings[s];
        double lo = std::max(sp.touch, sp.close);
        if (sibling_record[s] < pairs.size())
            lo = std::max(lo, pairs[sibling_record[s]].min_distance_m);
        // A disarmed close approach re-arms beyond 2 thresholds, and continuing after events
        // needs every pair's distance (switch_integrator): the exact test every step.
        if (!close_armed[s] || every_step) lo = inf;
        lo *= 1 + 1e-12;
        sibling_lo2[s] = lo * lo;
    }
    void refresh_parent_bound(std::size_t k, const std::vector<pair_record>& pairs) {
        const double lo =
            std::max({pairs[parent_record[k]].min_distance_m, touch_parent[k], roche[k]}) *
            (1 + 1e-12);
        const double hi = escape[k] * (1 - 1e-12);
        parent_lo2[k] = lo * lo;
        parent_hi2[k] = hi * hi;
    }
    void refresh_bounds(const std::vector<pair_record>& pairs, bool every_step) {
        sibling_lo2.assign(siblings.size(), inf);
        parent_lo2.assign(n, inf), parent_hi2.assign(n, inf);
        for (std::size_t s = 0; s < siblings.size(); ++s)
            refresh_sibling_bound(s, pairs, every_step);
        for (std::size_t k = 1; k < n; ++k) refresh_parent_bound(k, pairs);
    }

    /// The run-state vectors a checkpoint holds, in its order: save_checkpoint() and
    /// load_checkpoint() share this one list (pointers to const for a const impl).
    template <class Self>
    static auto checkpoint_vectors(Self& m) {
        using vec = std::conditional_t<std::is_const_v<Self>, const std::vector<double>,
                                       std::vector<double>>;
        return std::array<vec*, 13>{
            &m.prev_sibling_d2, &m.prev_parent_d2, &m.env,  &m.e_top, &m.a_bottom,
            &m.a_top,           &m.ci_bottom,      &m.el_a, &m.el_e,  &m.el_i,
            &m.el_node,         &m.el_peri,        &m.el_m};
    }

    /// The current inertial state of the active bodies.
    void inertial_state(std::vector<double>& x, std::vector<double>& w) const {
        x.assign(3 * n, 0.0), w.assign(3 * n, 0.0);
        tree.relative_to_inertial(q.data(), x.data());
        tree.relative_to_inertial(v.data(), w.data());
    }
};

MOONWRIGHT_CLONES
void run_driver::impl::fold_rest_kept() {
    fold_kept();
}

/// impl::ordinary_steps, compiled for AVX2 and the baseline (engine/simd_clones.hpp) with the
/// envelope fold inlined: it runs every step.
MOONWRIGHT_CLONES
bool run_driver::impl::ordinary_steps(const std::atomic<bool>* stop, double whole_limit,
                                      double sample_at, double end_at) {
    const double dt = wh->step_size(), check_at = std::min(sample_at, end_at);
    const std::size_t ns = siblings.size();
    const sibling_pair* sib = siblings.data();
    const double* s_lo2 = sibling_lo2.data();
    const double *p_lo2 = parent_lo2.data(), *p_hi2 = parent_hi2.data();
    // The step's squared distances go to the other buffer of each pair; a step that
    // passes every test makes them the previous ones by swapping the pointers, and the
    // vectors are swapped to match on the way out.
    scratch_sibling_d2 = prev_sibling_d2, scratch_parent_d2 = prev_parent_d2;
    double *s_prev = prev_sibling_d2.data(), *p_prev = prev_parent_d2.data();
    double *s_next = scratch_sibling_d2.data(), *p_next = scratch_parent_d2.data();
    bool swapped = false;
    const auto leave = [&](bool check) {
        fold_rest_kept();
        if (swapped)
            prev_sibling_d2.swap(scratch_sibling_d2), prev_parent_d2.swap(scratch_parent_d2);
        return check;
    };
    double t = wh->time();
    for (;;) {
        if (stop && stop->load(std::memory_order_relaxed)) return leave(false);
        if (!(t + dt <= whole_limit)) return leave(false);
        wh->step();
        const double* qs = wh->observe().data();
        qp = qs, q_stale = v_stale = true; // as read_state(true) leaves them
        t = wh->time();
        if (t >= check_at) return leave(true);
        // The quick tests, all before any previous distance changes: a step that fails one
        // is advance()'s to check from the start. A NaN fails every comparison.
        bool quiet = true;
        double sum = 0;
        for (std::size_t s = 0; s < ns; ++s) {
            const auto a = static_cast<std::size_t>(sib[s].a),
                       b = static_cast<std::size_t>(sib[s].b);
            const double dx = qs[3 * a] - qs[3 * b], dy = qs[3 * a + 1] - qs[3 * b + 1],
                         dz = qs[3 * a + 2] - qs[3 * b + 2];
            const double r2 = dx * dx + dy * dy + dz * dz;
            s_next[s] = r2, sum += r2;
            quiet &= r2 > s_lo2[s];
        }
        for (std::size_t k = 1; k < n; ++k) {
            const double* qk = &qs[3 * k];
            const double r2 = qk[0] * qk[0] + qk[1] * qk[1] + qk[2] * qk[2];
            p_next[k] = r2, sum += r2;
            quiet &= (r2 > p_lo2[k]) & (r2 < p_hi2[k]);
        }
        if (!quiet || !std::isfinite(sum)) return leave(true);
        // The step's Jacobi positions and velocities (synchronized by the pending half kick)
        // are kept, to be folded into the envelopes four steps to a vector (fold_kept).
        const wisdom_holman::half_kick kick = wh->pending_half_kick();
        const double* rjp = wh->jacobi_positions().data();
        const double* vjp = wh->jacobi_velocities().data();
        lanes4 speeds{};
        for (std::size_t k = 1; k < n; ++k) {
            double* kept = &kept_steps[fold_stride * (fold_batch * k + kept_count)];
            lanes4 w = load_after(&vjp[3 * k]);
            if (kick.acceleration) w = w + kick.step * load_after(&kick.acceleration[3 * k]);
            store4(kept, load_after(&rjp[3 * k]));
            store4(kept + 4, w);
            speeds += w;
        }
        // A non-finite velocity: advance() checks the step in full and reports it.
        if (!std::isfinite((speeds[1] + speeds[2]) + speeds[3])) return leave(true);
        std::swap(s_prev, s_next), std::swap(p_prev, p_next), swapped = !swapped;
        prev_t = t;
        if (++kept_count == fold_batch) fold_kept();
    }
}

run_driver::run_driver(const resolved_system& system, run_options options)
    : impl_(std::make_unique<impl>()), system_(system), options_(std::move(options)) {
    impl& m = *impl_;
    if (options_.samples < 1)
        throw input_error(source_location{"<options>"}, "samples", "0", "at least 1 sample");
    if (options_.span_s && options_.orbits)
        throw input_error(source_location{"<options>"}, "span",
                          "both a span and a number of orbits", "one of them");
    nbody_system model = build_nbody(system_);
    const jacobi_tree tree0 = model.tree();
    const std::size_t n = model.size();
    m.n0 = n;
    for (std::size_t k = 0; k < n; ++k) m.orig.push_back(static_cast<int>(k));
    m.info = system_.bodies;

    // Frames: a body's elements are measured in its parent's orbit frame (planets: inertial).
    {
        std::vector<double> q0, v0, r0(3 * n), w0(3 * n);
        relative_state_of(model, q0, v0);
        tree0.relative_to_jacobi(q0.data(), r0.data());
        tree0.relative_to_jacobi(v0.data(), w0.data());
        m.frames.resize(n);
        for (std::size_t k = 1; k < n; ++k) {
            const int p = tree0.parent(k);
            if (p > 0) {
                const auto pu = static_cast<std::size_t>(p);
                m.frames[k] = orbit_frame(&r0[3 * pu], &w0[3 * pu]);
            }
        }
    }
    // Pair records: every sibling pair and every body with its parent, by original index.
    for (std::size_t p = 0; p < n; ++p) {
        const auto& kids = tree0.children(p);
        for (std::size_t x = 0; x < kids.size(); ++x)
            for (std::size_t y = x + 1; y < kids.size(); ++y) {
                const auto& ba = system_.bodies[static_cast<std::size_t>(kids[x])];
                const auto& bb = system_.bodies[static_cast<std::size_t>(kids[y])];
                const double rh = (ba.orbit && bb.orbit)
                                      ? mutual_hill_radius(ba.orbit->a_m, bb.orbit->a_m, ba.mass_kg,
                                                           bb.mass_kg, system_.bodies[p].mass_kg)
                                      : 0.0;
                pairs_.push_back({kids[x], kids[y], inf, 0.0, rh});
            }
    }
    for (std::size_t k = 1; k < n; ++k)
        pairs_.push_back({static_cast<int>(k), tree0.parent(k), inf, 0.0, 0.0});

    m.build(std::move(model), options_.integrator, options_, pairs_, system_);
    m.t0 = m.integ->time();

    // Reference body for counting orbits: the outermost moon, else the outermost planet.
    for (int want : {2, 1}) {
        double best = -1;
        for (std::size_t k = 1; k < n; ++k) {
            if (tree0.depth(k) != want || !system_.bodies[k].orbit) continue;
            if (system_.bodies[k].orbit->a_m > best)
                best = system_.bodies[k].orbit->a_m, m.reference = static_cast<int>(k);
        }
        if (m.reference >= 0) break;
    }
    if (m.reference < 0)
        throw input_error(source_location{system_.name}, "bodies", "a star alone",
                          "at least one planet to integrate");
    {
        const auto r = static_cast<std::size_t>(m.reference);
        const double a = system_.bodies[r].orbit->a_m;
        m.reference_period = constants::two_pi * std::sqrt(a * a * a / tree0.kepler_gm(r));
    }
    span_s_ = options_.span_s ? *options_.span_s
                              : (options_.orbits ? *options_.orbits : 1.0e4) * m.reference_period;
    if (!(span_s_ > 0) || !std::isfinite(span_s_))
        throw input_error(source_location{"<options>"}, "span", fmt::format("{} s", span_s_),
                          "a positive, finite span");
    step_s_ = m.step_s;

    m.reset_conservation_reference();
    m.env.assign(envelope_doubles * n, std::nan(""));
    for (auto* vec : {&m.el_a, &m.el_e, &m.el_i, &m.el_node, &m.el_peri, &m.el_m})
        vec->assign(n, std::nan(""));
    m.e_top.assign(n, -inf), m.a_bottom.assign(n, inf), m.a_top.assign(n, -inf),
        m.ci_bottom.assign(n, inf);
    m.reset_envelopes();
    m.update_envelopes();
    m.update_elements();
    m.e_initial = m.el_e, m.a_initial = m.el_a;
    if (options_.megno) m.megno_on = m.integ->enable_megno(options_.seed);

    // Sample 0: the initial state.
    samples_.reserve(options_.samples + 2); // (no reallocation as the run samples)
    run_sample s0;
    s0.t_s = m.t0;
    s0.a = m.el_a, s0.e = m.el_e, s0.i = m.el_i, s0.node = m.el_node, s0.peri = m.el_peri,
    s0.mean_anomaly = m.el_m;
    s0.a_min = s0.a_max = m.el_a, s0.e_min = s0.e_max = m.el_e, s0.i_min = s0.i_max = m.el_i;
    samples_.push_back(std::move(s0));
    m.reset_envelopes();
    m.prev_t = m.t0;
}

run_driver::~run_driver() = default;

double run_driver::time_s() const noexcept {
    return impl_->integ->time();
}

bool run_driver::advance(const std::atomic<bool>* stop,
                         const std::function<void(const run_driver&)>& on_sample) {
    impl& m = *impl_;
    const std::size_t k_total = options_.samples;
    const double t_end = m.t0 + span_s_;
    auto sample_time = [&](std::size_t k) {
        return k >= k_total
                   ? t_end
                   : m.t0 + span_s_ * static_cast<double>(k) / static_cast<double>(k_total);
    };
    // The next sample's time, recomputed only when the sample index moves (a division per
    // step showed in the run's profile).
    std::size_t cached_k = m.next_sample;
    double cached_t = sample_time(cached_k);
    auto next_sample_time = [&] {
        if (cached_k != m.next_sample) cached_k = m.next_sample, cached_t = sample_time(cached_k);
        return cached_t;
    };
    auto original = [&](int active) {
        return active < 0 ? -1 : m.orig[static_cast<std::size_t>(active)];
    };

    // Whole steps of the plain map that only need the quick tests and the envelopes (no
    // sample, no end, no exact test, no event: most steps) go through a tight loop
    // (impl::ordinary_steps); it hands any other step to the general code below once taken.
    const bool fast = m.wh && m.wh_plain && !options_.continue_after_event;
    const double whole_limit = t_end + 1e-12 * m.step_s; // a whole step must end before this

    while (!finished_) {
        if (stop && stop->load(std::memory_order_relaxed)) {
            m.ensure_state();
            return false;
        }
        const double t_sample = next_sample_time();
        bool positions_only = false;
        try {
            bool stepped = false; // a step taken by ordinary_steps, not yet checked
            if (fast)
                stepped = m.ordinary_steps(stop, whole_limit, t_sample - 1e-9 * m.step_s,
                                           t_end - 1e-9 * m.step_s);
            const double t_now = m.integ->time();
            if (stepped) {
                positions_only = true;
            } else if (stop && stop->load(std::memory_order_relaxed)) {
                continue; // ordinary_steps stopped for it; the check above returns
            } else if (m.wh && t_now + m.step_s <= whole_limit) {
                m.wh->step(); // whole steps keep the map symplectic; samples fall on steps
                positions_only = true;
            } else {
                m.ensure_state();
                // Adaptive integrators check events at least every tenth of the time siblings
                // need to close their gap, so a collision is not stepped over.
                double chunk = m.step_s;
                for (const sibling_pair& sp : m.siblings) {
                    const auto a = static_cast<std::size_t>(sp.a),
                               b = static_cast<std::size_t>(sp.b);
                    const double dq[3] = {m.q[3 * a] - m.q[3 * b], m.q[3 * a + 1] - m.q[3 * b + 1],
                                          m.q[3 * a + 2] - m.q[3 * b + 2]};
                    const double dv[3] = {m.v[3 * a] - m.v[3 * b], m.v[3 * a + 1] - m.v[3 * b + 1],
                                          m.v[3 * a + 2] - m.v[3 * b + 2]};
                    const double gap = norm(dq) - sp.touch, speed = norm(dv);
                    if (speed > 0 && gap > 0)
                        chunk = std::min(chunk, std::max(0.1 * gap / speed, 1e-6 * m.step_s));
                }
                m.integ->integrate(std::min({t_now + chunk, t_end, m.wh ? t_end : t_sample}));
            }
            m.read_state(positions_only);
        } catch (const numerical_error& e) {
            m.ensure_state();
            events_.push_back(
                {m.integ->time(), event_kind::numerical_failure, -1, -1, 0, 0, e.what()});
            finished_ = true;
            break;
        }
        const double t = m.integ->time();
        const std::size_t events_before = events_.size();
        double nearest_ratio = inf; // closest sibling pair, in close-approach thresholds
        const double* q = m.qp;
        double finite_check = 0; // every squared distance: non-finite when a position is

        // Siblings: closest approaches, collisions, close approaches.
        for (std::size_t s = 0; s < m.siblings.size(); ++s) {
            const sibling_pair& sp = m.siblings[s];
            const auto a = static_cast<std::size_t>(sp.a), b = static_cast<std::size_t>(sp.b);
            const double d[3] = {q[3 * a] - q[3 * b], q[3 * a + 1] - q[3 * b + 1],
                                 q[3 * a + 2] - q[3 * b + 2]};
            const double dist2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
            finite_check += dist2;
            const double prev2 = m.prev_sibling_d2[s];
            m.prev_sibling_d2[s] = dist2;
            if (dist2 > m.sibling_lo2[s]) continue; // the quick test: nothing to record
            const double dist = std::sqrt(dist2), d0 = std::sqrt(prev2);
            if (m.sibling_record[s] < pairs_.size()) {
                pair_record& pr = pairs_[m.sibling_record[s]];
                if (dist < pr.min_distance_m) pr.min_distance_m = dist, pr.t_s = t;
            }
            if (sp.close > 0) nearest_ratio = std::min(nearest_ratio, dist / sp.close);
            if (dist < sp.touch) {
                events_.push_back({crossing_time(m.prev_t, d0, t, dist, sp.touch),
                                   event_kind::collision, original(sp.a), original(sp.b), dist,
                                   sp.touch, ""});
            } else if (dist < sp.close && m.close_armed[s]) {
                events_.push_back({crossing_time(m.prev_t, d0, t, dist, sp.close),
                                   event_kind::close_approach, original(sp.a), original(sp.b), dist,
                                   sp.close, ""});
                m.close_armed[s] = 0;
            } else if (dist > 2 * sp.close) {
                m.close_armed[s] = 1;
            }
            m.refresh_sibling_bound(s, pairs_, options_.continue_after_event);
        }
        // Each body against its parent: impact, Roche limit, escape.
        for (std::size_t k = 1; k < m.n; ++k) {
            const double* qk = &q[3 * k];
            const double r2 = qk[0] * qk[0] + qk[1] * qk[1] + qk[2] * qk[2];
            finite_check += r2;
            const double prev2 = m.prev_parent_d2[k];
            m.prev_parent_d2[k] = r2;
            if (r2 > m.parent_lo2[k] && r2 < m.parent_hi2[k]) continue; // the quick test
            const double r = std::sqrt(r2), d0 = std::sqrt(prev2);
            pair_record& pr = pairs_[m.parent_record[k]];
            if (r < pr.min_distance_m) pr.min_distance_m = r, pr.t_s = t;
            const int parent = original(m.tree.parent(k));
            const int body = original(static_cast<int>(k));
            if (r < m.touch_parent[k]) {
                events_.push_back({crossing_time(m.prev_t, d0, t, r, m.touch_parent[k]),
                                   event_kind::parent_impact, body, parent, r, m.touch_parent[k],
                                   ""});
            } else if (r < m.roche[k] && !(d0 < m.roche[k])) {
                events_.push_back({crossing_time(m.prev_t, d0, t, r, m.roche[k]),
                                   event_kind::roche_crossing, body, parent, r, m.roche[k], ""});
            } else if (r > m.escape[k] && !(d0 > m.escape[k])) {
                bool escaped = true;
                if (m.tree.parent(k) == 0) { // a planet: it must also be unbound from the star
                    m.ensure_state();
                    const double* vk = &m.v[3 * k];
                    const double v2 = vk[0] * vk[0] + vk[1] * vk[1] + vk[2] * vk[2];
                    escaped = 0.5 * v2 - m.tree.kepler_gm(k) / r > 0;
                }
                if (escaped)
                    events_.push_back({crossing_time(m.prev_t, d0, t, r, m.escape[k]),
                                       event_kind::escape, body, parent, r, m.escape[k], ""});
            }
            m.refresh_parent_bound(k, pairs_);
        }
        m.prev_t = t;
        const double speeds = m.update_envelopes();
        if (!std::isfinite(finite_check) || !std::isfinite(speeds)) {
            // The map's own read (read_state(true)) leaves this test to the checks; a non-finite
            // value fired no event above (every comparison with NaN is false).
            m.ensure_state();
            events_.resize(events_before);
            events_.push_back(
                {t, event_kind::numerical_failure, -1, -1, 0, 0,
                 std::isfinite(finite_check) ? "non-finite velocity" : "non-finite position"});
            finished_ = true;
            break;
        }
        const bool new_events = events_.size() > events_before;
        if (new_events)
            std::stable_sort(events_.begin() + static_cast<std::ptrdiff_t>(events_before),
                             events_.end(),
                             [](const run_event& x, const run_event& y) { return x.t_s < y.t_s; });

        const bool stop_now = !options_.continue_after_event && new_events;
        const bool at_sample = t >= next_sample_time() - 1e-9 * m.step_s;
        const bool at_end = t >= t_end - 1e-9 * m.step_s;
        if (at_sample || at_end || stop_now || options_.continue_after_event) m.ensure_state();
        if (at_sample || at_end || stop_now) {
            m.update_elements();
            run_sample s;
            s.t_s = t;
            s.a = m.el_a, s.e = m.el_e, s.i = m.el_i, s.node = m.el_node, s.peri = m.el_peri,
            s.mean_anomaly = m.el_m;
            s.a_min.resize(m.n0), s.a_max.resize(m.n0);
            for (std::size_t k = 0; k < m.n0; ++k) { // infinite: no step filled it (NaN)
                const double lo = m.interval_a_lo(k), hi = m.interval_a_hi(k);
                s.a_min[k] = std::isfinite(lo) ? lo : std::nan("");
                s.a_max[k] = std::isfinite(hi) ? hi : std::nan("");
            }
            s.e_min = roots_of(m.env, lane_e2), s.e_max = roots_of(m.env, envelope_hi + lane_e2),
            s.i_min = angles_of(m.env, envelope_hi + lane_cc), s.i_max = angles_of(m.env, lane_cc);
            s.energy_error = m.energy_error();
            s.angular_momentum_error = m.momentum_error();
            m.max_energy_error = std::max(m.max_energy_error, s.energy_error);
            m.max_momentum_error = std::max(m.max_momentum_error, s.angular_momentum_error);
            if (m.megno_on) {
                const megno_reading r = m.integ->megno();
                s.megno = r.y, s.mean_megno = r.mean_y;
            }
            const bool failed = s.energy_error > options_.energy_failure;
            samples_.push_back(std::move(s));
            m.reset_envelopes();
            while (m.next_sample <= k_total && sample_time(m.next_sample) <= t + 1e-9 * m.step_s)
                ++m.next_sample;
            if (failed) {
                events_.push_back(
                    {t, event_kind::numerical_failure, -1, -1, 0, 0,
                     fmt::format("the relative energy error reached {:.2g}, above {:.2g}",
                                 samples_.back().energy_error, options_.energy_failure)});
            }
            if (stop_now || failed || at_end) finished_ = true;
            if (on_sample) on_sample(*this);
        }
        if (!finished_ && options_.continue_after_event) {
            if (new_events) apply_events(events_before);
            switch_integrator(nearest_ratio);
        }
    }
    return true;
}

void run_driver::apply_events(std::size_t first) {
    impl& m = *impl_;
    // Work on inertial states of the active bodies, by active index.
    std::vector<double> x, w;
    m.inertial_state(x, w);
    std::vector<char> keep(m.n, 1);
    std::vector<int> merged_into(m.n, -1);
    auto active_of = [&](int original) {
        for (std::size_t k = 0; k < m.n; ++k)
            if (m.orig[k] == original) return static_cast<int>(k);
        return -1;
    };
    auto absorb = [&](int into, int from) { // momentum and volume conserved
        if (into < 0 || from < 0 || !keep[static_cast<std::size_t>(into)] ||
            !keep[static_cast<std::size_t>(from)])
            return;
        const auto a = static_cast<std::size_t>(into), b = static_cast<std::size_t>(from);
        resolved_body& A = m.info[a];
        const resolved_body& B = m.info[b];
        const double ma = A.mass_kg, mb = B.mass_kg, mt = ma + mb;
        for (int c = 0; c < 3; ++c) {
            x[3 * a + c] = (ma * x[3 * a + c] + mb * x[3 * b + c]) / mt;
            w[3 * a + c] = (ma * w[3 * a + c] + mb * w[3 * b + c]) / mt;
        }
        const double ra = impl::body_size(A), rb = impl::body_size(B);
        A.radius_m = std::cbrt(ra * ra * ra + rb * rb * rb);
        A.semi_axes_m.reset();
        A.mass_kg = mt;
        A.density_kg_m3 = mt / sphere_volume(A.radius_m);
        keep[b] = 0;
        merged_into[b] = into;
    };
    std::function<void(std::size_t)> drop = [&](std::size_t k) {
        keep[k] = 0;
        for (int c : m.tree.children(k)) drop(static_cast<std::size_t>(c));
    };
    for (std::size_t e = first; e < events_.size(); ++e) {
        const run_event& ev = events_[e];
        const int a = active_of(ev.body), b = active_of(ev.other);
        switch (ev.kind) {
        case event_kind::collision: {
            const bool a_bigger = a >= 0 && b >= 0 &&
                                  m.info[static_cast<std::size_t>(a)].mass_kg >=
                                      m.info[static_cast<std::size_t>(b)].mass_kg;
            a_bigger ? absorb(a, b) : absorb(b, a);
            break;
        }
        case event_kind::parent_impact:
            absorb(b, a);
            break;
        case event_kind::roche_crossing: // torn apart: its debris leaves the N-body problem
        case event_kind::escape:
            if (a >= 0) drop(static_cast<std::size_t>(a));
            break;
        default:
            break;
        }
    }
    if (std::all_of(keep.begin(), keep.end(), [](char c) { return c != 0; })) return;

    // Children of a merged body go with the body it merged into.
    std::vector<int> new_index(m.n, -1);
    std::vector<nbody_body> bodies;
    std::vector<resolved_body> info;
    std::vector<int> orig;
    std::vector<double> nx, nw;
    for (std::size_t k = 0; k < m.n; ++k) {
        if (!keep[k]) continue;
        int p = m.tree.parent(k);
        while (p >= 0 && !keep[static_cast<std::size_t>(p)])
            p = merged_into[static_cast<std::size_t>(p)];
        if (k > 0 && p < 0) continue; // its parent left the run
        new_index[k] = static_cast<int>(bodies.size());
        nbody_body b = m.sys.bodies_[k];
        b.parent_ = k == 0 ? -1 : new_index[static_cast<std::size_t>(p)];
        if (k > 0 && b.parent_ < 0) continue;
        b.gm_ = constants::G * m.info[k].mass_kg;
        b.radius_ = m.info[k].radius_m;
        bodies.push_back(b);
        info.push_back(m.info[k]);
        orig.push_back(m.orig[k]);
        nx.insert(nx.end(), &x[3 * k], &x[3 * k + 3]);
        nw.insert(nw.end(), &w[3 * k], &w[3 * k + 3]);
    }
    nbody_system model = make_nbody(std::move(bodies), std::move(nx), std::move(nw));
    model.t_ = m.integ->time();
    m.info = std::move(info);
    m.orig = std::move(orig);
    m.build(std::move(model), m.active_name, options_, pairs_, system_);
    m.reset_conservation_reference(); // merging is inelastic: errors count from here
    m.megno_on = false;               // MEGNO is not defined across a change of the system
    ++m.changes;
}

void run_driver::switch_integrator(double nearest_ratio) {
    impl& m = *impl_;
    // Near an encounter the Wisdom–Holman map loses accuracy: hand the state to Gauss–Radau
    // within 3 close-approach thresholds, and back beyond 5 (hysteresis keeps it from flapping).
    if (options_.integrator != "wh") return;
    std::string want = m.active_name;
    if (m.active_name == "wh" && nearest_ratio < 3.0) want = "radau";
    if (m.active_name == "radau" && nearest_ratio > 5.0) want = "wh";
    if (want == m.active_name) return;
    nbody_system model = m.sys;
    set_relative_state(model, m.integ->time(), m.q.data(), m.v.data());
    m.build(std::move(model), want, options_, pairs_, system_);
    m.megno_on = false;
    ++m.changes;
}

run_progress run_driver::progress() const {
    const impl& m = *impl_;
    run_progress p;
    p.t_s = m.integ->time() - m.t0;
    p.span_s = span_s_;
    p.steps = m.integ->steps();
    for (std::size_t k = 1; k < m.n0; ++k)
        if (m.run_e_max(k) > p.worst_e)
            p.worst_e = m.run_e_max(k), p.worst_e_body = system_.bodies[k].name;
    p.closest_hill = inf;
    for (const auto& pr : pairs_) {
        if (!(pr.mutual_hill_m > 0)) continue;
        const double h = pr.min_distance_m / pr.mutual_hill_m;
        if (h < p.closest_hill)
            p.closest_hill = h,
            p.closest_pair = system_.bodies[static_cast<std::size_t>(pr.a)].name + "-" +
                             system_.bodies[static_cast<std::size_t>(pr.b)].name;
    }
    return p;
}

run_outcome run_driver::outcome() const {
    const impl& m = *impl_;
    run_outcome o;
    o.span_s = span_s_;
    o.simulated_s = m.integ->time() - m.t0;
    o.reference_period_s = m.reference_period;
    o.reference_body = system_.bodies[static_cast<std::size_t>(m.reference)].name;
    o.events = events_;
    o.max_energy_error = m.max_energy_error;
    o.max_angular_momentum_error = m.max_momentum_error;
    for (const auto& b : system_.bodies) o.body_names.push_back(b.name);
    for (std::size_t k = 1; k < m.n0; ++k)
        o.bodies.push_back({system_.bodies[k].name, m.e_initial[k], m.run_e_max(k), m.a_initial[k],
                            m.run_a_min(k), m.run_a_max(k), std::acos(m.run_cos_i_min(k))});
    if (options_.megno && m.changes == 0 && !samples_.empty() &&
        std::isfinite(samples_.back().mean_megno)) {
        o.mean_megno = samples_.back().mean_megno;
        // Chaotic orbits: <Y>(t) grows as (lambda / 2) t (Cincotta & Simó 2000), so the
        // Lyapunov exponent is twice the least-squares slope of <Y> over the second half.
        double st = 0, sy = 0, stt = 0, sty = 0, count = 0;
        const double t_half = m.t0 + 0.5 * o.simulated_s;
        for (const auto& s : samples_) {
            if (s.t_s < t_half || !std::isfinite(s.mean_megno)) continue;
            st += s.t_s, sy += s.mean_megno, stt += s.t_s * s.t_s, sty += s.t_s * s.mean_megno;
            count += 1;
        }
        const double den = count * stt - st * st;
        if (count >= 3 && den > 0) {
            const double slope = (count * sty - st * sy) / den;
            if (slope > 0) o.lyapunov_time_s = 1.0 / (2.0 * slope);
        }
    }
    return o;
}

std::vector<double> run_driver::save_checkpoint() const {
    const impl& m = *impl_;
    packer p;
    p.put(checkpoint_tag);
    p.put(static_cast<double>(m.n0));
    p.put(finished_ ? 1.0 : 0.0);
    p.put(static_cast<double>(m.next_sample));
    p.put(m.prev_t);
    p.put(m.energy0);
    p.put(m.momentum0);
    p.put(m.max_energy_error);
    p.put(m.max_momentum_error);
    p.put(m.megno_on ? 1.0 : 0.0);
    p.put(static_cast<double>(m.changes));
    // The current model: which bodies are left, their masses and sizes, the integrator in use,
    // and the state it was built from (which fixes its automatic step).
    p.put(std::vector<double>(m.orig.begin(), m.orig.end()));
    std::vector<double> parents;
    for (std::size_t k = 0; k < m.n; ++k) parents.push_back(m.sys.bodies_[k].parent_);
    p.put(parents);
    std::vector<double> physical;
    for (const auto& b : m.info)
        physical.push_back(b.mass_kg), physical.push_back(b.radius_m),
            physical.push_back(b.density_kg_m3), physical.push_back(b.semi_axes_m ? 1.0 : 0.0);
    p.put(physical);
    p.put(m.active_name == "wh" ? 0.0 : 1.0);
    p.put(m.rebuild_x);
    p.put(m.rebuild_v);
    p.put(m.rebuild_t);
    for (const auto* vec : impl::checkpoint_vectors(m)) p.put(*vec);
    p.put(std::vector<double>(m.close_armed.begin(), m.close_armed.end()));
    std::vector<double> pair_data;
    for (const auto& pr : pairs_)
        pair_data.push_back(pr.min_distance_m), pair_data.push_back(pr.t_s);
    p.put(pair_data);
    p.put(m.integ->save_checkpoint());
    return p.out;
}

void run_driver::load_checkpoint(const std::vector<double>& data, std::vector<run_sample> samples,
                                 std::vector<run_event> events) {
    impl& m = *impl_;
    unpacker u{data};
    if (u.get() != checkpoint_tag || u.get() != static_cast<double>(m.n0))
        throw input_error(source_location{"<checkpoint>"},
                          "the checkpoint belongs to another design or another moonwright version");
    finished_ = u.get() != 0.0;
    m.next_sample = static_cast<std::size_t>(u.get());
    m.prev_t = u.get();
    m.energy0 = u.get();
    m.momentum0 = u.get();
    m.max_energy_error = u.get();
    m.max_momentum_error = u.get();
    m.megno_on = u.get() != 0.0;
    m.changes = static_cast<int>(u.get());
    const std::vector<double> orig = u.get_vector();
    const std::vector<double> parents = u.get_vector();
    const std::vector<double> physical = u.get_vector();
    const std::string name = u.get() == 0.0 ? std::string("wh") : std::string("radau");
    std::vector<double> x = u.get_vector(), w = u.get_vector();
    const double t_build = u.get();
    if (m.changes > 0) {
        // Rebuild the model the run had reached, exactly as it was built then.
        if (physical.size() != 4 * orig.size() || x.size() != 3 * orig.size() ||
            parents.size() != orig.size())
            throw input_error(source_location{"<checkpoint>"},
                              "the checkpoint's model does not fit");
        const nbody_system start = build_nbody(system_);
        std::vector<nbody_body> bodies;
        std::vector<resolved_body> info;
        std::vector<int> o;
        for (std::size_t k = 0; k < orig.size(); ++k) {
            const auto ok = static_cast<std::size_t>(orig[k]);
            if (ok >= system_.bodies.size())
                throw input_error(source_location{"<checkpoint>"},
                                  "the checkpoint's model does not fit");
            resolved_body b = system_.bodies[ok];
            b.mass_kg = physical[4 * k], b.radius_m = physical[4 * k + 1],
            b.density_kg_m3 = physical[4 * k + 2];
            if (physical[4 * k + 3] == 0.0) b.semi_axes_m.reset();
            nbody_body nb = start.bodies_[ok];
            nb.gm_ = constants::G * b.mass_kg;
            nb.radius_ = b.radius_m;
            nb.parent_ = static_cast<int>(parents[k]);
            bodies.push_back(nb);
            info.push_back(b);
            o.push_back(static_cast<int>(ok));
        }
        nbody_system model = make_nbody(std::move(bodies), std::move(x), std::move(w));
        model.t_ = t_build;
        m.info = std::move(info);
        m.orig = std::move(o);
        m.build(std::move(model), name, options_, pairs_, system_);
    }
    for (auto* vec : impl::checkpoint_vectors(m)) *vec = u.get_vector();
    const auto armed = u.get_vector();
    m.close_armed.assign(armed.begin(), armed.end());
    const auto pair_data = u.get_vector();
    if (pair_data.size() != 2 * pairs_.size())
        throw input_error(source_location{"<checkpoint>"},
                          "the checkpoint's pair table does not fit");
    for (std::size_t k = 0; k < pairs_.size(); ++k)
        pairs_[k].min_distance_m = pair_data[2 * k], pairs_[k].t_s = pair_data[2 * k + 1];
    m.refresh_bounds(pairs_, options_.continue_after_event);
    m.integ->load_checkpoint(u.get_vector());
    m.read_state();
    step_s_ = m.step_s;
    samples_ = std::move(samples);
    events_ = std::move(events);
}

} // namespace moonwright
