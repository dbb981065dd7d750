// Secular tidal evolution of a planet, its moons and its spin, integrated with Boost.Odeint's
// dense-output Dormand-Prince 5(4) stepper; spin locks are held as constraints (no chattering).
#include "engine/tidal_evolution.hpp"

#include "engine/analytic_rules.hpp"
#include "engine/constants.hpp"
#include "engine/error.hpp"

#include <boost/numeric/odeint.hpp>

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>
#include <sstream>

namespace moonwright {

namespace {

namespace c = constants;
namespace ode = boost::numeric::odeint;
using state_t = std::vector<double>;

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double nan_v = std::numeric_limits<double>::quiet_NaN();

double sgn(double x) {
    return x > 0 ? 1.0 : (x < 0 ? -1.0 : 0.0);
}

std::string fmt_num(double v) {
    std::ostringstream s;
    s.precision(4);
    s << v;
    return s.str();
}

// Hut (1981, A&A 99, 126), eq. 9-11: the polynomials in e^2 of the constant time-lag model.
double hut_f1(double e2) {
    return 1 + e2 * (31.0 / 2 + e2 * (255.0 / 8 + e2 * (185.0 / 16 + e2 * 25.0 / 64)));
}
double hut_f2(double e2) {
    return 1 + e2 * (15.0 / 2 + e2 * (45.0 / 8 + e2 * 5.0 / 16));
}
double hut_f3(double e2) {
    return 1 + e2 * (15.0 / 4 + e2 * (15.0 / 8 + e2 * 5.0 / 64));
}
double hut_f4(double e2) {
    return 1 + e2 * (3.0 / 2 + e2 / 8);
}
double hut_f5(double e2) {
    return 1 + e2 * (3 + e2 * 3.0 / 8);
}

// Hut (1981) eq. 9, 10, 11, with de/dt returned divided by e (so e = 0 is regular).
// Returns {da/dt, (de/dt)/e, dOmega/dt} of the tide raised on the body by the companion.
struct hut_core {
    double da_dt, de_dt_over_e, dspin_dt;
};
hut_core hut(double k2, double tau, double m_body, double r_body, double gyr, double spin,
             double m_comp, double a, double e) {
    // Hut writes k/T with k his apsidal constant and T = R^3/(G M tau). We write k/T =
    // k2 G M dt / R^3 with the Love number k2 and time lag dt: the normalization under which the
    // e -> 0 limits equal the constant-Q rates with 1/Q = (tidal frequency) x dt for both the
    // semidiurnal tide (2 (Omega - n)) and the eccentricity tide (n). Checked in the tests.
    const double k = k2;
    const double t_hut = r_body * r_body * r_body / (c::G * m_body * tau); // Hut's T
    const double q = m_comp / m_body;
    const double n = std::sqrt(c::G * (m_body + m_comp) / (a * a * a));
    const double e2 = e * e, om = 1 - e2, s = std::sqrt(om);
    const double ra = r_body / a, ra2 = ra * ra, ra6 = ra2 * ra2 * ra2, ra8 = ra6 * ra2;
    const double w = spin / n;
    hut_core r{};
    r.da_dt = -6 * (k / t_hut) * q * (1 + q) * ra8 * a / std::pow(om, 7.5) *
              (hut_f1(e2) - om * s * hut_f2(e2) * w);
    r.de_dt_over_e = -27 * (k / t_hut) * q * (1 + q) * ra8 / std::pow(om, 6.5) *
                     (hut_f3(e2) - 11.0 / 18.0 * om * s * hut_f4(e2) * w);
    r.dspin_dt = 3 * (k / t_hut) * q * q / gyr * ra6 * n / std::pow(om, 6) *
                 (hut_f2(e2) - om * s * hut_f5(e2) * w);
    return r;
}

enum class lock_kind { none, moon, star };

struct moon_model {
    double m = 0, radius = 0, k2s = 0, qs = 0, taus = 0;
    bool retro = false, e_zero = false, alive = true;
    double a0 = 0, inner = 0;
    int side = 0; // sign of Omega - n used when |Omega - n| is at round-off level
};

struct moon_terms {
    double da_dt = 0, de_dt_over_e = 0, torque = 0, torque_max = inf;
};

// The physical model of one planet; all in SI.
struct model {
    double M = 0, R = 0, C = 0, I = 0, k2 = 0, q = 0, tau = 0;
    bool lag = false;
    double Ms = 0, ap = 0, ep = 0, np = 0;
    bool star_tide = true;
    double lag_tol = 0;
    std::vector<moon_model> moons;
    lock_kind lock = lock_kind::none;
    int lock_moon = -1;
    int star_side = 0;
    double spin_scale = 1, time_scale = c::Myr;

