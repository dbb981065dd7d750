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
#include "integrators/wisdom_holman.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <limits>

namespace moonwright {

namespace {

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double checkpoint_tag = 20261201.0; ///< first word of a run checkpoint (layout version)

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

/// Linear interpolation of the time at which a distance crossed a threshold between checks.
double crossing_time(double t0, double d0, double t1, double d1, double threshold) {
    if (!(d0 != d1) || !std::isfinite(d0)) return t1;
    const double f = std::clamp((d0 - threshold) / (d0 - d1), 0.0, 1.0);
    return t0 + f * (t1 - t0);
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
    nbody_system sys;
    std::unique_ptr<integrator> integ;
    wisdom_holman* wh = nullptr; ///< the same integrator when it is the Wisdom–Holman map
    jacobi_tree tree;
    std::size_t n = 0;
    std::vector<double> q, v, rj, vj;
    std::vector<frame> frames; ///< per body: the parent's orbit frame
    std::vector<sibling_pair> siblings;
    std::vector<double> touch_parent; ///< impact distance body-parent [m]
    std::vector<double> roche;        ///< parent's fluid Roche limit for the body [m]
    std::vector<double> escape;       ///< escape distance [m] (planets: see run_options)
    std::vector<double> prev_sibling_d, prev_parent_d;
    std::vector<char> close_armed; ///< a close approach fires once per entry
    double prev_t = 0;
    double energy0 = 0, momentum0 = 0;
    double max_energy_error = 0, max_momentum_error = 0;
    // Envelopes since the last sample and over the whole run.
    std::vector<double> a_lo, a_hi, e_lo, e_hi, i_lo, i_hi;
    std::vector<double> e_initial, a_initial, e_top, a_bottom, a_top, i_top;
    std::vector<double> el_a, el_e, el_i, el_node, el_peri, el_m; ///< elements at the last check
    std::size_t next_sample = 1;
    double t0 = 0;
    bool megno_on = false;
    int reference = -1;
    double reference_period = 0;

    void read_state() {
        integ->relative_state(q, v);
        for (double x : q)
            if (!std::isfinite(x)) throw numerical_error("non-finite position");
        for (double x : v)
            if (!std::isfinite(x)) throw numerical_error("non-finite velocity");
    }

    /// Osculating elements of every body relative to its parent subsystem, in its parent's
    /// orbit frame; updates the envelopes.
    void update_elements() {
        tree.relative_to_jacobi(q.data(), rj.data());
        tree.relative_to_jacobi(v.data(), vj.data());
        for (std::size_t k = 1; k < n; ++k) {
            cartesian_state s;
            frames[k].apply(&rj[3 * k], s.r.data());
            frames[k].apply(&vj[3 * k], s.v.data());
            const orbital_elements el = cartesian_to_elements(tree.kepler_gm(k), s);
            const double a = semi_major_axis(el);
            el_a[k] = a, el_e[k] = el.e, el_i[k] = el.i, el_node[k] = el.node, el_peri[k] = el.peri;
            el_m[k] = el.e < 1 ? mean_anomaly(el.e, el.nu) : std::nan("");
            a_lo[k] = std::min(a_lo[k], a), a_hi[k] = std::max(a_hi[k], a);
            e_lo[k] = std::min(e_lo[k], el.e), e_hi[k] = std::max(e_hi[k], el.e);
            i_lo[k] = std::min(i_lo[k], el.i), i_hi[k] = std::max(i_hi[k], el.i);
            e_top[k] = std::max(e_top[k], el.e);
            a_bottom[k] = std::min(a_bottom[k], a), a_top[k] = std::max(a_top[k], a);
            i_top[k] = std::max(i_top[k], el.i);
        }
    }

    void reset_envelopes() {
        for (std::size_t k = 0; k < n; ++k) {
            a_lo[k] = e_lo[k] = i_lo[k] = inf;
            a_hi[k] = e_hi[k] = i_hi[k] = -inf;
        }
    }

    double energy_error() const {
        return relative_error(total_energy(integ->forces(), q.data(), v.data()), energy0);
    }
    double momentum_error() const {
        const vec3 l = angular_momentum(tree, q.data(), v.data());
        return std::abs(std::sqrt(l[0] * l[0] + l[1] * l[1] + l[2] * l[2]) - momentum0) / momentum0;
    }
};

run_driver::run_driver(const resolved_system& system, run_options options)
    : impl_(std::make_unique<impl>()), system_(system), options_(std::move(options)) {
    impl& m = *impl_;
    if (options_.samples < 1)
        throw input_error(source_location{"<options>"}, "samples", "0", "at least 1 sample");
    if (options_.span_s && options_.orbits)
        throw input_error(source_location{"<options>"}, "span",
                          "both a span and a number of orbits", "one of them");
    m.sys = build_nbody(system_);
    m.tree = m.sys.tree();
    m.n = m.sys.size();
    const std::size_t n = m.n;
    m.integ = make_integrator(options_.integrator, m.sys, {}, options_.integration);
    m.wh = dynamic_cast<wisdom_holman*>(m.integ.get());
    m.t0 = m.integ->time();
    m.q.resize(3 * n), m.v.resize(3 * n), m.rj.resize(3 * n), m.vj.resize(3 * n);
    m.read_state();
    m.tree.relative_to_jacobi(m.q.data(), m.rj.data());
    m.tree.relative_to_jacobi(m.v.data(), m.vj.data());

    // Frames: a body's elements are measured in its parent's orbit frame (planets: inertial).
    m.frames.resize(n);
    for (std::size_t k = 1; k < n; ++k) {
        const int p = m.tree.parent(k);
        if (p > 0) {
            const auto pu = static_cast<std::size_t>(p);
            m.frames[k] = orbit_frame(&m.rj[3 * pu], &m.vj[3 * pu]);
        }
    }

    // Thresholds per body and per sibling pair.
    auto body_size = [&](std::size_t k) {
        const auto& b = system_.bodies[k];
        return b.semi_axes_m ? (*b.semi_axes_m)[0] : b.radius_m;
    };
    m.touch_parent.assign(n, 0), m.roche.assign(n, 0), m.escape.assign(n, inf);
    for (std::size_t k = 1; k < n; ++k) {
        const auto p = static_cast<std::size_t>(m.tree.parent(k));
        const auto& body = system_.bodies[k];
        const auto& parent = system_.bodies[p];
        m.touch_parent[k] = parent.radius_m + body_size(k);
        if (parent.density_kg_m3 > 0 && body.density_kg_m3 > 0)
            m.roche[k] =
                roche_limit_fluid(parent.radius_m, parent.density_kg_m3, body.density_kg_m3);
        if (p > 0 && parent.orbit) {
            const auto gp = static_cast<std::size_t>(m.tree.parent(p));
            m.escape[k] =
                options_.escape_hill * hill_radius(parent.orbit->a_m, parent.orbit->e,
                                                   parent.mass_kg, system_.bodies[gp].mass_kg);
        } else if (body.orbit) {
            m.escape[k] = options_.escape_hill * body.orbit->a_m * (1 + body.orbit->e);
        }
    }
    for (std::size_t p = 0; p < n; ++p) {
        const auto& kids = m.tree.children(p);
        for (std::size_t x = 0; x < kids.size(); ++x)
            for (std::size_t y = x + 1; y < kids.size(); ++y) {
                const auto a = static_cast<std::size_t>(kids[x]),
                           b = static_cast<std::size_t>(kids[y]);
                const auto& ba = system_.bodies[a];
                const auto& bb = system_.bodies[b];
                const double rh = (ba.orbit && bb.orbit)
                                      ? mutual_hill_radius(ba.orbit->a_m, bb.orbit->a_m, ba.mass_kg,
                                                           bb.mass_kg, system_.bodies[p].mass_kg)
                                      : 0.0;
                m.siblings.push_back({kids[x], kids[y], rh, body_size(a) + body_size(b),
                                      options_.close_approach_hill * rh});
                pairs_.push_back({kids[x], kids[y], inf, 0.0, rh});
            }
    }
    for (std::size_t k = 1; k < n; ++k)
        pairs_.push_back({static_cast<int>(k), m.tree.parent(k), inf, 0.0, 0.0});
    m.prev_sibling_d.assign(m.siblings.size(), std::nan(""));
    m.prev_parent_d.assign(n, std::nan(""));
    m.close_armed.assign(m.siblings.size(), 1);

    // Reference body for counting orbits: the outermost moon, else the outermost planet.
    for (int want : {2, 1}) {
        double best = -1;
        for (std::size_t k = 1; k < n; ++k) {
            if (m.tree.depth(k) != want || !system_.bodies[k].orbit) continue;
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
        m.reference_period = constants::two_pi * std::sqrt(a * a * a / m.tree.kepler_gm(r));
    }
    span_s_ = options_.span_s ? *options_.span_s
                              : (options_.orbits ? *options_.orbits : 1.0e4) * m.reference_period;
    if (!(span_s_ > 0) || !std::isfinite(span_s_))
        throw input_error(source_location{"<options>"}, "span", fmt::format("{} s", span_s_),
                          "a positive, finite span");

    step_s_ = m.wh ? m.wh->step_size()
                   : (options_.integration.step > 0
                          ? options_.integration.step
                          : wh_automatic_step(m.tree, m.q.data(), m.v.data(),
                                              options_.integration.period_fraction,
                                              options_.integration.pericentre_fraction));

    m.energy0 = total_energy(m.integ->forces(), m.q.data(), m.v.data());
    {
        const vec3 l = angular_momentum(m.tree, m.q.data(), m.v.data());
        m.momentum0 = std::sqrt(l[0] * l[0] + l[1] * l[1] + l[2] * l[2]);
    }
    for (auto* vec : {&m.a_lo, &m.a_hi, &m.e_lo, &m.e_hi, &m.i_lo, &m.i_hi, &m.el_a, &m.el_e,
                      &m.el_i, &m.el_node, &m.el_peri, &m.el_m})
        vec->assign(n, std::nan(""));
    m.e_top.assign(n, -inf), m.a_bottom.assign(n, inf), m.a_top.assign(n, -inf),
        m.i_top.assign(n, -inf);
    m.reset_envelopes();
    m.update_elements();
    m.e_initial = m.el_e, m.a_initial = m.el_a;
    if (options_.megno) m.megno_on = m.integ->enable_megno(options_.seed);

    // Sample 0: the initial state.
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

    while (!finished_) {
        if (stop && stop->load(std::memory_order_relaxed)) return false;
        const double t_now = m.integ->time();
        const double t_sample = sample_time(m.next_sample);
        try {
            if (m.wh && t_now + step_s_ <= t_end + 1e-12 * step_s_) {
                m.wh->step(); // whole steps keep the map symplectic; samples fall on steps
            } else {
                m.integ->integrate(std::min({t_now + step_s_, t_end, m.wh ? t_end : t_sample}));
            }
            m.read_state();
        } catch (const numerical_error& e) {
            events_.push_back(
                {m.integ->time(), event_kind::numerical_failure, -1, -1, 0, 0, e.what()});
            finished_ = true;
            break;
        }
        const double t = m.integ->time();
        std::size_t events_before = events_.size();

        // Siblings: closest approaches, collisions, close approaches.
        for (std::size_t s = 0; s < m.siblings.size(); ++s) {
            const sibling_pair& sp = m.siblings[s];
            const auto a = static_cast<std::size_t>(sp.a), b = static_cast<std::size_t>(sp.b);
            const double d[3] = {m.q[3 * a] - m.q[3 * b], m.q[3 * a + 1] - m.q[3 * b + 1],
                                 m.q[3 * a + 2] - m.q[3 * b + 2]};
            const double dist = norm(d);
            if (dist < pairs_[s].min_distance_m) pairs_[s].min_distance_m = dist, pairs_[s].t_s = t;
            const double d0 = m.prev_sibling_d[s];
            if (dist < sp.touch) {
                events_.push_back({crossing_time(m.prev_t, d0, t, dist, sp.touch),
                                   event_kind::collision, sp.a, sp.b, dist, sp.touch, ""});
            } else if (dist < sp.close && m.close_armed[s]) {
                events_.push_back({crossing_time(m.prev_t, d0, t, dist, sp.close),
                                   event_kind::close_approach, sp.a, sp.b, dist, sp.close, ""});
                m.close_armed[s] = 0;
            } else if (dist > 2 * sp.close) {
                m.close_armed[s] = 1;
            }
            m.prev_sibling_d[s] = dist;
        }
        // Each body against its parent: impact, Roche limit, escape.
        const std::size_t base = m.siblings.size();
        for (std::size_t k = 1; k < m.n; ++k) {
            const double r = norm(&m.q[3 * k]);
            pair_record& pr = pairs_[base + k - 1];
            if (r < pr.min_distance_m) pr.min_distance_m = r, pr.t_s = t;
            const double d0 = m.prev_parent_d[k];
            const int parent = m.tree.parent(k);
            const int body = static_cast<int>(k);
            if (r < m.touch_parent[k]) {
                events_.push_back({crossing_time(m.prev_t, d0, t, r, m.touch_parent[k]),
                                   event_kind::parent_impact, body, parent, r, m.touch_parent[k],
                                   ""});
            } else if (r < m.roche[k] && !(d0 < m.roche[k])) {
                events_.push_back({crossing_time(m.prev_t, d0, t, r, m.roche[k]),
                                   event_kind::roche_crossing, body, parent, r, m.roche[k], ""});
            } else if (r > m.escape[k] && !(d0 > m.escape[k])) {
                bool escaped = true;
                if (parent == 0) { // a planet: it must also be unbound from the star
                    const double* vk = &m.v[3 * k];
                    const double v2 = vk[0] * vk[0] + vk[1] * vk[1] + vk[2] * vk[2];
                    escaped = 0.5 * v2 - m.tree.kepler_gm(k) / r > 0;
                }
                if (escaped)
                    events_.push_back({crossing_time(m.prev_t, d0, t, r, m.escape[k]),
                                       event_kind::escape, body, parent, r, m.escape[k], ""});
            }
            m.prev_parent_d[k] = r;
        }
        m.prev_t = t;
        m.update_elements();
        if (events_.size() > events_before)
            std::stable_sort(events_.begin() + static_cast<std::ptrdiff_t>(events_before),
                             events_.end(),
                             [](const run_event& x, const run_event& y) { return x.t_s < y.t_s; });

        const bool stop_now = !options_.continue_after_event && events_.size() > events_before;
        const bool at_sample = t >= sample_time(m.next_sample) - 1e-9 * step_s_;
        const bool at_end = t >= t_end - 1e-9 * step_s_;
        if (at_sample || at_end || stop_now) {
            run_sample s;
            s.t_s = t;
            s.a = m.el_a, s.e = m.el_e, s.i = m.el_i, s.node = m.el_node, s.peri = m.el_peri,
            s.mean_anomaly = m.el_m;
            s.a_min = m.a_lo, s.a_max = m.a_hi, s.e_min = m.e_lo, s.e_max = m.e_hi,
            s.i_min = m.i_lo, s.i_max = m.i_hi;
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
            while (m.next_sample <= k_total && sample_time(m.next_sample) <= t + 1e-9 * step_s_)
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
    }
    return true;
}

run_progress run_driver::progress() const {
    const impl& m = *impl_;
    run_progress p;
    p.t_s = m.integ->time() - m.t0;
    p.span_s = span_s_;
    p.steps = m.integ->steps();
    for (std::size_t k = 1; k < m.n; ++k)
        if (m.e_top[k] > p.worst_e) p.worst_e = m.e_top[k], p.worst_e_body = system_.bodies[k].name;
    p.closest_hill = inf;
    for (std::size_t s = 0; s < m.siblings.size(); ++s) {
        if (!(pairs_[s].mutual_hill_m > 0)) continue;
        const double h = pairs_[s].min_distance_m / pairs_[s].mutual_hill_m;
        if (h < p.closest_hill)
            p.closest_hill = h,
            p.closest_pair = system_.bodies[static_cast<std::size_t>(pairs_[s].a)].name + "-" +
                             system_.bodies[static_cast<std::size_t>(pairs_[s].b)].name;
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
    for (std::size_t k = 1; k < m.n; ++k)
        o.bodies.push_back({system_.bodies[k].name, m.e_initial[k], m.e_top[k], m.a_initial[k],
                            m.a_bottom[k], m.a_top[k], m.i_top[k]});
    if (m.megno_on && !samples_.empty() && std::isfinite(samples_.back().mean_megno)) {
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
    p.put(static_cast<double>(m.n));
    p.put(finished_ ? 1.0 : 0.0);
    p.put(static_cast<double>(m.next_sample));
    p.put(m.prev_t);
    p.put(m.max_energy_error);
    p.put(m.max_momentum_error);
    p.put(m.megno_on ? 1.0 : 0.0);
    for (const auto* vec : {&m.prev_sibling_d, &m.prev_parent_d, &m.a_lo, &m.a_hi, &m.e_lo, &m.e_hi,
                            &m.i_lo, &m.i_hi, &m.e_top, &m.a_bottom, &m.a_top, &m.i_top, &m.el_a,
                            &m.el_e, &m.el_i, &m.el_node, &m.el_peri, &m.el_m})
        p.put(*vec);
    std::vector<double> armed(m.close_armed.begin(), m.close_armed.end());
    p.put(armed);
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
    if (u.get() != checkpoint_tag || u.get() != static_cast<double>(m.n))
        throw input_error(source_location{"<checkpoint>"},
                          "the checkpoint belongs to another design or another moonwright version");
    finished_ = u.get() != 0.0;
    m.next_sample = static_cast<std::size_t>(u.get());
    m.prev_t = u.get();
    m.max_energy_error = u.get();
    m.max_momentum_error = u.get();
    m.megno_on = u.get() != 0.0;
    for (auto* vec : {&m.prev_sibling_d, &m.prev_parent_d, &m.a_lo, &m.a_hi, &m.e_lo, &m.e_hi,
                      &m.i_lo, &m.i_hi, &m.e_top, &m.a_bottom, &m.a_top, &m.i_top, &m.el_a, &m.el_e,
                      &m.el_i, &m.el_node, &m.el_peri, &m.el_m})
        *vec = u.get_vector();
    const auto armed = u.get_vector();
    m.close_armed.assign(armed.begin(), armed.end());
    const auto pair_data = u.get_vector();
    if (pair_data.size() != 2 * pairs_.size())
        throw input_error(source_location{"<checkpoint>"},
                          "the checkpoint's pair table does not fit");
    for (std::size_t k = 0; k < pairs_.size(); ++k)
        pairs_[k].min_distance_m = pair_data[2 * k], pairs_[k].t_s = pair_data[2 * k + 1];
    m.integ->load_checkpoint(u.get_vector());
    m.read_state();
    samples_ = std::move(samples);
    events_ = std::move(events);
}

} // namespace moonwright
