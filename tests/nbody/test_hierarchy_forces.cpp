// Hierarchical Jacobi coordinates, the model built from a resolved design, and the forces.
#include "engine/constants.hpp"
#include "engine/diagnostics.hpp"
#include "engine/forces.hpp"
#include "engine/hierarchy.hpp"
#include "engine/nbody_system.hpp"
#include "engine/random.hpp"
#include "nbody_fixtures.hpp"

#include <doctest/doctest.h>

#include <cmath>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

/// Star, two planets (the outer one listed first), moons, and a submoon.
resolved_system tree_system() {
    resolved_system rs;
    const int star = test::add_body(rs, "Ilvar", body_kind::star, -1, c::M_sun, c::R_sun);
    const int outer = test::add_body(rs, "Tessaly", body_kind::planet, star, 300 * c::M_earth, 7e7,
                                     test::orbit(5.2 * c::au, 0.05, 0.02, 1.0, 2.0, 3.0), 0.0147);
    const int inner = test::add_body(rs, "Ostra", body_kind::planet, star, 1.1 * c::M_earth, 6.6e6,
                                     test::orbit(0.9 * c::au, 0.03, 0.01, 0.3, 0.2, 0.1), 1.1e-3);
    test::add_body(rs, "Ostra b", body_kind::moon, inner, 0.01 * c::M_earth, 1.7e6,
                   test::orbit(4.0e8, 0.05, 0.09, 0.5, 0.4, 0.2));
    const int m1 = test::add_body(rs, "Ostra a", body_kind::moon, inner, 1e-4 * c::M_earth, 4e5,
                                  test::orbit(3.0e7, 0.01, 0.3, 1.2, 0.7, 2.2));
    test::add_body(rs, "Tessaly a", body_kind::moon, outer, 0.02 * c::M_earth, 2.5e6,
                   test::orbit(1.0e9, 0.004, 0.05, 0.1, 0.2, 5.0));
    test::add_body(rs, "Ostra a i", body_kind::submoon, m1, 1e-9 * c::M_earth, 1e4,
                   test::orbit(2.0e6, 0.0, 0.2, 0.0, 0.0, 1.0));
    rs.bodies[static_cast<std::size_t>(outer)].obliquity_rad = 0.05;
    return rs;
}

double max_rel(const std::vector<double>& a, const std::vector<double>& b) {
    double worst = 0;
    for (std::size_t k = 0; k < a.size(); k += 3) {
        const double d = std::hypot(a[k] - b[k], a[k + 1] - b[k + 1], a[k + 2] - b[k + 2]);
        const double s = std::hypot(b[k], b[k + 1], b[k + 2]);
        worst = std::max(worst, s > 0 ? d / s : d);
    }
    return worst;
}

} // namespace

TEST_CASE("hierarchical Jacobi transforms invert each other to round-off") {
    const nbody_system sys = build_nbody(tree_system());
    const jacobi_tree tree = sys.tree();
    const std::size_t n = sys.size();
    std::vector<double> j(3 * n), back(3 * n), rel(3 * n), rel2(3 * n), j2(3 * n);
    for (const auto* x : {&sys.x_, &sys.v_}) {
        tree.inertial_to_jacobi(x->data(), j.data());
        tree.jacobi_to_inertial(j.data(), back.data());
        // Inertial coordinates themselves carry the round-off of the largest orbit.
        double scale = 0;
        for (double e : *x) scale = std::max(scale, std::abs(e));
        for (std::size_t k = 0; k < 3 * n; ++k) CHECK(std::abs(back[k] - (*x)[k]) < 1e-15 * scale);
        tree.inertial_to_relative(x->data(), rel.data());
        tree.relative_to_jacobi(rel.data(), j2.data());
        tree.jacobi_to_relative(j2.data(), rel2.data());
        CHECK(max_rel(rel2, rel) < 1e-14); // relative <-> Jacobi keeps the moon's digits
        for (std::size_t k = 3; k < 3 * n; ++k) CHECK(std::abs(j2[k] - j[k]) < 1e-15 * scale);
    }
}

