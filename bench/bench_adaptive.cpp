// Speed of the adaptive integrators on a 7-body hierarchical moon system (star, planet, five
// moons in planet-centred coordinates): time per body-step and the energy error reached.
#include "engine/constants.hpp"
#include "integrators/gauss_radau.hpp"
#include "integrators/odeint_steppers.hpp"

#include <benchmark/benchmark.h>

#include <array>
#include <cmath>
#include <vector>

namespace {

using namespace moonwright;
namespace c = moonwright::constants;

constexpr std::size_t n_moons = 5;
constexpr std::size_t n_vec = 1 + n_moons; ///< planet (star-centred) + moons (planet-centred)
constexpr std::size_t n_bodies = 2 + n_moons;

/// An invented system: a Sun-like star, a 1.2 Earth-mass planet at 1 AU (e = 0.02) with an
/// invented radius of 1.05 Earth radii, and five moons on near-circular orbits.
struct moon_system {
    double m_star = c::M_sun;
    double m_planet = 1.2 * c::M_earth;
    double r_planet = 1.05 * c::R_earth;
    std::array<double, n_moons> m_moon = {1e-2 * c::M_earth, 1e-4 * c::M_earth, 1e-5 * c::M_earth,
                                          1e-5 * c::M_earth, 1e-6 * c::M_earth};
    std::array<double, n_moons> a_moon_rp = {5.0, 12.0, 25.0, 45.0, 70.0}; ///< [planet radii]
};

/// q'' for the planet relative to the star (index 0) and the moons relative to the planet:
/// barycentric Newtonian accelerations A_i = sum_j G m_j (X_j - X_i) / |X_j - X_i|^3 with
/// X_planet = X_star + r, X_moon = X_planet + rho; then r'' = A_p - A_s, rho'' = A_m - A_p.
second_order_system planet_centred_force(const moon_system& s) {
    second_order_system sys;
    sys.n = n_vec;
    sys.acceleration = [s](double, const double* q, const double*, double* a) {
        const double G = c::G;
        const double* r = q; // planet from star
        double as[3] = {0, 0, 0}, ap[3] = {0, 0, 0};
        double am[n_moons][3] = {};
        const double r2 = r[0] * r[0] + r[1] * r[1] + r[2] * r[2];
        const double ir3 = G / (r2 * std::sqrt(r2));
        for (int k = 0; k < 3; ++k) {
            as[k] += s.m_planet * ir3 * r[k];
            ap[k] -= s.m_star * ir3 * r[k];
        }
        for (std::size_t j = 0; j < n_moons; ++j) {
            const double* rho = q + 3 * (1 + j);
            const double d[3] = {r[0] + rho[0], r[1] + rho[1], r[2] + rho[2]}; // moon from star
            const double d2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
            const double id3 = G / (d2 * std::sqrt(d2));
            const double p2 = rho[0] * rho[0] + rho[1] * rho[1] + rho[2] * rho[2];
            const double ip3 = G / (p2 * std::sqrt(p2));
            for (int k = 0; k < 3; ++k) {
                as[k] += s.m_moon[j] * id3 * d[k];
                am[j][k] -= s.m_star * id3 * d[k];
                ap[k] += s.m_moon[j] * ip3 * rho[k];
                am[j][k] -= s.m_planet * ip3 * rho[k];
            }
            for (std::size_t i = j + 1; i < n_moons; ++i) {
                const double* rhoi = q + 3 * (1 + i);
                const double e[3] = {rhoi[0] - rho[0], rhoi[1] - rho[1], rhoi[2] - rho[2]};
                const double e2 = e[0] * e[0] + e[1] * e[1] + e[2] * e[2];
                const double ie3 = G / (e2 * std::sqrt(e2));
                for (int k = 0; k < 3; ++k) {
                    am[j][k] += s.m_moon[i] * ie3 * e[k];
                    am[i][k] -= s.m_moon[j] * ie3 * e[k];
                }
            }
        }
        for (int k = 0; k < 3; ++k) a[k] = ap[k] - as[k];
        for (std::size_t j = 0; j < n_moons; ++j)
            for (int k = 0; k < 3; ++k) a[3 * (1 + j) + k] = am[j][k] - ap[k];
    };
    return sys;
}

/// Initial state: planet at pericentre of its orbit about the star; moons on circular orbits
/// about the planet at spread-out phases and small inclinations (two-body speeds).
void initial_state(const moon_system& s, std::vector<double>& q, std::vector<double>& v) {
    q.assign(3 * n_vec, 0.0);
    v.assign(3 * n_vec, 0.0);
    const double e = 0.02, a = c::au;
    const double mu = c::G * (s.m_star + s.m_planet);
    q[0] = a * (1.0 - e);
    v[1] = std::sqrt(mu / a * (1.0 + e) / (1.0 - e)); // vis-viva at pericentre
    for (std::size_t j = 0; j < n_moons; ++j) {
        const double r = s.a_moon_rp[j] * s.r_planet;
        const double phase = 1.3 * static_cast<double>(j);
        const double inc = 0.01 * static_cast<double>(j);
        const double vc = std::sqrt(c::G * (s.m_planet + s.m_moon[j]) / r);
        q[3 * (1 + j) + 0] = r * std::cos(phase);
        q[3 * (1 + j) + 1] = r * std::sin(phase) * std::cos(inc);
        q[3 * (1 + j) + 2] = r * std::sin(phase) * std::sin(inc);
        v[3 * (1 + j) + 0] = -vc * std::sin(phase);
        v[3 * (1 + j) + 1] = vc * std::cos(phase) * std::cos(inc);
        v[3 * (1 + j) + 2] = vc * std::cos(phase) * std::sin(inc);
    }
}

/// Total barycentric energy [J], in long double.
long double total_energy(const moon_system& s, const std::vector<double>& q,
                         const std::vector<double>& v) {
    std::array<long double, n_bodies> m{};
    std::array<std::array<long double, 3>, n_bodies> x{}, w{};
    m[0] = s.m_star;
    m[1] = s.m_planet;
    for (std::size_t j = 0; j < n_moons; ++j) m[2 + j] = s.m_moon[j];
    for (int k = 0; k < 3; ++k) {
        x[1][k] = q[k];
        w[1][k] = v[k];
        for (std::size_t j = 0; j < n_moons; ++j) {
            x[2 + j][k] = static_cast<long double>(q[k]) + q[3 * (1 + j) + k];
            w[2 + j][k] = static_cast<long double>(v[k]) + v[3 * (1 + j) + k];
        }
    }
    long double mt = 0.0L;
    std::array<long double, 3> cx{}, cw{};
    for (std::size_t i = 0; i < n_bodies; ++i) {
        mt += m[i];
        for (int k = 0; k < 3; ++k) {
            cx[k] += m[i] * x[i][k];
            cw[k] += m[i] * w[i][k];
        }
    }
    long double energy = 0.0L;
    for (std::size_t i = 0; i < n_bodies; ++i) {
        long double v2 = 0.0L;
        for (int k = 0; k < 3; ++k) {
            const long double u = w[i][k] - cw[k] / mt;
            v2 += u * u;
        }
        energy += 0.5L * m[i] * v2;
        for (std::size_t j = i + 1; j < n_bodies; ++j) {
            long double d2 = 0.0L;
            for (int k = 0; k < 3; ++k) d2 += (x[j][k] - x[i][k]) * (x[j][k] - x[i][k]);
            energy -= static_cast<long double>(c::G) * m[i] * m[j] / std::sqrt(d2);
        }
    }
    return energy;
}

/// Energy error relative to the moons' binding energy sum_j G m_p m_j / (2 a_j): the star-planet
/// energy is ~1e4 times larger and would hide every moon error below one ulp.
double moon_energy_error(const moon_system& s, long double e0, long double e1) {
    long double scale = 0.0L;
    for (std::size_t j = 0; j < n_moons; ++j)
        scale += static_cast<long double>(c::G) * s.m_planet * s.m_moon[j] /
                 (2.0L * s.a_moon_rp[j] * s.r_planet);
    return static_cast<double>(std::fabs((e1 - e0) / scale));
}

constexpr double span = 30.0 * c::day; // ~46 orbits of the innermost moon per iteration

void report(benchmark::State& state, std::size_t steps, double energy_error) {
    state.counters["body_steps"] = benchmark::Counter(static_cast<double>(steps * n_bodies),
                                                      benchmark::Counter::kAvgIterations);
    state.counters["time_per_body_step"] =
        benchmark::Counter(static_cast<double>(steps * n_bodies),
                           benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
    state.counters["moon_energy_error"] = energy_error;
}

void bm_gauss_radau(benchmark::State& state) {
    const moon_system s;
    std::size_t steps = 0;
    double de = 0.0;
    gauss_radau_options opt;
    opt.epsilon = 1e-9;
    for (auto _ : state) {
        std::vector<double> q, v;
        initial_state(s, q, v);
        const long double e0 = total_energy(s, q, v);
        gauss_radau gr(planet_centred_force(s), opt);
        double t = 0.0;
        steps += gr.integrate(t, q, v, span);
        de = moon_energy_error(s, e0, total_energy(s, q, v));
        benchmark::DoNotOptimize(q.data());
    }
    report(state, steps, de);
}

void bm_odeint(benchmark::State& state, odeint_method method) {
    const moon_system s;
    std::size_t steps = 0;
    double de = 0.0;
    odeint_options opt;
    opt.rel_tolerance = std::pow(10.0, -static_cast<double>(state.range(0)));
    opt.abs_tolerance = opt.rel_tolerance * 1.0; // as if 1 m and 1 m/s: zero components
                                                 // (z of the planet) need an absolute floor
    for (auto _ : state) {
        std::vector<double> q, v;
        initial_state(s, q, v);
        const long double e0 = total_energy(s, q, v);
        odeint_integrator it(planet_centred_force(s), method, opt);
        double t = 0.0;
        steps += it.integrate(t, q, v, span);
        de = moon_energy_error(s, e0, total_energy(s, q, v));
        benchmark::DoNotOptimize(q.data());
    }
    report(state, steps, de);
}

void bm_bulirsch_stoer(benchmark::State& state) {
    bm_odeint(state, odeint_method::bulirsch_stoer);
}
void bm_rkf78(benchmark::State& state) {
    bm_odeint(state, odeint_method::rkf78);
}

} // namespace

BENCHMARK(bm_gauss_radau)->Unit(benchmark::kMillisecond);
BENCHMARK(bm_bulirsch_stoer)->Arg(12)->Arg(14)->Arg(15)->Unit(benchmark::kMillisecond);
BENCHMARK(bm_rkf78)->Arg(12)->Arg(14)->Arg(15)->Unit(benchmark::kMillisecond);
