// Validation of the Gauss–Radau integrator: Brouwer's law on a Kepler orbit, order 15 with
// fixed steps, and a velocity-dependent force against its analytic solution.
#include "engine/error.hpp"
#include "integrators/gauss_radau.hpp"
#include "test_systems.hpp"

#include <doctest/doctest.h>

#include <cmath>
#include <vector>

using namespace moonwright;
using namespace moonwright::testing;

namespace {
constexpr double pi = 3.141592653589793238462643383279502884;
}

TEST_CASE("Gauss-Radau two-body e = 0.5: energy error below 1e-13 after 1e4 orbits, "
          "growing no faster than sqrt(t)") {
    const std::vector<double> m = {1.0, 1e-3};
    const double a = 1.0, e = 0.5;
    const double period = 2.0 * pi * std::sqrt(a * a * a / (m[0] + m[1]));
    std::vector<double> q, v;
    two_body_start(m[0], m[1], a, e, q, v);
    const double e0 = nbody_energy(m, q, v);
    gauss_radau gr(newtonian_nbody(m)); // epsilon 1e-9: machine precision (Rein & Spiegel 2015)
    double t = 0.0;
    constexpr int orbits = 10000;
    std::vector<double> de(orbits);
    for (int k = 0; k < orbits; ++k) {
        gr.integrate(t, q, v, (k + 1) * period);
        de[static_cast<std::size_t>(k)] = (nbody_energy(m, q, v) - e0) / std::fabs(e0);
    }
    double worst = 0.0;
    for (double d : de) worst = std::fmax(worst, std::fabs(d));
    MESSAGE("steps " << gr.stats().steps << " rejected " << gr.stats().rejected << " evaluations "
                     << gr.stats().evaluations << " worst |dE/E| " << worst << " final "
                     << de.back());
    // Bound asked of the integrator at epsilon = 1e-9 (Rein & Spiegel 2015, Fig. 5: ~1e-15 after
    // 1e4 orbits with their control; 1e-13 leaves room for a random walk of ~1e7 steps).
    CHECK(worst < 1e-13);

    // Brouwer (1937, AJ 46, 149): round-off errors that are unbiased make the energy error a
    // random walk, |dE| ~ sqrt(t). RMS of dE in windows [2^j, 2^(j+1)) orbits, j = 3 .. 12.
    std::vector<double> lt, lrms;
    for (int lo = 8; lo < orbits; lo *= 2) {
        const int hi = std::min(2 * lo, orbits);
        double s = 0.0;
        for (int k = lo; k < hi; ++k)
            s += de[static_cast<std::size_t>(k)] * de[static_cast<std::size_t>(k)];
        lt.push_back(std::log(std::sqrt(static_cast<double>(lo) * hi)));
        lrms.push_back(0.5 * std::log(s / (hi - lo)));
    }
    const double slope = fitted_slope(lt, lrms);
    MESSAGE("log-log slope of RMS |dE| against t: " << slope);
    CHECK(slope <= 0.6);
}

TEST_CASE("Gauss-Radau with fixed steps converges at order 15 on a Kepler orbit") {
    // Everhart (1985): 8 Gauss-Radau spacings give a local error O(dt^16), global O(dt^15).
    const double mu = 1.0, a = 1.0, e = 0.2;
    const double period = 2.0 * pi;
    double qe[3], ve[3];
    kepler_state(mu, a, e, 3.0 * period, qe, ve);
    std::vector<double> logdt, logerr;
    for (int n : {9, 10, 11, 12, 13, 14}) {
        std::vector<double> q(3), v(3);
        kepler_state(mu, a, e, 0.0, q.data(), v.data());
        const double dt = period / n;
        gauss_radau_options opt;
        opt.adaptive = false;
        opt.initial_step = dt;
        gauss_radau gr(kepler_problem(mu), opt);
        double t = 0.0;
        gr.integrate(t, q, v, 3.0 * period);
        const double err = std::hypot(q[0] - qe[0], q[1] - qe[1], q[2] - qe[2]) / a;
        MESSAGE("steps per orbit " << n << " position error after 3 orbits " << err);
        // Only points above the round-off floor (~1e-14 after 3 orbits) enter the fit.
        if (err > 1e-13) {
            logdt.push_back(std::log(dt));
            logerr.push_back(std::log(err));
        }
    }
    REQUIRE(logdt.size() >= 4);
    const double slope = fitted_slope(logdt, logerr);
    MESSAGE("fitted order " << slope);
    CHECK(slope >= 13.0);
    CHECK(slope <= 17.0);
}

TEST_CASE("Gauss-Radau on a damped oscillator (velocity-dependent force) matches the analytic "
          "solution") {
    // x'' = -w^2 x - 2 g x': x = exp(-g t) (cos(wd t) + (g / wd) sin(wd t)) for x(0) = 1,
    // x'(0) = 0, wd = sqrt(w^2 - g^2) (any mechanics text, e.g. Landau & Lifshitz, Mechanics,
    // Sect. 25). Three components with different w and g.
    const double w[3] = {1.0, 2.0, 0.5}, g[3] = {0.05, 0.3, 0.01};
    second_order_system s;
    s.n = 1;
    s.velocity_dependent = true;
    s.acceleration = [&](double, const double* q, const double* v, double* acc) {
        for (int k = 0; k < 3; ++k) acc[k] = -w[k] * w[k] * q[k] - 2.0 * g[k] * v[k];
    };
    gauss_radau gr(s);
    std::vector<double> q = {1.0, 1.0, 1.0}, v = {0.0, 0.0, 0.0};
    double t = 0.0;
    const double t_end = 30.0;
    gr.integrate(t, q, v, t_end);
    CHECK(t == t_end);
    double worst = 0.0;
    for (int k = 0; k < 3; ++k) {
        const double wd = std::sqrt(w[k] * w[k] - g[k] * g[k]);
        const double x =
            std::exp(-g[k] * t_end) * (std::cos(wd * t_end) + g[k] / wd * std::sin(wd * t_end));
        const double xd = -std::exp(-g[k] * t_end) * (w[k] * w[k] / wd) * std::sin(wd * t_end);
        worst = std::fmax(worst, std::fabs(q[k] - x));
        worst = std::fmax(worst, std::fabs(v[k] - xd) / w[k]);
    }
    MESSAGE("worst error " << worst << " in " << gr.stats().steps << " steps");
    CHECK(worst < 1e-12); // amplitude 1: 1e-12 is ~1e4 ulp after ~100 steps
}
