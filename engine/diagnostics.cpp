// Energy, angular momentum and osculating elements of an N-body state.
#include "engine/diagnostics.hpp"

#include "engine/constants.hpp"

#include <cmath>

namespace moonwright {

double total_energy(const force_model& model, const double* rel_q, const double* rel_v) {
    const jacobi_tree& tree = model.tree();
    const std::size_t n = tree.size();
    std::vector<double> vj(3 * n);
    tree.relative_to_jacobi(rel_v, vj.data());
    // T = sum mu_k v_k^2 / 2 over Jacobi orbits + M V^2 / 2 (the transform is mass-orthogonal,
    // Beust 2003).
    double t = 0;
    for (std::size_t k = 0; k < n; ++k) {
        const double v2 =
            vj[3 * k] * vj[3 * k] + vj[3 * k + 1] * vj[3 * k + 1] + vj[3 * k + 2] * vj[3 * k + 2];
        t += 0.5 * tree.jacobi_gm(k) * v2;
    }
    return t / constants::G + model.potential_energy(rel_q);
}

vec3 angular_momentum(const jacobi_tree& tree, const double* rel_q, const double* rel_v) {
    const std::size_t n = tree.size();
    std::vector<double> rj(3 * n), vj(3 * n);
    tree.relative_to_jacobi(rel_q, rj.data());
    tree.relative_to_jacobi(rel_v, vj.data());
    vec3 l{0, 0, 0};
    for (std::size_t k = 0; k < n; ++k) {
        const double* r = &rj[3 * k];
        const double* v = &vj[3 * k];
        const double m = tree.jacobi_gm(k) / constants::G;
        l[0] += m * (r[1] * v[2] - r[2] * v[1]);
        l[1] += m * (r[2] * v[0] - r[0] * v[2]);
        l[2] += m * (r[0] * v[1] - r[1] * v[0]);
    }
    return l;
}

std::vector<orbital_elements> osculating_elements(const jacobi_tree& tree, const double* rel_q,
                                                  const double* rel_v) {
    const std::size_t n = tree.size();
    std::vector<double> rj(3 * n), vj(3 * n);
    tree.relative_to_jacobi(rel_q, rj.data());
    tree.relative_to_jacobi(rel_v, vj.data());
    std::vector<orbital_elements> out(n);
    for (std::size_t k = 1; k < n; ++k) {
        cartesian_state s;
        for (std::size_t j = 0; j < 3; ++j) {
            s.r[j] = rj[3 * k + j];
            s.v[j] = vj[3 * k + j];
        }
        out[k] = cartesian_to_elements(tree.kepler_gm(k), s);
    }
    return out;
}

double relative_error(double value, double reference) noexcept {
    return reference != 0 ? std::abs(value - reference) / std::abs(reference) : std::abs(value);
}

double total_energy(const nbody_system& sys) {
    std::vector<double> q, v;
    relative_state_of(sys, q, v);
    return total_energy(force_model(sys), q.data(), v.data());
}

vec3 angular_momentum(const nbody_system& sys) {
    std::vector<double> q, v;
    relative_state_of(sys, q, v);
    return angular_momentum(sys.tree(), q.data(), v.data());
}

std::vector<orbital_elements> osculating_elements(const nbody_system& sys) {
    std::vector<double> q, v;
    relative_state_of(sys, q, v);
    return osculating_elements(sys.tree(), q.data(), v.data());
}

} // namespace moonwright
