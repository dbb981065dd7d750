// The tangent equations against finite differences: the variational Kepler drift, the force
// Jacobian (point masses, J2, extra forces) and the Wisdom–Holman tangent map over one and
// many steps.
#include "engine/force_variations.hpp"
#include "engine/kepler_solver.hpp"
#include "engine/kepler_variation.hpp"
#include "engine/random.hpp"
#include "integrators/wisdom_holman.hpp"
#include "megno_systems.hpp"

#include <doctest/doctest.h>

#include <cmath>
#include <vector>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

double norm(const std::vector<double>& x) {
    double s = 0;
    for (double e : x) s += e * e;
    return std::sqrt(s);
}

double diff_norm(const std::vector<double>& x, const std::vector<double>& y) {
    double s = 0;
    for (std::size_t i = 0; i < x.size(); ++i) s += (x[i] - y[i]) * (x[i] - y[i]);
    return std::sqrt(s);
}

/// Relative difference of the variational Kepler drift from central differences of
/// kepler_drift (step eps along the deviation), for positions and velocities.
void check_kepler_variation(double gm, const double* r0, const double* v0, double dt) {
    rng g(7);
    double dr[3], dv[3];
    const double rn = std::sqrt(r0[0] * r0[0] + r0[1] * r0[1] + r0[2] * r0[2]);
    const double vn = std::sqrt(v0[0] * v0[0] + v0[1] * v0[1] + v0[2] * v0[2]);
    for (int k = 0; k < 3; ++k) {
        dr[k] = rn * g.normal();
        dv[k] = vn * g.normal();
    }
    double r[3] = {r0[0], r0[1], r0[2]}, v[3] = {v0[0], v0[1], v0[2]};
    double tr[3] = {dr[0], dr[1], dr[2]}, tv[3] = {dv[0], dv[1], dv[2]};
    REQUIRE(kepler_drift_variation(gm, r, v, tr, tv, dt));
    double rr[3] = {r0[0], r0[1], r0[2]}, vv[3] = {v0[0], v0[1], v0[2]};
    REQUIRE(kepler_drift(gm, rr, vv, dt).converged);
    for (int k = 0; k < 3; ++k) { // the state is advanced bitwise as kepler_drift does
        CHECK(r[k] == rr[k]);
        CHECK(v[k] == vv[k]);
    }
    const double eps = 1e-6;
    double rp[3], vp[3], rm[3], vm[3];
    for (int k = 0; k < 3; ++k) {
        rp[k] = r0[k] + eps * dr[k];
        vp[k] = v0[k] + eps * dv[k];
        rm[k] = r0[k] - eps * dr[k];
        vm[k] = v0[k] - eps * dv[k];
    }
    REQUIRE(kepler_drift(gm, rp, vp, dt).converged);
    REQUIRE(kepler_drift(gm, rm, vm, dt).converged);
    std::vector<double> fr(3), fv(3), ar(tr, tr + 3), av(tv, tv + 3);
    for (int k = 0; k < 3; ++k) {
        fr[static_cast<std::size_t>(k)] = (rp[k] - rm[k]) / (2 * eps);
        fv[static_cast<std::size_t>(k)] = (vp[k] - vm[k]) / (2 * eps);
    }
    const double er = diff_norm(fr, ar) / norm(ar), ev = diff_norm(fv, av) / norm(av);
    MESSAGE("dt = " << dt << " s: tangent vs central difference, rel. error r " << er << ", v "
                    << ev);
    CHECK(er < 1e-6);
    CHECK(ev < 1e-6);
}

} // namespace

TEST_CASE("variational Kepler drift matches central differences of the drift") {
    const double gm = c::GM_sun;
    const double a = c::au, e = 0.5;
    // Pericentre state of an e = 0.5 orbit, tilted.
    const double q = a * (1 - e), vq = std::sqrt(gm * (1 + e) / q);
    const double r0[3] = {q, 0.1 * q, 0.05 * q};
    const double v0[3] = {-0.05 * vq, vq, 0.2 * vq};
    const double period = c::two_pi * std::sqrt(a * a * a / gm);
    SUBCASE("short step") {
        check_kepler_variation(gm, r0, v0, 0.013 * period);
    }
    SUBCASE("longer than two periods (reduced modulo the period)") {
        check_kepler_variation(gm, r0, v0, 2.37 * period);
    }
    SUBCASE("backward") {
        check_kepler_variation(gm, r0, v0, -0.31 * period);
    }
    SUBCASE("hyperbolic") {
        const double vh[3] = {0.0, 1.6 * vq, 0.1 * vq};
        check_kepler_variation(gm, r0, vh, 0.4 * period);
    }
}