    double n_of(size_t i, double a) const {
        return std::sqrt(c::G * (M + moons[i].m) / (a * a * a));
    }
    double orbital_l(size_t i, double a, double e) const {
        const double mt = M + moons[i].m;
        return M * moons[i].m / mt * std::sqrt(c::G * mt * a * (1 - e * e));
    }

    // Tides raised on the planet by moon i and on moon i by the planet (moon synchronous).
    moon_terms terms(size_t i, double spin, double a, double e) const {
        const moon_model& mm = moons[i];
        const double n = n_of(i, a);
        moon_terms t;
        if (!lag) {
            // Murray & Dermott (1999) eq. 4.162 (Goldreich & Soter 1966): planet tide on a.
            const double n_signed = mm.retro ? -n : n;
            double s = sgn(spin - n_signed);
            if (std::abs(spin - n_signed) <= 1e-12 * n) s = mm.side;
            const double ra = R / a, ra5 = ra * ra * ra * ra * ra;
            const double kq = k2 / q;
            t.torque_max = 1.5 * kq * c::G * mm.m * mm.m * R * R * R * R * R / std::pow(a, 6);
            t.torque = -s * t.torque_max;
            t.da_dt = (mm.retro ? -s : s) * 3 * kq * (mm.m / M) * ra5 * n * a;
            // Goldreich (1963): e excitation by the planet's tide, sign(2 Omega - 3 n), 57/8
            // (coefficient from memory). Retrograde moons: assumed damping.
            double se = mm.retro ? -1.0 : sgn(2 * spin - 3 * n);
            t.de_dt_over_e = se * 57.0 / 8.0 * kq * (mm.m / M) * ra5 * n;
        } else {
            const double spin_o = mm.retro ? -spin : spin;
            const hut_core h = hut(k2, tau, M, R, C, spin_o, mm.m, a, e);
            t.da_dt = h.da_dt;
            t.de_dt_over_e = h.de_dt_over_e;
            t.torque = I * h.dspin_dt * (mm.retro ? -1 : 1);
        }
        // The tide raised on the synchronous moon by the planet.
        if (mm.taus > 0 && lag) {
            const hut_core h = hut(mm.k2s, mm.taus, mm.m, mm.radius, 0.4, n, M, a, e);
            t.da_dt += h.da_dt;
            t.de_dt_over_e += h.de_dt_over_e;
        } else {
            // Goldreich & Soter (1966) / Murray & Dermott Sec. 4.10: dissipation in a
            // synchronous eccentric moon: de/dt = -(21/2) (k2s/Qs)(M/m)(Rs/a)^5 n e and
            // da/dt = -21 (k2s/Qs)(M/m)(Rs/a)^5 n a e^2 (coefficients from memory).
            const double rs = mm.radius / a, rs5 = rs * rs * rs * rs * rs;
            const double ks = mm.k2s / mm.qs * (M / mm.m) * rs5 * n;
            t.de_dt_over_e += -10.5 * ks;
            t.da_dt += -21 * ks * a * e * e;
        }
        return t;
    }

    // The star's tide on the planet's spin: torque [N m] and its bound.
    std::pair<double, double> star_torque(double spin) const {
        if (!star_tide || Ms <= 0) return {0.0, 0.0};
        if (!lag) {
            // Barnes & O'Brien (2002): dOmega/dt = -sign(Omega - n_p) 3 k2 G M*^2 R^3 /
            // (2 alpha Q M_p a_p^6), i.e. the constant-Q torque of the star's tide.
            const double kmax = 1.5 * k2 / q * c::G * Ms * Ms * std::pow(R, 5) / std::pow(ap, 6);
            double s = sgn(spin - np);
            if (std::abs(spin - np) <= 1e-12 * np) s = star_side;
            return {-s * kmax, kmax};
        }
        const hut_core h = hut(k2, tau, M, R, C, spin, Ms, ap, ep);
        return {I * h.dspin_dt, inf};
    }

    struct rates {
        double dspin = 0;
        std::vector<double> da, de_over_e;
        bool lock_ok = true; // the held lock can be held
        double lock_need = 0, lock_max = 0, darwin = 0;
    };

    double locked_spin(const std::vector<double>& a) const {
        if (lock == lock_kind::moon) return n_of(static_cast<size_t>(lock_moon), a[lock_moon]);
        return np;
    }

