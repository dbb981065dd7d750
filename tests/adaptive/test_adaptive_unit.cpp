// Unit tests of the adaptive integrators: spacings, exactness, landing on t_end, rejection as
// control flow, the numerical_error guards, time reversal and allocation-free stepping.
#include "engine/error.hpp"
#include "integrators/gauss_radau.hpp"
#include "integrators/odeint_steppers.hpp"
#include "test_systems.hpp"

#include <doctest/doctest.h>

#include <array>
#include <cmath>
#include <cstdlib>
#include <functional>
#include <limits>
#include <new>
#include <stdexcept>
#include <string>
#include <vector>

// Counts global allocations so that the tests can check the stepping loops do not allocate.
namespace {
std::size_t allocations = 0;
}
void* operator new(std::size_t size) {
    ++allocations;
    if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
    throw std::bad_alloc();
}
void operator delete(void* p) noexcept {
    std::free(p);
}
void operator delete(void* p, std::size_t) noexcept {
    std::free(p);
}

using namespace moonwright;
using namespace moonwright::testing;

namespace {
constexpr double pi = 3.141592653589793238462643383279502884;

/// Legendre polynomial P_n(x) by Bonnet's recursion (Abramowitz & Stegun 22.7.10).
long double legendre(int n, long double x) {
    long double p0 = 1.0L, p1 = x;
    if (n == 0) return p0;
    for (int k = 1; k < n; ++k) {
        const long double p2 = ((2 * k + 1) * x * p1 - k * p0) / (k + 1);
        p0 = p1;
        p1 = p2;
    }
    return p1;
}
} // namespace

TEST_CASE("Gauss-Radau spacings are the roots of the Radau polynomial P7 + P8 on [0, 1]") {
    // Radau quadrature with a fixed node at -1 uses the roots of P_{n-1} + P_n (Abramowitz &
    // Stegun 25.4.31); mapped with x = 2 h - 1.
    const auto& h = gauss_radau::spacings();
    CHECK(h[0] == 0.0);
    for (std::size_t k = 1; k < h.size(); ++k) {
        CHECK(h[k] > h[k - 1]);
        const long double x = 2.0L * h[k] - 1.0L;
        const long double f = legendre(7, x) + legendre(8, x);
        const long double df = (legendre(7, x + 1e-9L) + legendre(8, x + 1e-9L) - f) / 1e-9L;
        CHECK(std::fabs(static_cast<double>(f / df)) < 1e-15); // root to ~1 ulp of h
    }
}

TEST_CASE("Gauss-Radau is exact for a polynomial acceleration in one fixed step") {
    // a(t) = c0 + c1 t + c2 t^2: the expansion in h holds it exactly (Everhart 1985).
    second_order_system s;
    s.n = 1;
    s.acceleration = [](double t, const double*, const double*, double* a) {
        a[0] = 1.0 + 2.0 * t + 3.0 * t * t;
        a[1] = -0.5;
        a[2] = 0.0;
    };
    gauss_radau_options opt;
    opt.adaptive = false;
    opt.initial_step = 2.0;
    gauss_radau gr(s, opt);
    std::vector<double> q = {0.0, 0.0, 1.0}, v = {1.0, 0.0, 0.0};
    double t = 0.0;
    gr.step(t, q, v);
    CHECK(t == 2.0);
    // q = t + t^2/2 + t^3/3 + t^4/4 at t = 2: 2 + 2 + 8/3 + 4
    CHECK(q[0] == doctest::Approx(2.0 + 2.0 + 8.0 / 3.0 + 4.0).epsilon(1e-15));
    CHECK(v[0] == doctest::Approx(1.0 + 2.0 + 4.0 + 8.0).epsilon(1e-15));
    CHECK(q[1] == doctest::Approx(-1.0).epsilon(1e-15));
    CHECK(q[2] == 1.0);
}

TEST_CASE("Gauss-Radau integrate lands exactly on t_end and keeps its natural step") {
    gauss_radau gr(kepler_problem());
    std::vector<double> q(3), v(3);
    kepler_state(1.0, 1.0, 0.1, 0.0, q.data(), v.data());
    double t = 0.0;
    gr.integrate(t, q, v, 10.0);
    const double natural = gr.next_step();
    CHECK(t == 10.0);
    gr.integrate(t, q, v, 10.0 + 1e-3); // a tiny interval: one shortened step
    CHECK(t == 10.0 + 1e-3);
    CHECK(gr.next_step() == doctest::Approx(natural).epsilon(0.5));
    double qe[3], ve[3];
    kepler_state(1.0, 1.0, 0.1, t, qe, ve);
    CHECK(std::hypot(q[0] - qe[0], q[1] - qe[1]) < 1e-13);
}