TEST_CASE("force Jacobian (tidal tensor, J2, extra force) matches central differences") {
    const nbody_system sys = build_nbody(test::two_moons(12, 0.05, 1e23, 4.2e8, 0.0147));
    // An extra drag-like force on the outer moon that reads positions and velocities.
    extra_force drag;
    drag.name = "test drag";
    drag.velocity_dependent = true;
    drag.add = [](double, const nbody_system&, const double* q, const double* v, double* acc) {
        const double r = std::sqrt(q[9] * q[9] + q[10] * q[10] + q[11] * q[11]);
        for (int k = 0; k < 3; ++k) acc[9 + k] -= 1e-9 * v[9 + k] * (4.2e8 / r);
    };
    const force_model model(sys, {drag});
    const force_variations var(model);
    std::vector<double> q, v;
    relative_state_of(sys, q, v);
    const std::size_t m = q.size();
    rng g(11);
    std::vector<double> dq(m), dv(m);
    for (std::size_t i = 0; i < m; ++i) {
        dq[i] = 1e7 * g.normal();
        dv[i] = 10 * g.normal();
    }
    std::vector<double> da(m), ap(m), am(m), qp(m), qm(m), vp(m), vm(m);
    var.relative(0.0, q.data(), v.data(), dq.data(), dv.data(), da.data());
    const double eps = 1e-3; // the deviation is already small against the moons' distances
    for (std::size_t i = 0; i < m; ++i) {
        qp[i] = q[i] + eps * dq[i];
        qm[i] = q[i] - eps * dq[i];
        vp[i] = v[i] + eps * dv[i];
        vm[i] = v[i] - eps * dv[i];
    }
    model.relative_accelerations(0.0, qp.data(), vp.data(), ap.data());
    model.relative_accelerations(0.0, qm.data(), vm.data(), am.data());
    CHECK(da[0] == 0.0);
    for (std::size_t k = 1; k < sys.size(); ++k) {
        std::vector<double> fd(3), an(3);
        for (std::size_t j = 0; j < 3; ++j) {
            fd[j] = (ap[3 * k + j] - am[3 * k + j]) / (2 * eps);
            an[j] = da[3 * k + j];
        }
        const double err = diff_norm(fd, an) / norm(an);
        MESSAGE("body " << k << ": Jacobian vs central difference, rel. error " << err);
        CHECK(err < 1e-6);
    }
}

namespace {

/// Largest relative difference of the tangent map over `steps` WH steps from central
/// differences of the map itself (same start, deviation +- eps delta).
double tangent_map_error(const nbody_system& sys, std::size_t steps, int corrector,
                         bool modified_kick = false) {
    wh_options o;
    o.step = test::moon_period(4.2e8) / 40;
    o.corrector_order = corrector;
    o.modified_kick = modified_kick;
    wisdom_holman a(sys, {}, o);
    REQUIRE(a.enable_megno(5));
    const std::vector<double> r0 = a.jacobi_positions(), v0 = a.jacobi_velocities();
    const std::vector<double> dr0 = a.tangent_positions(), dv0 = a.tangent_velocities();
    a.advance(steps);
    const double eps = 1e-6;
    auto run = [&](double sign, std::vector<double>& r, std::vector<double>& v) {
        wisdom_holman b(sys, {}, o);
        std::vector<double> rs = r0, vs = v0;
        for (std::size_t i = 0; i < rs.size(); ++i) {
            rs[i] += sign * eps * dr0[i];
            vs[i] += sign * eps * dv0[i];
        }
        b.set_jacobi_state(rs, vs);
        b.advance(steps);
        r = b.jacobi_positions();
        v = b.jacobi_velocities();
    };
    std::vector<double> rp, vp, rm, vm;
    run(+1, rp, vp);
    run(-1, rm, vm);
    std::vector<double> fr(rp.size()), fv(vp.size());
    for (std::size_t i = 0; i < rp.size(); ++i) {
        fr[i] = (rp[i] - rm[i]) / (2 * eps);
        fv[i] = (vp[i] - vm[i]) / (2 * eps);
    }
    const double er = diff_norm(fr, a.tangent_positions()) / norm(a.tangent_positions());
    const double ev = diff_norm(fv, a.tangent_velocities()) / norm(a.tangent_velocities());
    MESSAGE(steps << " steps: tangent map vs central differences, rel. error r " << er << ", v "
                  << ev);
    return std::max(er, ev);
}

} // namespace

TEST_CASE("Wisdom–Holman tangent map matches central differences of the map") {
    // Mikkola & Innanen (1999): the tangent map is the derivative of the map, so a central
    // difference of the map must agree to O(eps^2) and round-off.
    const nbody_system sys = build_nbody(test::two_moons(12, 0.05, 1e23, 4.2e8, 0.0147));
    CHECK(tangent_map_error(sys, 1, 0) < 1e-6);
    CHECK(tangent_map_error(sys, 400, 0) < 1e-6);
    // With the corrector on, MEGNO runs on the mapping variables: the same map.
    CHECK(tangent_map_error(sys, 400, 5) < 1e-6);
    // The modified kick's own Jacobian (the variation of dt^2/12 (da/dq) a) is part of it.
    CHECK(tangent_map_error(sys, 1, 5, true) < 1e-6);
    CHECK(tangent_map_error(sys, 400, 5, true) < 1e-6);
}
