// Tidal-tensor Jacobian of point-mass gravity, central differences for zonal and extra forces.
#include "engine/force_variations.hpp"

#include <algorithm>
#include <cmath>

namespace moonwright {

force_variations::force_variations(const force_model& model) : model_(model) {
    const jacobi_tree& tree = model_.tree();
    const nbody_system& sys = model_.system();
    const std::size_t n = tree.size();
    auto ancestor_at = [&](std::size_t k, int depth) {
        while (tree.depth(k) > depth) k = static_cast<std::size_t>(tree.parent(k));
        return k;
    };
    for (std::size_t p = 0; p < n; ++p) {
        const nbody_body& b = sys.bodies_[p];
        if ((b.j2_ == 0 && b.j4_ == 0) || !(b.radius_ > 0)) continue;
        for (std::size_t s = p + 1; s < n; ++s) {
            if (tree.depth(s) > tree.depth(p) && ancestor_at(s, tree.depth(p)) == p)
                oblate_.push_back({p, s, tree.depth(p)});
        }
    }
    if (model_.has_extra_forces()) {
        for (auto* vec : {&qp_, &qm_, &vp_, &vm_, &ap_, &am_}) vec->assign(3 * n, 0.0);
    }
}

void force_variations::separation(std::size_t i, std::size_t j, int lca_depth, const double* q,
                                  double* out) const noexcept {
    const jacobi_tree& tree = model_.tree();
    out[0] = out[1] = out[2] = 0.0;
    for (std::size_t m = i; tree.depth(m) > lca_depth; m = static_cast<std::size_t>(tree.parent(m)))
        for (std::size_t c = 0; c < 3; ++c) out[c] += q[3 * m + c];
    for (std::size_t m = j; tree.depth(m) > lca_depth; m = static_cast<std::size_t>(tree.parent(m)))
        for (std::size_t c = 0; c < 3; ++c) out[c] -= q[3 * m + c];
}

void force_variations::relative(double t, const double* rel_q, const double* rel_v,
                                const double* dq, const double* dv, double* da) const {
    const jacobi_tree& tree = model_.tree();
    const nbody_system& sys = model_.system();
    const std::size_t n = tree.size();
    model_.point_mass_variations(rel_q, dq, da);
    for (const pair_entry& oe : oblate_) {
        double d[3], dd[3];
        separation(oe.j, oe.i, oe.lca_depth, rel_q, d);
        separation(oe.j, oe.i, oe.lca_depth, dq, dd);
        const double dn = std::sqrt(dd[0] * dd[0] + dd[1] * dd[1] + dd[2] * dd[2]);
        if (dn == 0.0) continue;
        const double h = 1e-6 * std::sqrt(d[0] * d[0] + d[1] * d[1] + d[2] * d[2]) / dn;
        double xp[3], xm[3], ap[3] = {0, 0, 0}, am[3] = {0, 0, 0};
        for (std::size_t c = 0; c < 3; ++c) {
            xp[c] = d[c] + h * dd[c];
            xm[c] = d[c] - h * dd[c];
        }
        const nbody_body& b = sys.bodies_[oe.i];
        for (int deg : {2, 4}) {
            const double jn = deg == 2 ? b.j2_ : b.j4_;
            if (jn == 0) continue;
            add_zonal_acceleration(deg, b.gm_, jn, b.radius_, b.spin_axis_.data(), xp, ap);
            add_zonal_acceleration(deg, b.gm_, jn, b.radius_, b.spin_axis_.data(), xm, am);
        }
        const double ratio = sys.bodies_[oe.j].gm_ / b.gm_; // reaction on the oblate body
        for (std::size_t c = 0; c < 3; ++c) {
            const double ja = (ap[c] - am[c]) / (2 * h);
            da[3 * oe.j + c] += ja;
            da[3 * oe.i + c] -= ratio * ja;
        }
    }
    if (model_.has_extra_forces()) {
        // Step: at most 1e-7 of every body's own distance and speed along the deviation.
        double h = HUGE_VAL;
        for (std::size_t k = 1; k < n; ++k) {
            const double* q = rel_q + 3 * k;
            const double* e = dq + 3 * k;
            const double en = std::sqrt(e[0] * e[0] + e[1] * e[1] + e[2] * e[2]);
            if (en > 0)
                h = std::min(h, 1e-7 * std::sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2]) / en);
            if (dv && rel_v) {
                const double* v = rel_v + 3 * k;
                const double* w = dv + 3 * k;
                const double wn = std::sqrt(w[0] * w[0] + w[1] * w[1] + w[2] * w[2]);
                if (wn > 0)
                    h = std::min(h, 1e-7 * std::sqrt(v[0] * v[0] + v[1] * v[1] + v[2] * v[2]) / wn);
            }
        }
        if (std::isfinite(h) && h > 0) {
            for (std::size_t i = 0; i < 3 * n; ++i) {
                qp_[i] = rel_q[i] + h * dq[i];
                qm_[i] = rel_q[i] - h * dq[i];
                const double vi = rel_v ? rel_v[i] : 0.0;
                const double wi = dv ? dv[i] : 0.0;
                vp_[i] = vi + h * wi;
                vm_[i] = vi - h * wi;
                ap_[i] = am_[i] = 0.0;
            }
            for (const extra_force& f : model_.extra_forces()) {
                f.add(t, sys, qp_.data(), vp_.data(), ap_.data());
                f.add(t, sys, qm_.data(), vm_.data(), am_.data());
            }
            for (std::size_t i = 0; i < 3 * n; ++i) da[i] += (ap_[i] - am_[i]) / (2 * h);
        }
    }
    // Parent-relative: children before parents, as in force_model::relative_accelerations.
    for (std::size_t k = n; k-- > 1;) {
        const auto p = static_cast<std::size_t>(tree.parent(k));
        for (std::size_t c = 0; c < 3; ++c) da[3 * k + c] -= da[3 * p + c];
    }
    da[0] = da[1] = da[2] = 0.0;
}

} // namespace moonwright