TEST_CASE("Gauss-Radau rejects an oversized first step and retries (no exception)") {
    gauss_radau_options opt;
    opt.initial_step = 2.0 * pi; // a whole orbit
    gauss_radau gr(kepler_problem(), opt);
    std::vector<double> q(3), v(3);
    kepler_state(1.0, 1.0, 0.5, 0.0, q.data(), v.data());
    double t = 0.0;
    const double taken = gr.step(t, q, v);
    CHECK(gr.stats().rejected > 0);
    CHECK(taken < 2.0 * pi);
    CHECK(t == taken);
    double qe[3], ve[3];
    kepler_state(1.0, 1.0, 0.5, t, qe, ve);
    CHECK(std::hypot(q[0] - qe[0], q[1] - qe[1]) < 1e-12);
}

TEST_CASE("Gauss-Radau integrates backwards to its start (time reversal)") {
    gauss_radau gr(kepler_problem());
    std::vector<double> q(3), v(3);
    kepler_state(1.0, 1.0, 0.5, 0.0, q.data(), v.data());
    const std::vector<double> q0 = q, v0 = v;
    double t = 0.0;
    gr.integrate(t, q, v, 20.0);
    gr.integrate(t, q, v, 0.0);
    CHECK(t == 0.0);
    CHECK(std::hypot(q[0] - q0[0], q[1] - q0[1], q[2] - q0[2]) < 1e-12);
    CHECK(std::hypot(v[0] - v0[0], v[1] - v0[1], v[2] - v0[2]) < 1e-12);
}

TEST_CASE("Gauss-Radau throws numerical_error on a non-finite acceleration") {
    second_order_system s = kepler_problem();
    auto inner = s.acceleration;
    s.acceleration = [inner](double t, const double* q, const double* v, double* a) {
        inner(t, q, v, a);
        if (t > 1.0) a[1] = std::numeric_limits<double>::quiet_NaN();
    };
    gauss_radau gr(s);
    std::vector<double> q = {1.0, 0.0, 0.0}, v = {0.0, 1.0, 0.0};
    double t = 0.0;
    try {
        gr.integrate(t, q, v, 5.0);
        FAIL("no exception");
    } catch (const numerical_error& e) {
        CHECK(std::string(e.what()).find("non-finite") != std::string::npos);
    }
}

TEST_CASE("Gauss-Radau throws numerical_error when the step falls below min_step") {
    // Radial infall from rest at r = 1 onto mu = 1 reaches r = 0 at t = pi / (2 sqrt 2)
    // (Kepler's third law for the degenerate ellipse a = 1/2).
    gauss_radau_options opt;
    opt.min_step = 1e-6;
    gauss_radau gr(kepler_problem(), opt);
    std::vector<double> q = {1.0, 0.0, 0.0}, v = {0.0, 0.0, 0.0};
    double t = 0.0;
    CHECK_THROWS_AS(gr.integrate(t, q, v, 2.0), numerical_error);
    CHECK(t < pi / (2.0 * std::sqrt(2.0)));
    CHECK(t > 1.0);
}

TEST_CASE("Gauss-Radau and the odeint steppers do not allocate while stepping") {
    const std::vector<double> m = {1.0, 1e-3, 1e-4};
    std::vector<double> q = {0, 0, 0, 1, 0, 0, 0, 2, 0}, v = {0, -1.1e-3, 0, 0, 1, 0, -0.7, 0, 0};
    gauss_radau gr(newtonian_nbody(m));
    double t = 0.0;
    gr.integrate(t, q, v, 1.0); // warm up
    std::size_t before = allocations;
    gr.integrate(t, q, v, 20.0);
    CHECK(allocations == before);
    {
        odeint_integrator rk(newtonian_nbody(m), odeint_method::rkf78);
        double tt = 0.0;
        rk.integrate(tt, q, v, 1.0);
        before = allocations;
        rk.integrate(tt, q, v, 20.0);
        CHECK(allocations == before);
    }
    {
        // odeint's bulirsch_stoer::try_step (Boost 1.74) allocates two vectors of k_max + 1
        // values (h_opt, work) per attempt: outside our wall. We check that nothing else does.
        odeint_integrator bs(newtonian_nbody(m), odeint_method::bulirsch_stoer);
        double tt = 0.0;
        bs.integrate(tt, q, v, 1.0);
        before = allocations;
        const std::size_t steps = bs.integrate(tt, q, v, 20.0);
        MESSAGE("bulirsch_stoer: " << allocations - before << " allocations in " << steps
                                   << " steps");
        CHECK(allocations - before <= 2 * steps + 2 * 10); // at most 10 rejected attempts
    }
}

