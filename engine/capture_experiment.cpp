// Capture experiments: per-trial geometry from the seed, Gauss–Radau integration of the star,
// the planet, its moons and the intruder, capture episodes, collisions, and the ensemble summary.
#include "engine/capture_experiment.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/constants.hpp"
#include "engine/error.hpp"
#include "engine/forces.hpp"
#include "engine/nbody_system.hpp"
#include "engine/orbital_elements.hpp"
#include "engine/random.hpp"
#include "engine/resolved_system.hpp"
#include "integrators/integrator.hpp"

#include <algorithm>
#include <cmath>
#include <exception>
#include <fmt/format.h>
#include <memory>
#include <mutex>
#include <thread>

namespace moonwright {

namespace {

namespace c = constants;

double dot(const double* a, const double* b) {
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}
double norm(const double* a) {
    return std::sqrt(dot(a, a));
}
vec3 cross(const vec3& a, const vec3& b) {
    return {a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]};
}
vec3 unit(const vec3& a) {
    const double n = norm(a.data());
    return {a[0] / n, a[1] / n, a[2] / n};
}

/// Position (or velocity) of body k relative to body `from` [m or m/s], from parent-relative
/// coordinates: the relative vectors summed from each body up to their nearest common ancestor
/// (the root's entry is inertial). Summing only the short vectors below that ancestor keeps the
/// digits of a close pair: at 30 AU, inertial positions carry about 1 mm of round-off, and the
/// difference of two of them made the Gauss–Radau step collapse near the planet.
vec3 relative(const nbody_system& sys, const double* rel, int k, int from) {
    auto depth = [&](int j) {
        int d = 0;
        for (; j >= 0; j = sys.bodies_[static_cast<std::size_t>(j)].parent_) ++d;
        return d;
    };
    auto up = [&](int j) { return sys.bodies_[static_cast<std::size_t>(j)].parent_; };
    vec3 out{0, 0, 0};
    int a = k, b = from;
    int da = depth(a), db = depth(b);
    while (a != b) {
        if (da >= db) {
            for (int d = 0; d < 3; ++d) out[static_cast<std::size_t>(d)] += rel[3 * a + d];
            a = up(a);
            --da;
        } else {
            for (int d = 0; d < 3; ++d) out[static_cast<std::size_t>(d)] -= rel[3 * b + d];
            b = up(b);
            --db;
        }
    }
    return out;
}

/// A uniformly random rotation (Shoemake 1992, Graphics Gems III: a uniform unit quaternion,
/// here from four normal deviates), as a 3x3 row-major matrix.
std::array<double, 9> random_rotation(rng& g) {
    double w = 0, x = 0, y = 0, z = 0, n = 0;
    do {
        w = g.normal();
        x = g.normal();
        y = g.normal();
        z = g.normal();
        n = std::sqrt(w * w + x * x + y * y + z * z);
    } while (!(n > 1e-12));
    w /= n;
    x /= n;
    y /= n;
    z /= n;
    return {1 - 2 * (y * y + z * z), 2 * (x * y - z * w),     2 * (x * z + y * w),
            2 * (x * y + z * w),     1 - 2 * (x * x + z * z), 2 * (y * z - x * w),
            2 * (x * z - y * w),     2 * (y * z + x * w),     1 - 2 * (x * x + y * y)};
}
vec3 rotate(const std::array<double, 9>& m, const vec3& a) {
    return {m[0] * a[0] + m[1] * a[1] + m[2] * a[2], m[3] * a[0] + m[4] * a[1] + m[5] * a[2],
            m[6] * a[0] + m[7] * a[1] + m[8] * a[2]};
}

double resolve_length(const quantity& q, double hill, double radius) {
    switch (q.ref) {
    case length_ref::parent_hill:
        return q.value * hill;
    case length_ref::parent_radii:
        return q.value * radius;
    case length_ref::absolute:
        return q.value;
    }
    return q.value;
}

/// Pericentre of a planetocentric hyperbola from its impact parameter: b^2 = q^2 + 2 GM q / v^2
/// (gravitational focusing; e.g. Murray & Dermott, Solar System Dynamics, Sec. 2.x hyperbolic
/// orbits: b = |a| sqrt(e^2 - 1), q = |a| (e - 1), a = -GM / v^2).
double pericentre_from_b(double gm, double vinf, double b) {
    const double s = gm / (vinf * vinf);
    return -s + std::sqrt(s * s + b * b);
}
double b_from_pericentre(double gm, double vinf, double q) {
    return std::sqrt(q * q + 2 * gm * q / (vinf * vinf));
}

double member_radius(double given, double mass, double density) {
    if (given > 0) return given;
    return std::cbrt(3 * mass / (4 * c::pi * density));
}

/// Smallest |a + s (b - a)| for s in [0, 1]: the closest approach on the straight segment
/// between two checks.
double segment_min_distance(const vec3& a, const vec3& b) {
    const vec3 d{b[0] - a[0], b[1] - a[1], b[2] - a[2]};
    const double dd = dot(d.data(), d.data());
    double s = dd > 0 ? -dot(a.data(), d.data()) / dd : 0;
    s = std::clamp(s, 0.0, 1.0);
    const vec3 p{a[0] + s * d[0], a[1] + s * d[1], a[2] + s * d[2]};
    return norm(p.data());
}

struct member_track {
    int body = 0;
    double mass = 0, radius = 0;
    bool in_episode = false, qualified = false, done = false, approached = false;
    double episode_start = 0;
    vec3 prev_rel{};             ///< position relative to the planet at the previous check
    std::vector<vec3> prev_moon; ///< relative to each moon at the previous check
};

} // namespace

