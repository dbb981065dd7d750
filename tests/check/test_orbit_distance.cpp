// Minimum distance between two Keplerian orbits against cases worked by hand.
#include "engine/constants.hpp"
#include "engine/error.hpp"

#include "engine/orbit_distance.hpp"

#include <cmath>
#include <doctest/doctest.h>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
resolved_orbit orbit(double a, double e, double i = 0, double node = 0, double peri = 0) {
    resolved_orbit o;
    o.a_m = a;
    o.e = e;
    o.i_rad = i;
    o.node_rad = node;
    o.peri_rad = peri;
    return o;
}
} // namespace

TEST_CASE("coplanar circles: the distance is |a1 - a2|") {
    // By hand: two concentric circles in one plane are |a1 - a2| apart everywhere.
    CHECK(minimum_orbit_distance(orbit(1e8, 0), orbit(1.7e8, 0)) == doctest::Approx(0.7e8));
    CHECK(minimum_orbit_distance(orbit(3e9, 0, 0, 1.0, 2.0), orbit(1e9, 0, 0, 4.0, 0.3)) ==
          doctest::Approx(2e9));
}

TEST_CASE("crossing coplanar ellipses: the distance is 0") {
    // A circle of radius 1 and an ellipse with q = 0.75, Q = 2.25 around the same focus cross.
    for (double peri : {0.0, 1.0, 2.5}) {
        const double d = minimum_orbit_distance(orbit(1e8, 0), orbit(1.5e8, 0.5, 0, 0, peri));
        CHECK(d < 1e-6 * 1e8);
    }
    // Two ellipses turned against each other cross as well.
    CHECK(minimum_orbit_distance(orbit(1e8, 0.3, 0, 0, 0), orbit(1.1e8, 0.3, 0, 0, 2.0)) <
          1e-6 * 1e8);
}

TEST_CASE("a coplanar ellipse inside a circle: circle radius minus apocentre") {
    // By hand: the nearest point is the ellipse's apocentre a (1 + e) = 1.5, circle radius 3.
    CHECK(minimum_orbit_distance(orbit(1e8, 0.5, 0, 0, 1.2), orbit(3e8, 0)) ==
          doctest::Approx(1.5e8).epsilon(1e-9));
}

TEST_CASE("perpendicular circles of radii 1 and 2 are 1 apart on the line of nodes") {
    // By hand: r1 = (cos t, sin t, 0), r2 = 2 (cos s, 0, sin s): d^2 = 5 - 4 cos t cos s >= 1.
    const double d = minimum_orbit_distance(orbit(1e8, 0), orbit(2e8, 0, 0.5 * c::pi));
    CHECK(d == doctest::Approx(1e8).epsilon(1e-9));
}

TEST_CASE("equal inclined circles meet at the nodes, and the order of the orbits does not matter") {
    const auto o1 = orbit(1e8, 0, 0.3, 0.7);
    const auto o2 = orbit(1e8, 0, 0.1, 2.0);
    CHECK(minimum_orbit_distance(o1, o2) < 1e-6 * 1e8);
    const auto o3 = orbit(1.2e8, 0.2, 0.4, 1.0, 0.5);
    CHECK(minimum_orbit_distance(o1, o3) == doctest::Approx(minimum_orbit_distance(o3, o1)));
}

TEST_CASE("the sampled position is on the ellipse: pericentre and apocentre distances") {
    const auto o = orbit(2e8, 0.25, 0.4, 1.0, 0.5);
    const auto q = orbit_position_at_eccentric_anomaly(o, 0.0);
    const auto big_q = orbit_position_at_eccentric_anomaly(o, c::pi);
    CHECK(std::hypot(q[0], q[1], q[2]) == doctest::Approx(1.5e8));
    CHECK(std::hypot(big_q[0], big_q[1], big_q[2]) == doctest::Approx(2.5e8));
}