TEST_CASE("odeint integrator lands on t_end, refuses fixed steps for Bulirsch-Stoer, reports "
          "non-finite states") {
    odeint_integrator rk(kepler_problem(), odeint_method::rkf78);
    std::vector<double> q = {1.0, 0.0, 0.0}, v = {0.0, 1.0, 0.0};
    double t = 0.0;
    rk.integrate(t, q, v, 3.7);
    CHECK(t == 3.7);
    // circular orbit of radius 1: the angle is t
    CHECK(q[0] == doctest::Approx(std::cos(3.7)).epsilon(1e-10));

    odeint_options opt;
    opt.fixed_step = 0.1;
    CHECK_THROWS_AS(odeint_integrator(kepler_problem(), odeint_method::bulirsch_stoer, opt),
                    std::invalid_argument);

    second_order_system bad = kepler_problem();
    bad.acceleration = [](double t2, const double*, const double*, double* a) {
        a[0] = t2 > 0.5 ? std::numeric_limits<double>::infinity() : -1.0;
        a[1] = a[2] = 0.0;
    };
    for (odeint_method method : {odeint_method::bulirsch_stoer, odeint_method::rkf78}) {
        odeint_integrator it(bad, method);
        std::vector<double> q2 = {1.0, 0.0, 0.0}, v2 = {0.0, 1.0, 0.0};
        double t2 = 0.0;
        CHECK_THROWS_AS(it.integrate(t2, q2, v2, 2.0), numerical_error);
    }
}

TEST_CASE("integrators refuse an empty system") {
    second_order_system empty;
    CHECK_THROWS_AS(gauss_radau{empty}, std::invalid_argument);
    CHECK_THROWS_AS(odeint_integrator(empty, odeint_method::rkf78), std::invalid_argument);
}

namespace {
/// Integrates one particle from rest at the origin (moving along x) to t_end with Gauss–Radau
/// at epsilon 1e-9, through a force that switches at x = 1. Returns x and v at t_end.
std::array<double, 2> through_edge(std::function<void(const double*, const double*, double*)> f,
                                   bool velocity_dependent, double v0, double t_end,
                                   std::size_t& steps) {
    second_order_system sys;
    sys.n = 1;
    sys.velocity_dependent = velocity_dependent;
    sys.acceleration = [f = std::move(f)](double, const double* q, const double* v, double* a) {
        f(q, v, a);
    };
    gauss_radau gr(sys);
    std::vector<double> q{0.0, 0.0, 0.0}, v{v0, 0.0, 0.0};
    double t = 0.0;
    steps = gr.integrate(t, q, v, t_end);
    return {q[0], v[0]};
}
} // namespace

TEST_CASE("Gauss-Radau crosses a jump or a kink in the force instead of shrinking its steps "
          "towards it") {
    // Every step that straddles a jump has an error measure of the jump's size whatever its
    // length, so the retries land just short of the jump and the steps used to shrink towards
    // it until they vanished against t (seen at the edge of a capture gas envelope). The exact
    // answers below are elementary kinematics.
    std::size_t steps = 0;
    SUBCASE("a constant push that stops at x = 1") {
        // x = t^2/2 until t_c = sqrt 2, then uniform motion at v_c = sqrt 2.
        const auto [x, v] = through_edge(
            [](const double* q, const double*, double* a) {
                a[0] = q[0] < 1.0 ? 1.0 : 0.0;
                a[1] = a[2] = 0.0;
            },
            false, 0.0, 3.0, steps);
        const double tc = std::sqrt(2.0);
        CHECK(x == doctest::Approx(1.0 + tc * (3.0 - tc)).epsilon(1e-8));
        CHECK(v == doctest::Approx(tc).epsilon(1e-8));
    }
    SUBCASE("linear drag that starts at x = 1 (velocity-dependent, like a gas envelope)") {
        // v = 1 until t = 1, then v = exp(-g (t - 1)), x = 1 + (1 - exp(-g (t - 1))) / g.
        const double g = 0.7;
        const auto [x, v] = through_edge(
            [g](const double* q, const double* vel, double* a) {
                a[0] = q[0] < 1.0 ? 0.0 : -g * vel[0];
                a[1] = a[2] = 0.0;
            },
            true, 1.0, 4.0, steps);
        CHECK(x == doctest::Approx(1.0 + (1.0 - std::exp(-3.0 * g)) / g).epsilon(1e-8));
        CHECK(v == doctest::Approx(std::exp(-3.0 * g)).epsilon(1e-8));
    }
    SUBCASE("a spring that starts at x = 1 (continuous force, kinked)") {
        // Uniform motion at v = 1 until t = 1, then x = 1 + sin(w (t - 1)) / w.
        const double w = 2.0;
        const auto [x, v] = through_edge(
            [w](const double* q, const double*, double* a) {
                a[0] = q[0] < 1.0 ? 0.0 : -w * w * (q[0] - 1.0);
                a[1] = a[2] = 0.0;
            },
            false, 1.0, 2.5, steps);
        CHECK(x == doctest::Approx(1.0 + std::sin(1.5 * w) / w).epsilon(1e-8));
        CHECK(v == doctest::Approx(std::cos(1.5 * w)).epsilon(1e-8));
    }
    CHECK(steps < 2000);
}