double jacobi_constant(double gm_star, double gm_planet, const double* xs, const double* vs,
                       const double* xp, const double* vp, const double* x, const double* v) {
    const double mt = gm_star + gm_planet;
    vec3 xb{}, vb{}, rp{}, vpr{};
    for (int k = 0; k < 3; ++k) {
        xb[k] = (gm_star * xs[k] + gm_planet * xp[k]) / mt;
        vb[k] = (gm_star * vs[k] + gm_planet * vp[k]) / mt;
        rp[k] = xp[k] - xs[k];
        vpr[k] = vp[k] - vs[k];
    }
    const double dist = norm(rp.data());
    const double n = std::sqrt(mt / (dist * dist * dist));
    const vec3 zhat = unit(cross(rp, vpr));
    const vec3 omega{n * zhat[0], n * zhat[1], n * zhat[2]};
    vec3 r{}, w{}, r1{}, r2{};
    for (int k = 0; k < 3; ++k) {
        r[k] = x[k] - xb[k];
        w[k] = v[k] - vb[k];
        r1[k] = x[k] - xs[k];
        r2[k] = x[k] - xp[k];
    }
    // Velocity in the rotating frame: v_rot = v - omega x r.
    const vec3 oxr = cross(omega, r);
    const vec3 vrot{w[0] - oxr[0], w[1] - oxr[1], w[2] - oxr[2]};
    const double z = dot(r.data(), zhat.data());
    const double rho2 = dot(r.data(), r.data()) - z * z;
    // Murray & Dermott eq. 3.17 (dimensional): C = n^2 (x^2 + y^2) + 2 (GM1/r1 + GM2/r2) - v^2.
    return n * n * rho2 + 2 * (gm_star / norm(r1.data()) + gm_planet / norm(r2.data())) -
           dot(vrot.data(), vrot.data());
}

double jacobi_constant_l1(double gm_star, double gm_planet, double d_m) {
    const double mt = gm_star + gm_planet;
    const double n2 = mt / (d_m * d_m * d_m);
    const double xs = -d_m * gm_planet / mt, xp = d_m * gm_star / mt;
    // dU/dx on the line between the bodies (Murray & Dermott Sec. 3.5): zero at L1.
    auto slope = [&](double x) {
        const double r1 = x - xs, r2 = xp - x;
        return n2 * x - gm_star / (r1 * r1) + gm_planet / (r2 * r2);
    };
    const double rh = d_m * std::cbrt(gm_planet / (3 * gm_star));
    double lo = std::max(xs + 0.01 * d_m, xp - 5 * rh), hi = xp - 1e-4 * rh;
    for (int it = 0; it < 200; ++it) {
        const double mid = 0.5 * (lo + hi);
        if ((slope(mid) > 0) == (slope(lo) > 0))
            lo = mid;
        else
            hi = mid;
    }
    const double x = 0.5 * (lo + hi);
    return n2 * x * x + 2 * (gm_star / (x - xs) + gm_planet / (xp - x));
}

