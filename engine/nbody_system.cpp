// Building the N-body model from a resolved design.
#include "engine/nbody_system.hpp"

#include "engine/constants.hpp"
#include "engine/error.hpp"

#include <algorithm>
#include <cmath>
#include <string>

namespace moonwright {

namespace {

vec3 cross(const vec3& a, const vec3& b) {
    return {a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]};
}
vec3 unit(const vec3& a) {
    const double n = std::sqrt(a[0] * a[0] + a[1] * a[1] + a[2] * a[2]);
    return {a[0] / n, a[1] / n, a[2] / n};
}

/// Orthonormal frame (x, y, z) with z given and x along z_inertial x z (the ascending node),
/// or the inertial x axis when z is (anti)parallel to the inertial z axis.
struct frame {
    vec3 x, y, z;
};
frame frame_from_normal(const vec3& zhat) {
    vec3 node = {-zhat[1], zhat[0], 0.0};
    const double nn = std::hypot(node[0], node[1]);
    frame f;
    f.z = zhat;
    f.x = nn > 1e-15 ? vec3{node[0] / nn, node[1] / nn, 0.0} : vec3{1.0, 0.0, 0.0};
    f.y = cross(f.z, f.x);
    return f;
}

[[noreturn]] void bad_body(const resolved_body& b, const std::string& field,
                           const std::string& found, const std::string& expected) {
    throw input_error(source_location{"<resolved design>", 0, 0}, "body '" + b.name + "' " + field,
                      found, expected);
}

} // namespace

jacobi_tree nbody_system::tree() const {
    std::vector<int> parent(bodies_.size());
    std::vector<double> gm(bodies_.size());
    for (std::size_t k = 0; k < bodies_.size(); ++k) {
        parent[k] = bodies_[k].parent_;
        gm[k] = bodies_[k].gm_;
    }
    return jacobi_tree(std::move(parent), children_, std::move(gm));
}

nbody_system make_nbody(std::vector<nbody_body> bodies, std::vector<double> x,
                        std::vector<double> v) {
    nbody_system s;
    const std::size_t n = bodies.size();
    if (x.size() != 3 * n || v.size() != 3 * n) {
        throw numerical_error("make_nbody: x and v need 3 doubles per body");
    }
    s.bodies_ = std::move(bodies);
    s.children_.assign(n, {});
    for (std::size_t k = 1; k < n; ++k) {
        const int p = s.bodies_[k].parent_;
        if (p < 0 || static_cast<std::size_t>(p) >= k) {
            throw numerical_error("make_nbody: body " + std::to_string(k) +
                                  " needs a parent listed before it");
        }
        s.children_[static_cast<std::size_t>(p)].push_back(static_cast<int>(k));
    }
    s.x_ = std::move(x);
    s.v_ = std::move(v);
    (void)s.tree(); // validates the tree and the masses
    return s;
}