TEST_CASE("Jacobi masses: kinetic energy and momentum split exactly (mass-orthogonality)") {
    const nbody_system sys = build_nbody(tree_system());
    const jacobi_tree tree = sys.tree();
    const std::size_t n = sys.size();
    // Give the barycentre a velocity so the root term is tested too.
    std::vector<double> v = sys.v_;
    for (std::size_t k = 0; k < n; ++k) v[3 * k] += 1234.5;
    std::vector<double> vj(3 * n);
    tree.inertial_to_jacobi(v.data(), vj.data());
    double t_in = 0, t_jac = 0;
    for (std::size_t k = 0; k < n; ++k) {
        for (std::size_t d = 0; d < 3; ++d) {
            t_in += 0.5 * sys.bodies_[k].gm_ * v[3 * k + d] * v[3 * k + d];
            t_jac += 0.5 * tree.jacobi_gm(k) * vj[3 * k + d] * vj[3 * k + d];
        }
    }
    CHECK(t_jac == doctest::Approx(t_in).epsilon(1e-13));
    CHECK(vj[0] == doctest::Approx(1234.5).epsilon(1e-12)); // barycentre velocity
    // Two bodies: the Jacobi coordinate is the relative vector, GM the sum.
    CHECK(tree.kepler_gm(3) == doctest::Approx(sys.bodies_[2].gm_ + sys.bodies_[3].gm_ +
                                               sys.bodies_[4].gm_ + sys.bodies_[6].gm_));
}

TEST_CASE("build_nbody puts each body on its resolved orbit relative to its parent subsystem") {
    const resolved_system rs = tree_system();
    const nbody_system sys = build_nbody(rs);
    const auto el = osculating_elements(sys);
    // Planets: elements in the inertial frame; children sorted innermost first.
    CHECK(sys.children_[0] == std::vector<int>{2, 1});
    CHECK(sys.children_[2] == std::vector<int>{4, 3});
    for (int k : {1, 2}) {
        const auto& o = *rs.bodies[static_cast<std::size_t>(k)].orbit;
        CHECK(semi_major_axis(el[static_cast<std::size_t>(k)]) ==
              doctest::Approx(o.a_m).epsilon(1e-12));
        CHECK(el[static_cast<std::size_t>(k)].e == doctest::Approx(o.e).epsilon(1e-12));
        CHECK(el[static_cast<std::size_t>(k)].i == doctest::Approx(o.i_rad).epsilon(1e-12));
        CHECK(mean_anomaly(o.e, el[static_cast<std::size_t>(k)].nu) ==
              doctest::Approx(o.mean_anomaly_rad > c::pi ? o.mean_anomaly_rad - c::two_pi
                                                         : o.mean_anomaly_rad)
                  .epsilon(1e-11));
    }
    // Moons: a and e are frame-free; the inclination to the parent's orbit is the angle
    // between the two orbit normals when the nodes line up, so check a, e and barycentre.
    for (int k : {3, 4, 5, 6}) {
        const auto& o = *rs.bodies[static_cast<std::size_t>(k)].orbit;
        CHECK(semi_major_axis(el[static_cast<std::size_t>(k)]) ==
              doctest::Approx(o.a_m).epsilon(1e-10));
        CHECK(el[static_cast<std::size_t>(k)].e == doctest::Approx(o.e).epsilon(1e-8));
    }
    double px = 0, vx = 0, m = 0;
    for (std::size_t k = 0; k < sys.size(); ++k) {
        px += sys.bodies_[k].gm_ * sys.x_[3 * k];
        vx += sys.bodies_[k].gm_ * sys.v_[3 * k];
        m += sys.bodies_[k].gm_;
    }
    CHECK(std::abs(px / m) < 1e-6 * c::au);
    CHECK(std::abs(vx / m) < 1e-9);
}

TEST_CASE("a moon's inclination is measured from its planet's orbital plane") {
    resolved_system rs;
    const int s = test::add_body(rs, "Sol B", body_kind::star, -1, c::M_sun, c::R_sun);
    const int p = test::add_body(rs, "Verd", body_kind::planet, s, c::M_earth, c::R_earth,
                                 test::orbit(c::au, 0.0, 30 * c::deg, 40 * c::deg));
    test::add_body(rs, "Verd I", body_kind::moon, p, 1e-8 * c::M_earth, 1e3,
                   test::orbit(4e8, 0.0, 0.0, 0.0, 0.0, 0.3));
    const auto el = osculating_elements(build_nbody(rs));
    // Moon at i = 0 in the planet's plane: same inclination and node as the planet.
    CHECK(el[2].i == doctest::Approx(30 * c::deg).epsilon(1e-9));
    CHECK(el[2].node == doctest::Approx(40 * c::deg).epsilon(1e-9));
}