capture_setting prepare_capture(const design& d, const capture_options& o) {
    const source_location opts{"<options>"};
    const resolved_system rs = resolve(d, o.seed);
    const int ip = rs.find(o.planet);
    if (ip < 0 || rs.bodies[static_cast<std::size_t>(ip)].kind != body_kind::planet) {
        std::string names;
        for (const auto& b : rs.bodies)
            if (b.kind == body_kind::planet) names += (names.empty() ? "" : ", ") + b.name;
        throw input_error(opts, "--planet", "\"" + o.planet + "\"",
                          "the name of a planet in the design (" + names + ")");
    }
    if (o.trials == 0) throw input_error(opts, "--trials", "0", "at least 1 trial");
    const resolved_body& p = rs.bodies[static_cast<std::size_t>(ip)];
    const resolved_body& star = rs.bodies[0];
    capture_setting s;
    s.planet_mass_kg = p.mass_kg;
    s.planet_radius_m = p.radius_m;
    s.star_mass_kg = star.mass_kg;
    s.hill_radius_m = hill_radius(p.orbit->a_m, p.orbit->e, p.mass_kg, star.mass_kg);
    s.planet_period_s = kepler_period(p.orbit->a_m, star.mass_kg, p.mass_kg);
    s.span_s = o.span_s.value_or(20 * s.planet_period_s);
    if (!(s.span_s > 0))
        throw input_error(opts, "--span", fmt::format("{} s", s.span_s), "a positive time");

    const bool paired = o.pair.has_value();
    if (o.mechanism == capture_mechanism::binary && !paired)
        throw input_error(opts, "--pair", "", "a pair (m1=, m2=, sep=) for --mechanism binary");
    if (o.mechanism != capture_mechanism::binary && paired)
        throw input_error(opts, "--pair", "given",
                          "--mechanism binary when a pair arrives (or leave --pair out)");
    if (o.mechanism == capture_mechanism::drag && !o.envelope)
        throw input_error(opts, "--envelope", "",
                          "an envelope (rho0=, k=, cutoff=) for --mechanism drag");
    if (o.mechanism != capture_mechanism::drag && o.envelope)
        throw input_error(opts, "--envelope", "given",
                          "--mechanism drag when an envelope is given");
    if (paired && o.intruder.mass_kg > 0)
        throw input_error(opts, "--intruder mass", "given with --pair",
                          "the masses in --pair only (m1=, m2=)");
    if (!paired && !(o.intruder.mass_kg > 0))
        throw input_error(opts, "--intruder mass", "", "the intruder's mass, e.g. mass=1e18 kg");
    if (o.envelope) {
        if (o.envelope->corotating && !p.rotation_period_s)
            throw input_error(opts, "--envelope gas", "corotating",
                              "a rotation period for planet '" + p.name + "' in the design");
        s.envelope_cutoff_m =
            resolve_length(o.envelope->cutoff, s.hill_radius_m, s.planet_radius_m);
        if (!(s.envelope_cutoff_m > s.planet_radius_m))
            throw input_error(opts, "--envelope cutoff", fmt::format("{} m", s.envelope_cutoff_m),
                              "a cutoff beyond the planet's radius");
    }
    if (o.intruder.arrival == arrival_kind::hyperbolic) {
        s.start_m = resolve_length(o.intruder.start, s.hill_radius_m, s.planet_radius_m);
        s.range_min_m = resolve_length(o.intruder.range_min, s.hill_radius_m, s.planet_radius_m);
        s.range_max_m = resolve_length(o.intruder.range_max, s.hill_radius_m, s.planet_radius_m);
        const double m = paired ? o.pair->m1_kg + o.pair->m2_kg : o.intruder.mass_kg;
        const double gm = c::G * (p.mass_kg + m);
        const double qmax = o.intruder.range_is_pericentre
                                ? s.range_max_m
                                : pericentre_from_b(gm, o.intruder.vinf_m_s, s.range_max_m);
        if (!(qmax < s.start_m))
            throw input_error(
                source_location{"--intruder"},
                o.intruder.range_is_pericentre ? "--intruder q" : "--intruder b",
                fmt::format("up to a pericentre of {:.4g} RH", qmax / s.hill_radius_m),
                fmt::format("pericentres inside the starting distance start = {:.4g} RH",
                            s.start_m / s.hill_radius_m));
    }
    for (const auto& b : rs.bodies)
        if (b.parent == ip) s.moon_names.push_back(b.name);
    return s;
}