nbody_system build_nbody(const resolved_system& rs, const build_options& options) {
    const std::size_t n = rs.bodies.size();
    if (n == 0) {
        throw input_error(source_location{"<resolved design>", 0, 0}, "bodies", "none",
                          "at least one body (the star)");
    }
    nbody_system s;
    s.bodies_.resize(n);
    s.children_.assign(n, {});
    for (std::size_t k = 0; k < n; ++k) {
        const resolved_body& b = rs.bodies[k];
        if (!(b.mass_kg > 0) || !std::isfinite(b.mass_kg)) {
            bad_body(b, "mass", std::to_string(b.mass_kg), "a positive finite mass in kg");
        }
        if (k == 0 && b.parent != -1)
            bad_body(b, "parent", std::to_string(b.parent), "-1 for the root");
        if (k > 0) {
            if (b.parent < 0 || static_cast<std::size_t>(b.parent) >= k) {
                bad_body(b, "parent", std::to_string(b.parent), "a body listed before this one");
            }
            if (!b.orbit) bad_body(b, "orbit", "none", "orbital elements");
            if (!(b.orbit->a_m > 0) || !(b.orbit->e >= 0 && b.orbit->e < 1)) {
                bad_body(b, "orbit",
                         "a = " + std::to_string(b.orbit->a_m) +
                             " m, e = " + std::to_string(b.orbit->e),
                         "a > 0 and 0 <= e < 1");
            }
            s.children_[static_cast<std::size_t>(b.parent)].push_back(static_cast<int>(k));
        }
        nbody_body& nb = s.bodies_[k];
        nb.name_ = b.name;
        nb.kind_ = b.kind;
        nb.parent_ = k == 0 ? -1 : b.parent;
        nb.gm_ = constants::G * b.mass_kg;
        nb.radius_ = b.radius_m;
        nb.j2_ = b.j2;
        nb.j4_ = b.j4;
    }
    for (auto& ch : s.children_) {
        std::stable_sort(ch.begin(), ch.end(), [&](int a, int b) {
            return rs.bodies[static_cast<std::size_t>(a)].orbit->a_m <
                   rs.bodies[static_cast<std::size_t>(b)].orbit->a_m;
        });
    }
    const jacobi_tree tree = s.tree();

    // Root spin axis: +z tilted about +x by its obliquity.
    {
        const double eps = rs.bodies[0].obliquity_rad.value_or(0.0);
        s.bodies_[0].spin_axis_ = {0.0, -std::sin(eps), std::cos(eps)};
    }
    std::vector<double> rj(3 * n, 0.0), vj(3 * n, 0.0);
    std::vector<frame> orbit_frame(n, frame{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}});
    for (int k : tree.order()) {
        if (k == 0) continue;
        const auto ku = static_cast<std::size_t>(k);
        const resolved_body& b = rs.bodies[ku];
        const auto p = static_cast<std::size_t>(b.parent);
        frame ref{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}};
        if (p != 0) {
            ref = options.plane_ == reference_plane::parent_equator
                      ? frame_from_normal(s.bodies_[p].spin_axis_)
                      : orbit_frame[p];
        }
        const resolved_orbit& o = *b.orbit;
        const orbital_elements el =
            elements_from_mean(o.a_m, o.e, o.i_rad, o.node_rad, o.peri_rad, o.mean_anomaly_rad);
        const cartesian_state local = elements_to_cartesian(tree.kepler_gm(ku), el);
        for (std::size_t j = 0; j < 3; ++j) {
            rj[3 * ku + j] = ref.x[j] * local.r[0] + ref.y[j] * local.r[1] + ref.z[j] * local.r[2];
            vj[3 * ku + j] = ref.x[j] * local.v[0] + ref.y[j] * local.v[1] + ref.z[j] * local.v[2];
        }
        const vec3 h = unit(cross({rj[3 * ku], rj[3 * ku + 1], rj[3 * ku + 2]},
                                  {vj[3 * ku], vj[3 * ku + 1], vj[3 * ku + 2]}));
        orbit_frame[ku] = frame_from_normal(h);
        // Spin axis: the orbit normal tilted by the obliquity about the orbit's line of nodes.
        const double eps = b.obliquity_rad.value_or(0.0);
        const vec3 nxh = cross(orbit_frame[ku].x, h);
        s.bodies_[ku].spin_axis_ = unit({std::cos(eps) * h[0] + std::sin(eps) * nxh[0],
                                         std::cos(eps) * h[1] + std::sin(eps) * nxh[1],
                                         std::cos(eps) * h[2] + std::sin(eps) * nxh[2]});
    }
    s.x_.assign(3 * n, 0.0);
    s.v_.assign(3 * n, 0.0);
    tree.jacobi_to_inertial(rj.data(), s.x_.data()); // root Jacobi = barycentre at rest at 0
    tree.jacobi_to_inertial(vj.data(), s.v_.data());
    return s;
}

} // namespace moonwright
