// Validation of the Boost.Odeint steppers: RKF 7(8) order with fixed steps, Bulirsch–Stoer
// accuracy against tolerance on a Kepler orbit, and a velocity-dependent force.
#include "integrators/odeint_steppers.hpp"
#include "test_systems.hpp"

#include <doctest/doctest.h>

#include <cmath>
#include <string>
#include <vector>

using namespace moonwright;
using namespace moonwright::testing;

namespace {
constexpr double pi = 3.141592653589793238462643383279502884;
}

TEST_CASE("RKF 7(8) with fixed steps converges at order 8 on a Kepler orbit") {
    // odeint's runge_kutta_fehlberg78 propagates the 8th-order solution of Fehlberg (1968, NASA
    // TR R-287), so the global error should fall as dt^8 (slope 8; 7 would mean the embedded
    // lower-order solution was propagated).
    const double mu = 1.0, a = 1.0, e = 0.2, period = 2.0 * pi;
    double qe[3], ve[3];
    kepler_state(mu, a, e, period, qe, ve);
    std::vector<double> logdt, logerr;
    for (int n : {40, 56, 80, 113, 160}) {
        std::vector<double> q(3), v(3);
        kepler_state(mu, a, e, 0.0, q.data(), v.data());
        odeint_options opt;
        opt.fixed_step = period / n;
        odeint_integrator rk(kepler_problem(mu), odeint_method::rkf78, opt);
        double t = 0.0;
        const std::size_t steps = rk.integrate(t, q, v, period);
        CHECK(steps == static_cast<std::size_t>(n));
        const double err = std::hypot(q[0] - qe[0], q[1] - qe[1], q[2] - qe[2]) / a;
        MESSAGE("steps per orbit " << n << " position error " << err);
        logdt.push_back(std::log(period / n));
        logerr.push_back(std::log(err));
    }
    const double slope = fitted_slope(logdt, logerr);
    MESSAGE("fitted order " << slope);
    CHECK(slope == doctest::Approx(8.0).epsilon(0.5 / 8.0));
}

TEST_CASE("Bulirsch-Stoer error falls with the tolerance, energy kept to 1e-11 over 100 periods") {
    const double mu = 1.0, a = 1.0, e = 0.3, period = 2.0 * pi;
    double qe[3], ve[3];
    kepler_state(mu, a, e, 100.0 * period, qe, ve);
    std::vector<double> errors;
    double energy_error = 0.0;
    const auto energy = [mu](const std::vector<double>& q, const std::vector<double>& v) {
        return 0.5 * (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]) -
               mu / std::sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2]);
    };
    const double e0 = -mu / (2.0 * a); // vis-viva (Murray & Dermott 1999, Eq. 2.34)
    for (double tol : {1e-9, 1e-11, 1e-13, 1e-15}) {
        std::vector<double> q(3), v(3);
        kepler_state(mu, a, e, 0.0, q.data(), v.data());
        odeint_options opt;
        opt.abs_tolerance = tol;
        opt.rel_tolerance = tol;
        odeint_integrator bs(kepler_problem(mu), odeint_method::bulirsch_stoer, opt);
        double t = 0.0;
        const std::size_t steps = bs.integrate(t, q, v, 100.0 * period);
        CHECK(t == 100.0 * period);
        const double err = std::hypot(q[0] - qe[0], q[1] - qe[1], q[2] - qe[2]) / a;
        MESSAGE("tolerance " << tol << " steps " << steps << " relative position error " << err);
        energy_error = std::fabs((energy(q, v) - e0) / e0);
        MESSAGE("  relative energy error " << energy_error);
        errors.push_back(err);
    }
    // Position error against Kepler's equation falls monotonically with the tolerance.
    for (std::size_t i = 1; i < errors.size(); ++i) CHECK(errors[i] < errors[i - 1]);
    // At the tightest tolerance the energy is kept to 1e-11 relative (our measurement 6.3e-12;
    // a 1e-12 target is NOT reached by odeint's Bulirsch-Stoer here). The position error is
    // further off: the along-track phase error grows linearly over 100 periods (a relative
    // energy error dE gives a mean-motion error 1.5 dE, Kepler's third law), and round-off in
    // the extrapolation tables leaves it near 4e-9 (our measurement).
    CHECK(energy_error < 1e-11);
    CHECK(errors.back() < 1e-8);
}

TEST_CASE("odeint steppers on a damped oscillator (velocity-dependent force) match the analytic "
          "solution") {
    // x'' = -w^2 x - 2 g x', x(0) = 1, x'(0) = 0: x = exp(-g t) (cos wd t + (g / wd) sin wd t),
    // wd = sqrt(w^2 - g^2) (Landau & Lifshitz, Mechanics, Sect. 25).
    const double w = 1.0, g = 0.05;
    second_order_system s;
    s.n = 1;
    s.velocity_dependent = true;
    s.acceleration = [&](double, const double* q, const double* v, double* acc) {
        for (int k = 0; k < 3; ++k) acc[k] = -w * w * q[k] - 2.0 * g * v[k];
    };
    for (odeint_method method : {odeint_method::bulirsch_stoer, odeint_method::rkf78}) {
        odeint_integrator it(s, method);
        std::vector<double> q = {1.0, 0.0, 0.0}, v = {0.0, 0.0, 0.0};
        double t = 0.0;
        const double t_end = 30.0;
        it.integrate(t, q, v, t_end);
        const double wd = std::sqrt(w * w - g * g);
        const double x =
            std::exp(-g * t_end) * (std::cos(wd * t_end) + g / wd * std::sin(wd * t_end));
        const double xd = -std::exp(-g * t_end) * (w * w / wd) * std::sin(wd * t_end);
        const double err = std::fmax(std::fabs(q[0] - x), std::fabs(v[0] - xd));
        MESSAGE(std::string(method == odeint_method::rkf78 ? "rkf78" : "bulirsch_stoer")
                << " error " << err);
        CHECK(err < 1e-10); // tolerance 1e-12 per step, ~10^2 steps
    }
}