capture_trial_result run_capture_trial(const design& d, const capture_options& o,
                                       const capture_setting& s, std::size_t trial) {
    capture_trial_result res;
    res.trial = trial;
    res.seed = derive_seed(o.seed, trial);
    rng g(res.seed);
    // Angles the design leaves out (moon phases, nodes) are drawn anew for every trial.
    const resolved_system rs = resolve(d, derive_seed(o.seed, trial, 1));
    nbody_system base = build_nbody(rs);
    const int ip = rs.find(o.planet);
    const auto upl = static_cast<std::size_t>(ip);
    std::vector<int> moons;
    for (std::size_t k = 0; k < rs.bodies.size(); ++k)
        if (rs.bodies[k].parent == ip) moons.push_back(static_cast<int>(k));

    const bool paired = o.pair.has_value();
    const double m1 = paired ? o.pair->m1_kg : o.intruder.mass_kg;
    const double m2 = paired ? o.pair->m2_kg : 0.0;
    const double mtot = m1 + m2;
    const double gm_planet = c::G * s.planet_mass_kg;
    const double gm_pl_intr = c::G * (s.planet_mass_kg + mtot);

    const vec3 xs{base.x_[0], base.x_[1], base.x_[2]}, vs{base.v_[0], base.v_[1], base.v_[2]};
    const vec3 xp{base.x_[3 * upl], base.x_[3 * upl + 1], base.x_[3 * upl + 2]};
    const vec3 vp{base.v_[3 * upl], base.v_[3 * upl + 1], base.v_[3 * upl + 2]};

    // Centre of mass of the intruder: inertial state.
    vec3 xc{}, vc{};
    if (o.intruder.arrival == arrival_kind::hyperbolic) {
        const double vinf = o.intruder.vinf_m_s;
        res.vinf_m_s = vinf;
        // Impact parameters uniform in b^2 (uniform flux through the target disc); a q range is
        // first turned into the b range with the same pericentres.
        double blo = s.range_min_m, bhi = s.range_max_m;
        if (o.intruder.range_is_pericentre) {
            blo = b_from_pericentre(gm_pl_intr, vinf, blo);
            bhi = b_from_pericentre(gm_pl_intr, vinf, bhi);
        }
        const double u = g.uniform();
        res.b_m = std::sqrt(blo * blo + u * (bhi * bhi - blo * blo));
        res.q_m = pericentre_from_b(gm_pl_intr, vinf, res.b_m);
        const double e = 1 + res.q_m * vinf * vinf / gm_pl_intr;
        const double p = res.q_m * (1 + e);
        const double cos_nu = std::clamp((p / s.start_m - 1) / e, -1.0, 1.0);
        orbital_elements el;
        el.q = res.q_m;
        el.e = e;
        el.nu = -std::acos(cos_nu); // inbound
        const cartesian_state cs = elements_to_cartesian(gm_pl_intr, el);
        std::array<double, 9> rot{};
        if (o.intruder.planar) {
            // In the planet's orbital plane, at a random angle, prograde or retrograde.
            const vec3 rp{xp[0] - xs[0], xp[1] - xs[1], xp[2] - xs[2]};
            const vec3 vr{vp[0] - vs[0], vp[1] - vs[1], vp[2] - vs[2]};
            const vec3 z = unit(cross(rp, vr));
            const vec3 x0 = unit(rp);
            const vec3 y0 = cross(z, x0);
            const double phi = g.uniform(0, c::two_pi);
            const double sense = g.uniform() < 0.5 ? 1.0 : -1.0;
            const vec3 ex{std::cos(phi) * x0[0] + std::sin(phi) * y0[0],
                          std::cos(phi) * x0[1] + std::sin(phi) * y0[1],
                          std::cos(phi) * x0[2] + std::sin(phi) * y0[2]};
            vec3 ey = cross(z, ex);
            for (auto& a : ey) a *= sense;
            rot = {ex[0], ey[0], z[0], ex[1], ey[1], z[1], ex[2], ey[2], z[2]};
        } else {
            rot = random_rotation(g);
        }
        const vec3 r = rotate(rot, cs.r), v = rotate(rot, cs.v);
        for (int k = 0; k < 3; ++k) {
            xc[k] = xp[k] + r[k];
            vc[k] = vp[k] + v[k];
        }
    } else {
        const auto& in = o.intruder;
        const double node = in.node_rad.value_or(g.uniform(0, c::two_pi));
        const double peri = in.peri_rad.value_or(g.uniform(0, c::two_pi));
        const double mean = in.mean_anomaly_rad.value_or(g.uniform(0, c::two_pi));
        const orbital_elements el =
            elements_from_mean(in.a_m, in.e, in.i_rad.value_or(0.0), node, peri, mean);
        const cartesian_state cs = elements_to_cartesian(c::G * (s.star_mass_kg + mtot), el);
        res.b_m = res.q_m = std::nan("");
        res.vinf_m_s = std::nan("");
        for (int k = 0; k < 3; ++k) {
            xc[k] = xs[k] + cs.r[k];
            vc[k] = vs[k] + cs.v[k];
        }
    }
    res.jacobi = jacobi_constant(c::G * s.star_mass_kg, gm_planet, xs.data(), vs.data(), xp.data(),
                                 vp.data(), xc.data(), vc.data());
    {
        const vec3 rp{xp[0] - xs[0], xp[1] - xs[1], xp[2] - xs[2]};
        res.jacobi_l1 = jacobi_constant_l1(c::G * s.star_mass_kg, gm_planet, norm(rp.data()));
    }

    // Members: inertial states, then the bodies appended to the design's model.
    std::vector<nbody_body> bodies = base.bodies_;
    std::vector<double> x = base.x_, v = base.v_;
    std::vector<member_track> tracks;
    auto add_member = [&](const std::string& name, int parent, double m, double radius,
                          const vec3& xm, const vec3& vm) {
        nbody_body b;
        b.name_ = name;
        b.kind_ = body_kind::moon; // the members start as children of the planet
        b.parent_ = parent;
        b.gm_ = c::G * m;
        b.radius_ = radius;
        bodies.push_back(b);
        for (int k = 0; k < 3; ++k) {
            x.push_back(xm[k]);
            v.push_back(vm[k]);
        }
        member_track t;
        t.body = static_cast<int>(bodies.size()) - 1;
        t.mass = m;
        t.radius = radius;
        t.approached = o.intruder.arrival == arrival_kind::hyperbolic;
        tracks.push_back(t);
    };
    const double dens = o.intruder.density_kg_m3;
    if (!paired) {
        add_member("intruder", ip, m1, member_radius(o.intruder.radius_m, m1, dens), xc, vc);
    } else {
        const pair_spec& pr = *o.pair;
        const double inc = std::acos(g.uniform(-1.0, 1.0));
        const orbital_elements el =
            elements_from_mean(pr.sep_m, pr.e, inc, g.uniform(0, c::two_pi),
                               g.uniform(0, c::two_pi), g.uniform(0, c::two_pi));
        const cartesian_state rel = elements_to_cartesian(c::G * mtot, el);
        vec3 x1{}, v1{}, x2{}, v2{};
        for (int k = 0; k < 3; ++k) {
            x1[k] = xc[k] - m2 / mtot * rel.r[k];
            v1[k] = vc[k] - m2 / mtot * rel.v[k];
            x2[k] = xc[k] + m1 / mtot * rel.r[k];
            v2[k] = vc[k] + m1 / mtot * rel.v[k];
        }
        add_member("member1", ip, m1, member_radius(pr.r1_m, m1, dens), x1, v1);
        add_member("member2", static_cast<int>(bodies.size()) - 1, m2,
                   member_radius(pr.r2_m, m2, dens), x2, v2);
    }
    const nbody_system sys = make_nbody(bodies, x, v);

    std::vector<extra_force> extra;
    if (o.envelope) {
        const envelope_spec env = *o.envelope;
        const double rp_m = s.planet_radius_m, cutoff = s.envelope_cutoff_m, mp = s.planet_mass_kg;
        vec3 omega{0, 0, 0};
        if (env.corotating) {
            const double w = c::two_pi / *rs.bodies[upl].rotation_period_s;
            const vec3& ax = base.bodies_[upl].spin_axis_;
            omega = {w * ax[0], w * ax[1], w * ax[2]};
        }
        std::vector<std::pair<int, double>> targets; // body, A / m
        for (const auto& t : tracks)
            targets.emplace_back(t.body, c::pi * t.radius * t.radius / t.mass);
        std::vector<double> masses;
        for (const auto& t : tracks) masses.push_back(t.mass);
        extra.push_back(extra_force{
            "envelope drag", true,
            [=](double, const nbody_system& sy, const double* rq, const double* rv, double* acc) {
                for (std::size_t j = 0; j < targets.size(); ++j) {
                    const int k = targets[j].first;
                    const vec3 r = relative(sy, rq, k, ip), vr = relative(sy, rv, k, ip);
                    const double dist = norm(r.data());
                    if (dist > cutoff) continue;
                    // rho(r) = rho0 (r / R_p)^-k, held at rho0 below the surface.
                    const double rho =
                        env.rho0_kg_m3 * std::pow(std::max(dist, rp_m) / rp_m, -env.k);
                    const vec3 oxr = cross(omega, r);
                    const vec3 w{vr[0] - oxr[0], vr[1] - oxr[1], vr[2] - oxr[2]};
                    const double speed = norm(w.data());
                    // Pollack, Burns & Tauber 1979 (Icarus 37, 587): a = -1/2 C_D rho A v|v| / m.
                    const double f = -0.5 * env.drag_coefficient * rho * targets[j].second * speed;
                    for (int dd = 0; dd < 3; ++dd) {
                        const double a = f * w[dd];
                        acc[3 * k + dd] += a;
                        // The gas belongs to the planet: equal and opposite force on it.
                        acc[3 * ip + dd] -= a * masses[j] / mp;
                    }
                }
            }});
    }

    // Work budget: a zero force that counts the integrator's force evaluations and stops the
    // trial when they exceed the budget. A Gauss–Radau step can collapse to microseconds far
    // from any close encounter (seen with a 1e21 kg pair at 0.02 RH from an ice giant: steps of
    // 1e-5 s at 1.1 yr); without a budget such a trial never ends.
    struct budget_exceeded {};
    if (o.max_force_evaluations > 0) {
        auto count = std::make_shared<std::size_t>(0);
        const std::size_t budget = o.max_force_evaluations;
        extra.push_back(extra_force{
            "work budget", false,
            [count, budget](double, const nbody_system&, const double*, const double*, double*) {
                if (++*count > budget) throw budget_exceeded{};
            }});
    }

    integrator_options io;
    io.radau_epsilon = o.radau_epsilon;
    auto integ = make_integrator("radau", sys, extra, io);

    std::vector<double> q, vv;
    integ->relative_state(q, vv);
    // Position and velocity of body k relative to body j.
    auto pos = [&](int k, int j) { return relative(sys, q.data(), k, j); };
    auto vel = [&](int k, int j) { return relative(sys, vv.data(), k, j); };

    // Moons: starting eccentricities.
    std::vector<double> moon_e0;
    for (int mk : moons) {
        const double gm = c::G * s.planet_mass_kg + sys.bodies_[static_cast<std::size_t>(mk)].gm_;
        const cartesian_state st{pos(mk, ip), vel(mk, ip)};
        moon_e0.push_back(cartesian_to_elements(gm, st).e);
    }
    for (auto& t : tracks) {
        t.prev_rel = pos(t.body, ip);
        for (int mk : moons) t.prev_moon.push_back(pos(t.body, mk));
    }
    res.min_distance_m = norm(tracks[0].prev_rel.data());

    const double base_dt = s.planet_period_s / 1000;
    const double leave = o.leave_factor * std::max(s.start_m, s.hill_radius_m);
    double t = 0;
    bool collided = false;
    auto end_episode = [&](member_track& tr, capture_member_result& mr, double now) {
        if (tr.in_episode && tr.qualified) mr.durations_s.push_back(now - tr.episode_start);
        tr.in_episode = false;
        tr.qualified = false;
    };
    res.members.resize(tracks.size());
    try {
        while (t < s.span_s && !collided) {
            // Next check: a small fraction of the time to reach the planet or a moon.
            double tau = base_dt;
            for (const auto& tr : tracks) {
                if (tr.done) continue;
                std::vector<int> near{ip};
                near.insert(near.end(), moons.begin(), moons.end());
                for (int k : near) {
                    const vec3 r = pos(tr.body, k), w = vel(tr.body, k);
                    const double sp = norm(w.data());
                    if (sp > 0) tau = std::min(tau, o.check_fraction * norm(r.data()) / sp);
                }
            }
            tau = std::max(tau, base_dt * 1e-6);
            t = std::min(s.span_s, t + tau);
            integ->integrate(t);
            integ->relative_state(q, vv);
            bool all_done = true;
            for (std::size_t j = 0; j < tracks.size(); ++j) {
                member_track& tr = tracks[j];
                capture_member_result& mr = res.members[j];
                const vec3 r = pos(tr.body, ip), w = vel(tr.body, ip);
                const double dist = norm(r.data());
                // Collisions on the straight segment since the last check.
                const double dmin = segment_min_distance(tr.prev_rel, r);
                res.min_distance_m = std::min(res.min_distance_m, dmin);
                if (dmin < s.planet_radius_m + tr.radius) {
                    collided = true;
                    mr.fate = "impact";
                    res.collided_with = o.planet;
                    res.outcome = "impact";
                }
                for (std::size_t m = 0; m < moons.size() && !collided; ++m) {
                    const int mk = moons[m];
                    const vec3 rm = pos(tr.body, mk);
                    if (segment_min_distance(tr.prev_moon[m], rm) <
                        sys.bodies_[static_cast<std::size_t>(mk)].radius_ + tr.radius) {
                        collided = true;
                        mr.fate = "moon-collision";
                        res.collided_with = sys.bodies_[static_cast<std::size_t>(mk)].name_;
                        res.outcome = "moon-collision";
                        ++res.moons_hit;
                    }
                    tr.prev_moon[m] = rm;
                }
                tr.prev_rel = r;
                if (collided) {
                    end_episode(tr, mr, t);
                    break;
                }
                // Capture episodes: inside the Hill sphere with negative two-body energy.
                const double gm = c::G * (s.planet_mass_kg + tr.mass);
                const double energy = 0.5 * dot(w.data(), w.data()) - gm / dist;
                const bool bound = dist < s.hill_radius_m && energy < 0;
                if (bound) {
                    if (!tr.in_episode) {
                        tr.in_episode = true;
                        tr.qualified = false;
                        tr.episode_start = t;
                    }
                    const double a = -gm / (2 * energy);
                    const double period = c::two_pi * std::sqrt(a * a * a / gm);
                    if (!tr.qualified && t - tr.episode_start >= period) {
                        tr.qualified = true;
                        mr.captured = true;
                        ++mr.episodes;
                    }
                } else {
                    end_episode(tr, mr, t);
                }
                if (dist < std::max(s.start_m, s.hill_radius_m)) tr.approached = true;
                if (tr.approached && dist > leave && dot(r.data(), w.data()) > 0) tr.done = true;
                if (!tr.done) all_done = false;
            }
            // Moons' eccentricity changes.
            for (std::size_t m = 0; m < moons.size(); ++m) {
                const int mk = moons[m];
                const double gm =
                    c::G * s.planet_mass_kg + sys.bodies_[static_cast<std::size_t>(mk)].gm_;
                const cartesian_state st{pos(mk, ip), vel(mk, ip)};
                const orbital_elements el = cartesian_to_elements(gm, st);
                res.moon_max_de = std::max(res.moon_max_de, std::abs(el.e - moon_e0[m]));
            }
            if (all_done) break;
        }
    } catch (const numerical_error& e) {
        res.outcome = "failed";
        res.collided_with = e.what();
    } catch (const budget_exceeded&) {
        // The integrator's state is the last accepted step: the final checks below use it.
        res.outcome = "unresolved";
        res.collided_with =
            fmt::format("work budget of {} force evaluations exhausted", o.max_force_evaluations);
        integ->relative_state(q, vv);
    }
    res.end_s = res.outcome == "unresolved" ? integ->time() : t;

    // Final state of every member.
    const vec3 rp = pos(ip, 0), vpr = vel(ip, 0);
    const vec3 plane_normal = unit(cross(rp, vpr));
    for (std::size_t j = 0; j < tracks.size(); ++j) {
        member_track& tr = tracks[j];
        capture_member_result& mr = res.members[j];
        if (tr.in_episode && tr.qualified) {
            mr.kept = true;
            mr.fate = "kept";
            mr.durations_s.push_back(t - tr.episode_start);
        } else if (!collided) {
            mr.fate = tr.in_episode ? "bound" : tr.done ? "left" : "unbound";
        }
        for (double dur : mr.durations_s) mr.longest_s = std::max(mr.longest_s, dur);
        if (collided) continue;
        const double gm = c::G * (s.planet_mass_kg + tr.mass);
        const cartesian_state st{pos(tr.body, ip), vel(tr.body, ip)};
        const double dist = norm(st.r.data());
        const double energy = 0.5 * dot(st.v.data(), st.v.data()) - gm / dist;
        if (energy < 0 && dist < s.hill_radius_m) {
            const orbital_elements el = cartesian_to_elements(gm, st);
            mr.a_hill = semi_major_axis(el) / s.hill_radius_m;
            mr.e = el.e;
            const vec3 h = unit(cross(st.r, st.v));
            mr.i_rad = std::acos(std::clamp(dot(h.data(), plane_normal.data()), -1.0, 1.0));
        }
    }
    if (paired) {
        const int b1 = tracks[0].body, b2 = tracks[1].body;
        const vec3 r12 = pos(b2, b1), v12 = vel(b2, b1);
        const double e12 = 0.5 * dot(v12.data(), v12.data()) - c::G * mtot / norm(r12.data());
        res.pair_split = e12 >= 0;
    }
    // Moons after the encounter.
    for (std::size_t m = 0; m < moons.size(); ++m) {
        const int mk = moons[m];
        const double gm = c::G * s.planet_mass_kg + sys.bodies_[static_cast<std::size_t>(mk)].gm_;
        const cartesian_state st{pos(mk, ip), vel(mk, ip)};
        const double dist = norm(st.r.data());
        if (0.5 * dot(st.v.data(), st.v.data()) - gm / dist >= 0 || dist > s.hill_radius_m)
            ++res.moons_unbound;
    }
    if (res.outcome.empty()) {
        std::size_t kept = 0, captured = 0;
        for (const auto& mr : res.members) {
            kept += mr.kept ? 1 : 0;
            captured += mr.captured ? 1 : 0;
        }
        if (paired && kept == 1 && res.pair_split)
            res.outcome = "exchange";
        else if (kept > 0)
            res.outcome = "kept";
        else if (captured > 0)
            res.outcome = "temporary";
        else
            res.outcome = "flyby";
    }
    return res;
}

