// Long N-body checks against published results: the outer Solar System over 1e5 years and
// Kozai–Lidov cycles.
#include "engine/constants.hpp"
#include "engine/diagnostics.hpp"
#include "integrators/wisdom_holman.hpp"
#include "nbody_fixtures.hpp"

#include <doctest/doctest.h>

#include <cmath>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

/// Largest eccentricity of body 2 over [0, t_end] in `samples` reads.
double kozai_e_max(double i0) {
    resolved_system rs;
    const int s = test::add_body(rs, "Aster", body_kind::star, -1, c::M_sun, c::R_sun);
    const int p = test::add_body(rs, "Aster b", body_kind::planet, s, c::M_earth, c::R_earth,
                                 test::orbit(c::au, 0.0));
    const double hill = c::au * std::cbrt(c::M_earth / (3 * c::M_sun));
    test::add_body(rs, "Aster b I", body_kind::moon, p, 1e-12 * c::M_earth, 1.0,
                   test::orbit(0.05 * hill, 0.01, i0, 0.0, 90 * c::deg, 0.0));
    const nbody_system sys = build_nbody(rs);
    wh_options o;
    o.step = 0.0;
    o.period_fraction = 1.0 / 40;
    wisdom_holman wh(sys, {}, o);
    std::vector<double> q, v;
    double e_max = 0;
    const double t_end = 400 * c::year;
    const int samples = 8000;
    const auto per_sample = static_cast<std::size_t>(std::ceil(t_end / samples / wh.step_size()));
    for (int k = 1; k <= samples; ++k) {
        wh.advance(per_sample);
        wh.relative_state(q, v);
        e_max = std::max(e_max, osculating_elements(wh.forces().tree(), q.data(), v.data())[2].e);
    }
    return e_max;
}

} // namespace

TEST_CASE("outer Solar System (Hairer, Lubich & Wanner): energy error bounded over 1e5 years") {
    // Hairer, Lubich & Wanner, Geometric Numerical Integration (2nd ed. 2006), Sec. I.2.3,
    // Table 2.2: masses relative to the Sun (the Sun carries the inner planets), positions in
    // AU and velocities in AU/day, G = 2.95912208286e-4 AU^3 / (M_sun day^2). From memory.
    const double g_book = 2.95912208286e-4;
    const double mass[6] = {1.00000597682,      0.000954786104043,  0.000285583733151,
                            0.0000437273164546, 0.0000517759138449, 1.0 / 1.3e8};
    const double pos[6][3] = {{0, 0, 0},
                              {-3.5023653, -3.8169847, -1.5507963},
                              {9.0755314, -3.0458353, -1.6483708},
                              {8.3101420, -16.2901086, -7.2521278},
                              {11.4707666, -25.7294829, -10.8169456},
                              {-15.5387357, -25.2225594, -3.1902382}};
    const double vel[6][3] = {{0, 0, 0},
                              {0.00565429, -0.00412490, -0.00190589},
                              {0.00168318, 0.00483525, 0.00192462},
                              {0.00354178, 0.00137102, 0.00055029},
                              {0.00288930, 0.00114527, 0.00039677},
                              {0.00276725, -0.00170702, -0.00136504}};
    const char* names[6] = {"Sun", "Jupiter", "Saturn", "Uranus", "Neptune", "Pluto"};
    std::vector<nbody_body> bodies(6);
    std::vector<double> x(18), v(18);
    const double to_gm = g_book * c::au * c::au * c::au / (c::day * c::day);
    for (std::size_t k = 0; k < 6; ++k) {
        bodies[k].name_ = names[k];
        bodies[k].kind_ = k == 0 ? body_kind::star : body_kind::planet;
        bodies[k].parent_ = k == 0 ? -1 : 0;
        bodies[k].gm_ = mass[k] * to_gm;
        for (std::size_t j = 0; j < 3; ++j) {
            x[3 * k + j] = pos[k][j] * c::au;
            v[3 * k + j] = vel[k][j] * c::au / c::day;
        }
    }
    const nbody_system sys = make_nbody(bodies, x, v);
    wh_options o;
    o.step = 100 * c::day; // Jupiter's period / 43
    wisdom_holman wh(sys, {}, o);
    std::vector<double> q, w;
    wh.relative_state(q, w);
    const double e0 = total_energy(wh.forces(), q.data(), w.data());
    const int samples = 1000;
    double first_half = 0, second_half = 0;
    const auto per_sample = static_cast<std::size_t>(std::ceil(1e5 * c::year / samples / o.step));
    for (int k = 1; k <= samples; ++k) {
        wh.advance(per_sample);
        wh.relative_state(q, w);
        const double err = relative_error(total_energy(wh.forces(), q.data(), w.data()), e0);
        (k <= samples / 2 ? first_half : second_half) =
            std::max(k <= samples / 2 ? first_half : second_half, err);
    }
    MESSAGE("outer Solar System, dt = 100 d: max |dE/E| first 5e4 yr "
            << first_half << ", second 5e4 yr " << second_half);
    CHECK(first_half < 5e-6); // a sanity bound for dt = 100 d (no source)
    // No secular drift: the second half's excursions are no larger than the first half's
    // (a drift would make them grow in proportion to time).
    CHECK(second_half < 1.5 * first_half);
}

TEST_CASE("Kozai-Lidov cycles: e_max = sqrt(1 - 5/3 cos^2 i0) within 1%") {
    // Kozai (1962, AJ 67, 591); Lidov (1962, Planet. Space Sci. 9, 719): a test particle
    // starting nearly circular at inclination i0 to a distant circular perturber reaches
    // e_max = sqrt(1 - 5/3 cos^2 i0) in the quadrupole approximation.
    for (double i0_deg : {60.0, 75.0}) {
        const double i0 = i0_deg * c::deg;
        const double expect = std::sqrt(1 - 5.0 / 3.0 * std::cos(i0) * std::cos(i0));
        const double got = kozai_e_max(i0);
        MESSAGE("i0 = " << i0_deg << " deg: e_max " << got << ", theory " << expect);
        CHECK(got == doctest::Approx(expect).epsilon(0.01));
    }
}