TEST_CASE("zonal accelerations are the gradient of the zonal potential (J2 and J4)") {
    rng g(3);
    const double gm = c::GM_jup, radius = c::R_jup;
    const double spin[3] = {0.1, -0.2, std::sqrt(1 - 0.05)};
    for (int n : {2, 4}) {
        for (int k = 0; k < 50; ++k) {
            double d[3] = {g.uniform(-5, 5) * radius, g.uniform(-5, 5) * radius,
                           g.uniform(-3, 3) * radius};
            if (std::hypot(d[0], d[1], d[2]) < 1.5 * radius) continue;
            auto phi = [&](const double* x) { // K r^-(n+1) P_n(u)
                const double r = std::hypot(x[0], x[1], x[2]);
                const double u = (x[0] * spin[0] + x[1] * spin[1] + x[2] * spin[2]) / r;
                const double pn =
                    n == 2 ? 0.5 * (3 * u * u - 1) : (35 * u * u * u * u - 30 * u * u + 3) / 8;
                return gm * 1e-3 * std::pow(radius, n) * pn / std::pow(r, n + 1);
            };
            double a[3] = {0, 0, 0};
            add_zonal_acceleration(n, gm, 1e-3, radius, spin, d, a);
            for (int j = 0; j < 3; ++j) {
                const double h = 1e-5 * radius;
                double xp[3] = {d[0], d[1], d[2]}, xm[3] = {d[0], d[1], d[2]};
                xp[j] += h;
                xm[j] -= h;
                const double grad = (phi(xp) - phi(xm)) / (2 * h);
                const double scale = gm * 1e-3 / (radius * radius);
                CHECK(std::abs(a[j] + grad) < 1e-7 * scale);
            }
        }
    }
}

TEST_CASE("forces: total momentum is conserved and the relative system matches inertial") {
    nbody_system sys = build_nbody(tree_system());
    sys.bodies_[2].j4_ = -2e-6;
    const force_model model(sys);
    const std::size_t n = sys.size();
    std::vector<double> q, v, acc(3 * n), rel_acc(3 * n);
    relative_state_of(sys, q, v);
    model.inertial_accelerations(0, q.data(), v.data(), acc.data());
    double f[3] = {0, 0, 0}, fmax = 0;
    for (std::size_t k = 0; k < n; ++k) {
        for (std::size_t j = 0; j < 3; ++j) {
            f[j] += sys.bodies_[k].gm_ * acc[3 * k + j];
            fmax = std::max(fmax, std::abs(sys.bodies_[k].gm_ * acc[3 * k + j]));
        }
    }
    for (double fj : f) CHECK(std::abs(fj) < 1e-13 * fmax);
    const second_order_system ode = relative_system(sys);
    CHECK(ode.n == n);
    ode.acceleration(0, q.data(), v.data(), rel_acc.data());
    for (std::size_t k = 1; k < n; ++k) {
        const auto p = static_cast<std::size_t>(sys.bodies_[k].parent_);
        for (std::size_t j = 0; j < 3; ++j) {
            CHECK(rel_acc[3 * k + j] ==
                  doctest::Approx(acc[3 * k + j] - acc[3 * p + j]).epsilon(1e-12).scale(1e-12));
        }
    }
    // Energy and angular momentum from relative coordinates equal the inertial sums.
    double t = 0;
    vec3 l{0, 0, 0};
    for (std::size_t k = 0; k < n; ++k) {
        const double m = sys.bodies_[k].gm_ / c::G;
        const double* x = &sys.x_[3 * k];
        const double* w = &sys.v_[3 * k];
        t += 0.5 * m * (w[0] * w[0] + w[1] * w[1] + w[2] * w[2]);
        l[0] += m * (x[1] * w[2] - x[2] * w[1]);
        l[1] += m * (x[2] * w[0] - x[0] * w[2]);
        l[2] += m * (x[0] * w[1] - x[1] * w[0]);
    }
    CHECK(total_energy(model, q.data(), v.data()) ==
          doctest::Approx(t + model.potential_energy(q.data())).epsilon(1e-12));
    const vec3 lj = angular_momentum(sys);
    for (int j = 0; j < 3; ++j)
        CHECK(lj[static_cast<std::size_t>(j)] ==
              doctest::Approx(l[static_cast<std::size_t>(j)]).epsilon(1e-10).scale(std::abs(l[2])));
}

TEST_CASE("bad resolved input is reported, not crashed on") {
    resolved_system rs;
    test::add_body(rs, "Dim", body_kind::star, -1, 0.0, 1.0);
    CHECK_THROWS_AS(build_nbody(rs), input_error);
    resolved_system rs2;
    test::add_body(rs2, "Dim", body_kind::star, -1, c::M_sun, 1.0);
    test::add_body(rs2, "Nix", body_kind::planet, 0, c::M_earth, 1.0);
    CHECK_THROWS_WITH_AS(build_nbody(rs2), doctest::Contains("Nix"), input_error);
}