capture_summary summarize_capture(const std::vector<capture_trial_result>& trials) {
    capture_summary s;
    s.trials = trials.size();
    for (const auto& t : trials) {
        bool captured = false, kept = false;
        for (const auto& m : t.members) {
            captured = captured || m.captured;
            kept = kept || m.kept;
            s.durations_s.insert(s.durations_s.end(), m.durations_s.begin(), m.durations_s.end());
            if (m.kept && std::isfinite(m.a_hill)) {
                s.final_a_hill.push_back(m.a_hill);
                s.final_e.push_back(m.e);
                s.final_i_rad.push_back(m.i_rad);
                if (m.i_rad > c::pi / 2)
                    ++s.kept_retrograde;
                else
                    ++s.kept_prograde;
            }
        }
        s.captured += captured ? 1 : 0;
        s.kept += kept ? 1 : 0;
        s.impacts += t.outcome == "impact" ? 1 : 0;
        s.moon_collisions += t.outcome == "moon-collision" ? 1 : 0;
        s.exchanges += t.outcome == "exchange" ? 1 : 0;
        s.failed += t.outcome == "failed" ? 1 : 0;
        s.unresolved += t.outcome == "unresolved" ? 1 : 0;
        s.pair_splits += t.pair_split ? 1 : 0;
        s.moons_hit += static_cast<std::size_t>(t.moons_hit);
        s.moons_unbound += static_cast<std::size_t>(t.moons_unbound);
    }
    s.capture_probability = wilson_interval(s.captured, s.trials);
    s.keep_probability = wilson_interval(s.kept, s.trials);
    return s;
}