    rates eval(double spin_free, const std::vector<double>& a, const std::vector<double>& e) const {
        const size_t nm = moons.size();
        rates r;
        r.da.assign(nm, 0.0);
        r.de_over_e.assign(nm, 0.0);
        const double spin = lock == lock_kind::none ? spin_free : locked_spin(a);
        double t_ext = 0;
        std::vector<moon_terms> ts(nm);
        for (size_t i = 0; i < nm; ++i) {
            if (!moons[i].alive) continue;
            ts[i] = terms(i, spin, a[i], e[i]);
            r.da[i] = ts[i].da_dt;
            r.de_over_e[i] = ts[i].de_dt_over_e;
            if (!(lock == lock_kind::moon && static_cast<int>(i) == lock_moon))
                t_ext += ts[i].torque;
        }
        const auto [ts_star, ts_star_max] = star_torque(spin);
        if (lock == lock_kind::none) {
            r.dspin = (t_ext + ts_star) / I;
        } else if (lock == lock_kind::star) {
            r.dspin = 0;
            r.lock_need = -t_ext; // the star's tide must cancel the moons' torques
            r.lock_max = ts_star_max;
            r.lock_ok = std::abs(r.lock_need) <= r.lock_max;
        } else {
            // Planet spin held at the moon's mean motion: total angular momentum of spin and
            // orbit changes only by the external torques (star, other moons); the lock is
            // stable only when the orbit holds more than 3 times the spin angular momentum
            // (Darwin's criterion; Hut 1980, A&A 92, 167).
            const auto i = static_cast<size_t>(lock_moon);
            t_ext += ts_star;
            const double n = n_of(i, a[i]);
            const double l = orbital_l(i, a[i], e[i]);
            const double de = r.de_over_e[i] * e[i];
            const double d = l / (2 * a[i]) - 1.5 * I * n / a[i];
            r.darwin = d;
            const double da = d > 0 ? (t_ext + l * e[i] * de / (1 - e[i] * e[i])) / d : 0.0;
            r.da[i] = da;
            r.dspin = -1.5 * n / a[i] * da;
            r.lock_need = I * r.dspin - t_ext;
            r.lock_max = ts[i].torque_max;
            r.lock_ok = d > 0 && std::abs(r.lock_need) <= r.lock_max;
        }
        return r;
    }

    // Scaled state: x[0] = Omega / spin_scale, x[1+2i] = ln(a_i / a0_i), x[2+2i] = ln e_i.
    void unpack(const state_t& x, double& spin, std::vector<double>& a,
                std::vector<double>& e) const {
        const size_t nm = moons.size();
        a.resize(nm);
        e.resize(nm);
        spin = x[0] * spin_scale;
        for (size_t i = 0; i < nm; ++i) {
            a[i] = moons[i].a0 * std::exp(x[1 + 2 * i]);
            // e is held below 0.95: the secular formulas are low-order in e.
            e[i] = moons[i].e_zero ? 0.0 : std::min(std::exp(x[2 + 2 * i]), 0.95);
        }
    }