capture_result run_capture_experiment(const design& d, const capture_options& o,
                                      const std::function<void(std::size_t)>& progress,
                                      const std::atomic<bool>* stop) {
    capture_result out;
    out.setting = prepare_capture(d, o);
    std::vector<std::optional<capture_trial_result>> slots(o.trials);
    std::atomic<std::size_t> next{0};
    std::size_t done = 0;
    std::mutex lock;
    std::exception_ptr failure;
    auto worker = [&] {
        for (;;) {
            if (stop != nullptr && stop->load()) return;
            const std::size_t i = next.fetch_add(1);
            if (i >= o.trials) return;
            try {
                capture_trial_result r = run_capture_trial(d, o, out.setting, i);
                const std::lock_guard<std::mutex> g(lock);
                slots[i] = std::move(r);
                ++done;
                if (progress) progress(done);
            } catch (...) {
                const std::lock_guard<std::mutex> g(lock);
                if (!failure) failure = std::current_exception();
                next.store(o.trials);
                return;
            }
        }
    };
    const unsigned jobs = std::max(1u, std::min<unsigned>(o.jobs, static_cast<unsigned>(o.trials)));
    std::vector<std::thread> pool;
    for (unsigned j = 1; j < jobs; ++j) pool.emplace_back(worker);
    worker();
    for (auto& th : pool) th.join();
    if (failure) std::rethrow_exception(failure);
    for (auto& s : slots) {
        if (!s) break; // an interrupted experiment keeps the unbroken prefix of trials
        out.trials.push_back(std::move(*s));
    }
    out.summary = summarize_capture(out.trials);
    return out;
}

} // namespace moonwright