    void operator()(const state_t& x, state_t& dxdt, double /*tau*/) const {
        double spin = 0;
        std::vector<double> a, e;
        unpack(x, spin, a, e);
        const rates r = eval(spin, a, e);
        dxdt.assign(x.size(), 0.0);
        dxdt[0] = r.dspin * time_scale / spin_scale;
        for (size_t i = 0; i < moons.size(); ++i) {
            if (!moons[i].alive) continue;
            dxdt[1 + 2 * i] = r.da[i] / a[i] * time_scale;
            if (!moons[i].e_zero) dxdt[2 + 2 * i] = r.de_over_e[i] * time_scale;
        }
    }
};

double stab_limit(const model& md, size_t i, double e) {
    return stability_limit(md.ap, md.ep, md.M, md.Ms, e, md.moons[i].retro);
}

} // namespace

double constant_q_da_dt(double k2, double q, double planet_mass, double planet_radius,
                        double planet_spin, double moon_mass, double a, bool retrograde) {
    const double n = std::sqrt(c::G * (planet_mass + moon_mass) / (a * a * a));
    const double s = retrograde ? -1.0 : sgn(planet_spin - n);
    return s * 3 * k2 / q * (moon_mass / planet_mass) * std::pow(planet_radius / a, 5) * n * a;
}

hut_rates constant_time_lag_rates(double k2, double time_lag_s, double body_mass,
                                  double body_radius, double gyration_factor, double spin,
                                  double companion_mass, double a, double e) {
    const hut_core h =
        hut(k2, time_lag_s, body_mass, body_radius, gyration_factor, spin, companion_mass, a, e);
    return {h.da_dt, h.de_dt_over_e * e, h.dspin_dt};
}

double homogeneous_k2(double mass, double radius, double rigidity_pa) {
    const double rho = mass / sphere_volume(radius);
    const double g = surface_gravity(mass, radius);
    return 1.5 / (1 + 19 * rigidity_pa / (2 * rho * g * radius));
}

double despin_time(double spin_rate, double a, double moon_mass, double moon_radius, double moon_k2,
                   double moon_q, double planet_mass) {
    const double inertia = 0.4 * moon_mass * moon_radius * moon_radius;
    return spin_rate * std::pow(a, 6) * inertia * moon_q /
           (3 * c::G * planet_mass * planet_mass * moon_k2 * std::pow(moon_radius, 5));
}

double max_moon_mass(double f, double a_planet, double star_mass, double planet_mass,
                     double planet_radius, double k2p, double qp, double span_s) {
    const double fa = f * a_planet;
    return 2.0 / 13.0 * std::pow(fa * fa * fa / (3 * star_mass), 13.0 / 6.0) *
           std::pow(planet_mass, 8.0 / 3.0) * qp /
           (3 * k2p * span_s * std::sqrt(c::G) * std::pow(planet_radius, 5));
}

tidal_evolution evolve_tides(const resolved_system& sys, int planet_index,
                             const tidal_options& opt) {
    const auto& bodies = sys.bodies;
    if (planet_index < 0 || planet_index >= static_cast<int>(bodies.size()))
        throw input_error({}, "tides.planet", std::to_string(planet_index),
                          "the index of a body in the design");
    const resolved_body& pl = bodies[planet_index];
    if (!pl.rotation_period_s || *pl.rotation_period_s == 0)
        throw input_error({}, body_field(pl.name, "rotation_period"), "nothing",
                          "a rotation period: the tidal model needs the planet's spin");
    if (pl.parent < 0 || !pl.orbit)
        throw input_error({}, body_field(pl.name, "orbits"), "no parent",
                          "a planet that orbits a star");
    if (pl.mass_kg <= 0 || pl.radius_m <= 0)
        throw input_error({}, body_field(pl.name, "radius"), fmt_num(pl.radius_m) + " m",
                          "a planet with positive mass and radius");
    const resolved_body& st = bodies[pl.parent];

    tidal_evolution out;
    out.planet_name = pl.name;
    out.star_name = st.name;
    out.planet_index = planet_index;
    out.model = opt.model;

    model md;
    md.M = pl.mass_kg;
    md.R = pl.radius_m;
    const double rho_p = pl.mass_kg / sphere_volume(pl.radius_m);
    const bool rocky = rho_p > 2000;
    if (opt.moment_of_inertia_factor) {
        md.C = *opt.moment_of_inertia_factor;
    } else {
        md.C = rocky ? 0.3307 : 0.254; // Earth, Jupiter (from memory)
        out.moment_of_inertia_assumed = true;
        out.notes.push_back("moment of inertia factor of " + pl.name + " assumed " + fmt_num(md.C) +
                            (rocky ? " (Earth's)" : " (Jupiter's)"));
    }
    out.moment_of_inertia_factor = md.C;
    md.I = md.C * md.M * md.R * md.R;
    tidal_parameters& pt = out.planet_tides;
    if (pl.k2) {
        pt.k2 = *pl.k2;
    } else {
        pt.k2 = rocky ? 0.3 : 0.38; // Earth ~0.3, Jupiter ~0.38 (from memory)
        pt.k2_assumed = true;
        out.notes.push_back("Love number k2 of " + pl.name + " assumed " + fmt_num(pt.k2));
    }
    if (pl.tidal_q) {
        pt.q = *pl.tidal_q;
    } else {
        // Rocky 100, giant 1e5 (Goldreich & Soter 1966 ranges; common practice, no source).
        pt.q = rocky ? 100.0 : 1e5;
        pt.q_assumed = true;
        if (opt.model == tide_model::constant_q)
            out.notes.push_back("tidal Q of " + pl.name + " assumed " + fmt_num(pt.q));
    }
    md.k2 = pt.k2;
    md.q = pt.q;
    if (opt.model == tide_model::constant_time_lag) {
        if (!pl.time_lag_s || *pl.time_lag_s <= 0)
            throw input_error({}, body_field(pl.name, "time_lag"), "nothing",
                              "a positive time lag for the constant time-lag model");
        md.lag = true;
        md.tau = pt.time_lag_s = *pl.time_lag_s;
    }
    md.Ms = st.mass_kg;
    md.ap = pl.orbit->a_m;
    md.ep = pl.orbit->e;
    md.np = std::sqrt(c::G * (md.Ms + md.M) / (md.ap * md.ap * md.ap));
    out.planet_mean_motion_rad_s = md.np;
    md.star_tide = opt.star_tide;
    md.lag_tol = md.lag ? opt.lag_lock_tolerance : 0.0;
    const double spin0 = c::two_pi / *pl.rotation_period_s;
    md.spin_scale = std::abs(spin0);
    out.spin_period0_s = *pl.rotation_period_s;

    // Span.
    if (opt.span_s) {
        out.span_s = *opt.span_s;
        out.span_from = span_rule::given;
    } else if (st.age_s && *st.age_s > 0) {
        out.span_s = *st.age_s;
        out.span_from = span_rule::star_age;
    } else {
        // Main-sequence lifetime ~10 Gyr (M/M_sun)^-2.5 (common practice, no source).
        out.span_s = 10 * c::Gyr * std::pow(st.mass_kg / c::M_sun, -2.5);
        out.span_from = span_rule::main_sequence_lifetime;
    }
    if (!(out.span_s > 0))
        throw input_error({}, "tides.span", fmt_num(out.span_s) + " s", "a positive span");
    if (!(opt.max_step_fraction > 0 && opt.max_step_fraction <= 1))
        throw input_error({}, "tides.max_step_fraction", fmt_num(opt.max_step_fraction),
                          "a fraction of the span in (0, 1]");

    // Moons: the planet's direct children.
    for (int ci : pl.children) {
        const resolved_body& mb = bodies[ci];
        if (!mb.orbit) continue;
        moon_model mm;
        tidal_moon_result mr;
        mr.name = mb.name;
        mr.body_index = ci;
        mr.mass_kg = mm.m = mb.mass_kg;
        mr.retrograde = mm.retro = mb.orbit->retrograde;
        double rho_s = mb.density_kg_m3;
        mm.radius = mb.radius_m;
        if (mm.radius <= 0 && rho_s <= 0) {
            rho_s = 3000; // common practice, no source
            out.notes.push_back("density of " + mb.name + " assumed 3000 kg/m^3");
        }
        if (mm.radius <= 0) mm.radius = std::cbrt(3 * mm.m / (4 * c::pi * rho_s));
        if (rho_s <= 0) rho_s = mm.m / sphere_volume(mm.radius);
        tidal_parameters& tp = mr.tides;
        if (mb.k2) {
            tp.k2 = *mb.k2;
        } else {
            // Rigidity 3e10 Pa rock, 4e9 Pa ice (Gladman et al. 1996 values, from memory).
            const double mu = rho_s > 2000 ? 3e10 : 4e9;
            tp.k2 = homogeneous_k2(mm.m, mm.radius, mu);
            tp.k2_assumed = true;
            out.notes.push_back("k2 of " + mb.name +
                                " from a homogeneous elastic sphere of "
                                "rigidity " +
                                fmt_num(mu) + " Pa: " + fmt_num(tp.k2));
        }
        if (mb.tidal_q) {
            tp.q = *mb.tidal_q;
        } else {
            tp.q = 100; // common practice, no source
            tp.q_assumed = true;
            out.notes.push_back("tidal Q of " + mb.name + " assumed 100");
        }
        if (mb.time_lag_s && md.lag) tp.time_lag_s = mm.taus = *mb.time_lag_s;
        mm.k2s = tp.k2;
        mm.qs = tp.q;
        mr.a0_m = mm.a0 = mb.orbit->a_m;
        mr.e0 = mb.orbit->e;
        mm.e_zero = mb.orbit->e <= 0;
        const bool fluid = opt.roche == roche_rule::fluid ||
                           (opt.roche == roche_rule::automatic && mm.radius >= 200e3);
        mr.roche_is_fluid = fluid;
        const double roche =
            fluid ? roche_limit_fluid(md.R, rho_p, rho_s) : roche_limit_rigid(md.R, rho_p, rho_s);
        mm.inner = std::max(roche, md.R + mm.radius);
        mr.inner_limit_m = mm.inner;
        mr.inner_limit_is_surface = md.R + mm.radius > roche;
        md.moons.push_back(mm);
        mr.stability_limit_m = stab_limit(md, md.moons.size() - 1, mr.e0);
        mr.synchronous_orbit_m = synchronous_orbit_radius(md.M, *pl.rotation_period_s);
        // Despinning time (Gladman et al. 1996) from the moon's given spin, else 12 h.
        mr.initial_spin_period_s = mb.rotation_period_s ? *mb.rotation_period_s : 12 * c::hour;
        mr.initial_spin_assumed = !mb.rotation_period_s;
        mr.despin_time_s = despin_time(c::two_pi / std::abs(mr.initial_spin_period_s), mr.a0_m,
                                       mm.m, mm.radius, tp.k2, tp.q, md.M);
        out.moons.push_back(mr);
    }
    const size_t nm = md.moons.size();

    // Barnes & O'Brien (2002) maximum moon mass with f from Domingos et al. (2006), prograde.
    out.max_moon_mass_f = stability_limit_fraction(md.ep, 0.0, false);
    if (md.Ms > 0 && out.max_moon_mass_f > 0)
        out.max_moon_mass_kg =
            max_moon_mass(out.max_moon_mass_f, md.ap, md.Ms, md.M, md.R, pt.k2, pt.q, out.span_s);

    // Initial state and rates.
    state_t x(1 + 2 * nm, 0.0);
    x[0] = spin0 / md.spin_scale;
    for (size_t i = 0; i < nm; ++i)
        x[2 + 2 * i] = md.moons[i].e_zero ? 0.0 : std::log(out.moons[i].e0);
    const double T = md.time_scale;
    const double tau_end = out.span_s / T;

    std::vector<double> av, ev;
    double spin = 0;
    auto sample = [&](double tau, const state_t& xs) {
        md.unpack(xs, spin, av, ev);
        tidal_sample row;
        row.t_s = tau * T;
        const double s = md.lock == lock_kind::none ? spin : md.locked_spin(av);
        row.planet_spin_period_s = s != 0 ? c::two_pi / s : inf;
        row.a_m.resize(nm);
        row.e.resize(nm);
        for (size_t i = 0; i < nm; ++i) {
            row.a_m[i] = md.moons[i].alive ? av[i] : nan_v;
            row.e[i] = md.moons[i].alive ? ev[i] : nan_v;
        }
        out.series.push_back(std::move(row));
    };

    // Side of each switching surface, used right at it.
    auto g_moon = [&](size_t i, double s, const std::vector<double>& a) {
        return s - md.n_of(i, a[i]);
    };
    // Time-lag locks are declared inside a tolerance band; a refused lock disarms the band
    // until the motion has left it, so it is not tried again at once.
    std::vector<char> armed(nm, 1);
    bool star_armed = true;
    auto set_sides = [&](const state_t& xs) {
        md.unpack(xs, spin, av, ev);
        for (size_t i = 0; i < nm; ++i) {
            const double g = g_moon(i, spin, av);
            const double n = md.n_of(i, av[i]);
            if (std::abs(g) > 1e-12 * n) md.moons[i].side = static_cast<int>(sgn(g));
            if (std::abs(g) > 2 * md.lag_tol * n) armed[i] = 1;
        }
        const double gs = spin - md.np;
        if (std::abs(gs) > 1e-12 * md.np) md.star_side = static_cast<int>(sgn(gs));
        if (std::abs(gs) > 2 * md.lag_tol * md.np) star_armed = true;
    };

    // Tries to start a lock at state xs; keeps it when it can be held.
    auto try_lock = [&](lock_kind k, int moon, const state_t& xs) {
        md.unpack(xs, spin, av, ev);
        md.lock = k;
        md.lock_moon = moon;
        const auto r = md.eval(spin, av, ev);
        if (r.lock_ok) return true;
        md.lock = lock_kind::none;
        md.lock_moon = -1;
        return false;
    };

    {
        md.unpack(x, spin, av, ev);
        const auto r0 = md.eval(spin, av, ev);
        out.initial_spin_rate_change_rad_s2 = r0.dspin;
        for (size_t i = 0; i < nm; ++i) {
            out.moons[i].initial_da_dt_m_s = r0.da[i];
            out.moons[i].initial_de_dt_per_s = r0.de_over_e[i] * ev[i];
        }
    }
    set_sides(x);
    // A moon that starts inside its inner limit or beyond its stability limit is lost at once.
    for (size_t i = 0; i < nm; ++i) {
        const bool in = av[i] <= md.moons[i].inner;
        if (!in && av[i] < stab_limit(md, i, ev[i])) continue;
        out.moons[i].fate = in ? moon_fate::roche_limit : moon_fate::stability_limit;
        out.moons[i].fate_time_s = 0.0;
        out.moons[i].a_end_m = av[i];
        out.moons[i].e_end = ev[i];
        md.moons[i].alive = false;
    }
    // A design that starts in a lock stays in it when it can.
    for (size_t i = 0; i < nm && md.lock == lock_kind::none; ++i) {
        if (md.moons[i].retro || !md.moons[i].alive) continue;
        const double n = md.n_of(i, av[i]);
        if (std::abs(spin - n) <= std::max(md.lag_tol, 1e-9) * n &&
            try_lock(lock_kind::moon, static_cast<int>(i), x)) {
            out.moons[i].double_sync_time_s = 0.0;
            out.moons[i].double_sync_period_s = c::two_pi / md.n_of(i, av[i]);
        }
    }
    if (md.lock == lock_kind::none && md.Ms > 0 && md.star_tide &&
        std::abs(spin - md.np) <= std::max(md.lag_tol, 1e-9) * md.np &&
        try_lock(lock_kind::star, -1, x))
        out.star_lock_time_s = 0.0;

    // Event predicates, true once the event has happened at state xs.
    enum class ev_kind { none, inner, outer, cross_moon, cross_star, unlock };
    struct event {
        ev_kind kind = ev_kind::none;
        int moon = -1;
    };
    // Reference signs at the start of a step.
    std::vector<double> g_ref(nm, 0.0);
    double gs_ref = 0;
    auto take_refs = [&](const state_t& xs) {
        md.unpack(xs, spin, av, ev);
        for (size_t i = 0; i < nm; ++i)
            g_ref[i] = md.moons[i].alive ? sgn(g_moon(i, spin, av)) : 0.0;
        gs_ref = sgn(spin - md.np);
    };
    auto happened = [&](const event& evt, const state_t& xs) -> bool {
        md.unpack(xs, spin, av, ev);
        const auto i = static_cast<size_t>(std::max(evt.moon, 0));
        switch (evt.kind) {
        case ev_kind::inner:
            return av[i] <= md.moons[i].inner;
        case ev_kind::outer:
            return av[i] >= stab_limit(md, i, ev[i]);
        case ev_kind::cross_moon: {
            const double n = md.n_of(i, av[i]);
            const double g = spin - n;
            return sgn(g) != g_ref[i] || (armed[i] && std::abs(g) < md.lag_tol * n);
        }
        case ev_kind::cross_star: {
            const double g = spin - md.np;
            return sgn(g) != gs_ref || (star_armed && std::abs(g) < md.lag_tol * md.np);
        }
        case ev_kind::unlock:
            return !md.eval(spin, av, ev).lock_ok;
        case ev_kind::none:
            return false;
        }
        return false;
    };
    auto candidate_events = [&]() {
        std::vector<event> evs;
        for (size_t i = 0; i < nm; ++i) {
            if (!md.moons[i].alive) continue;
            const int ii = static_cast<int>(i);
            evs.push_back({ev_kind::inner, ii});
            evs.push_back({ev_kind::outer, ii});
            if (md.lock == lock_kind::none && !md.moons[i].retro && g_ref[i] != 0)
                evs.push_back({ev_kind::cross_moon, ii});
        }
        if (md.lock == lock_kind::none && md.Ms > 0 && md.star_tide && gs_ref != 0)
            evs.push_back({ev_kind::cross_star, -1});
        if (md.lock != lock_kind::none) evs.push_back({ev_kind::unlock, -1});
        return evs;
    };

    auto stepper = ode::make_dense_output(opt.abs_tol, opt.rel_tol, tau_end * opt.max_step_fraction,
                                          ode::runge_kutta_dopri5<state_t>());
    double tau = 0;
    stepper.initialize(x, tau, tau_end * 1e-6);
    take_refs(x);
    const int n_samples = std::max(opt.samples, 2);
    int next_sample = 0;
    auto sample_time = [&](int k) { return tau_end * k / (n_samples - 1); };
    state_t xs(x.size());
    long events_here = 0;
    double last_event_tau = -1;

    // After a lock ends, pick the side of the surface that the free motion leaves consistently.
    auto choose_side_after_unlock = [&](lock_kind k, int moon, const state_t& xs_at) {
        md.unpack(xs_at, spin, av, ev);
        const double s0 =
            k == lock_kind::moon ? md.n_of(static_cast<size_t>(moon), av[moon]) : md.np;
        for (int side : {+1, -1}) {
            if (k == lock_kind::moon)
                md.moons[moon].side = side;
            else
                md.star_side = side;
            const auto r = md.eval(s0, av, ev);
            double dg = r.dspin;
            if (k == lock_kind::moon) {
                const auto i = static_cast<size_t>(moon);
                dg -= -1.5 * md.n_of(i, av[i]) / av[i] * r.da[i];
            }
            if (sgn(dg) == side) return;
        }
    };

    while (tau < tau_end) {
        if (out.steps >= opt.max_steps) {
            out.stopped_early = true;
            out.notes.push_back("the step budget (" + std::to_string(opt.max_steps) +
                                " steps) ran out before the end of the span");
            break;
        }
        const auto [t0, t1] = stepper.do_step(std::ref(md));
        ++out.steps;
        const double tc = std::min(t1, tau_end);
        stepper.calc_state(tc, xs);
        for (double v : xs)
            if (!std::isfinite(v))
                throw numerical_error(
                    "tidal evolution of " + pl.name +
                    ": the state stopped being finite at t = " + fmt_num(t0 * T / c::Myr) + " Myr");
        // Earliest event in (t0, tc].
        event first;
        double t_first = tc;
        state_t x_first;
        for (const event& evt : candidate_events()) {
            if (!happened(evt, xs)) continue;
            double lo = t0, hi = tc;
            state_t xm(x.size()), xhi = xs;
            for (int it = 0; it < 100 && hi - lo > 1e-15 * std::max(1.0, hi); ++it) {
                const double mid = 0.5 * (lo + hi);
                stepper.calc_state(mid, xm);
                if (happened(evt, xm)) {
                    hi = mid;
                    xhi = xm;
                } else {
                    lo = mid;
                }
            }
            if (first.kind == ev_kind::none || hi < t_first) {
                first = evt;
                t_first = hi;
                x_first = xhi;
            }
        }
        const double t_done = first.kind == ev_kind::none ? tc : t_first;
        while (next_sample < n_samples && sample_time(next_sample) <= t_done) {
            stepper.calc_state(sample_time(next_sample), xs);
            sample(sample_time(next_sample), xs);
            ++next_sample;
        }
        if (first.kind == ev_kind::none) {
            tau = tc;
            stepper.calc_state(tc, xs);
            x = xs;
            set_sides(xs);
            take_refs(xs);
            continue;
        }
        // Apply the event and restart the stepper there.
        if (t_first == last_event_tau) {
            if (++events_here > 1000)
                throw numerical_error("tidal evolution of " + pl.name +
                                      ": events repeat without progress at t = " +
                                      fmt_num(t_first * T / c::Myr) + " Myr");
        } else {
            events_here = 0;
            last_event_tau = t_first;
        }
        tau = t_first;
        x = x_first;
        lock_kind unlocked = lock_kind::none;
        int unlocked_moon = -1;
        md.unpack(x, spin, av, ev);
        const double t_s = tau * T;
        const auto mi = static_cast<size_t>(std::max(first.moon, 0));
        switch (first.kind) {
        case ev_kind::inner:
        case ev_kind::outer: {
            tidal_moon_result& mr = out.moons[mi];
            mr.fate =
                first.kind == ev_kind::inner ? moon_fate::roche_limit : moon_fate::stability_limit;
            mr.fate_time_s = t_s;
            mr.a_end_m = av[mi];
            mr.e_end = ev[mi];
            if (md.lock == lock_kind::moon && first.moon == md.lock_moon) {
                x[0] = md.locked_spin(av) / md.spin_scale;
                md.lock = lock_kind::none;
                md.lock_moon = -1;
            }
            md.moons[mi].alive = false;
            break;
        }
        case ev_kind::cross_moon:
            if (try_lock(lock_kind::moon, first.moon, x)) {
                if (!out.moons[mi].double_sync_time_s) {
                    out.moons[mi].double_sync_time_s = t_s;
                    out.moons[mi].double_sync_period_s = c::two_pi / md.n_of(mi, av[mi]);
                }
            } else {
                armed[mi] = 0;
                md.unpack(x, spin, av, ev);
                md.moons[mi].side = static_cast<int>(sgn(g_moon(mi, spin, av)));
                if (md.moons[mi].side == 0) md.moons[mi].side = -static_cast<int>(g_ref[mi]);
            }
            break;
        case ev_kind::cross_star:
            if (try_lock(lock_kind::star, -1, x)) {
                if (!out.star_lock_time_s) out.star_lock_time_s = t_s;
            } else {
                star_armed = false;
                md.unpack(x, spin, av, ev);
                md.star_side = static_cast<int>(sgn(spin - md.np));
                if (md.star_side == 0) md.star_side = -static_cast<int>(gs_ref);
            }
            break;
        case ev_kind::unlock: {
            const lock_kind k = md.lock;
            const int lm = md.lock_moon;
            x[0] = md.locked_spin(av) / md.spin_scale;
            md.lock = lock_kind::none;
            md.lock_moon = -1;
            if (k == lock_kind::moon) {
                if (!out.moons[lm].lock_broken_time_s) out.moons[lm].lock_broken_time_s = t_s;
            } else if (!out.star_lock_broken_time_s) {
                out.star_lock_broken_time_s = t_s;
            }
            if (!md.lag) choose_side_after_unlock(k, lm, x);
            unlocked = k;
            unlocked_moon = lm;
            break;
        }
        case ev_kind::none:
            break;
        }
        sample(tau, x);
        stepper.initialize(x, tau, std::max((t1 - t0) * 0.1, tau_end * 1e-12));
        take_refs(x);
        // Right at a surface the reference sign is the side chosen for it.
        for (size_t i = 0; i < nm; ++i)
            if (g_ref[i] == 0) g_ref[i] = md.moons[i].side;
        if (gs_ref == 0) gs_ref = md.star_side;
        if (first.kind == ev_kind::cross_moon && md.lock == lock_kind::none)
            g_ref[mi] = md.moons[mi].side;
        if (first.kind == ev_kind::cross_star && md.lock == lock_kind::none) gs_ref = md.star_side;
        if (unlocked == lock_kind::moon) {
            g_ref[static_cast<size_t>(unlocked_moon)] = md.moons[unlocked_moon].side;
            armed[static_cast<size_t>(unlocked_moon)] = 0;
        }
        if (unlocked == lock_kind::star) {
            gs_ref = md.star_side;
            star_armed = false;
        }
    }

    // End state.
    out.t_end_s = tau * T;
    md.unpack(x, spin, av, ev);
    const double s_end = md.lock == lock_kind::none ? spin : md.locked_spin(av);
    out.spin_period_end_s = s_end != 0 ? c::two_pi / s_end : inf;
    for (size_t i = 0; i < nm; ++i) {
        if (!md.moons[i].alive) continue;
        out.moons[i].a_end_m = av[i];
        out.moons[i].e_end = ev[i];
        if (ev[i] >= 0.95)
            out.notes.push_back("the eccentricity of " + out.moons[i].name +
                                " was pumped to the 0.95 cap of the low-e tidal formulas");
    }
    return out;
}

} // namespace moonwright
