// Point-mass gravity, zonal harmonics and extra forces along the body tree.
#include "engine/forces.hpp"

#include "engine/constants.hpp"
#include "engine/simd_clones.hpp"

#include <cmath>

namespace moonwright {

force_model::force_model(nbody_system sys, std::vector<extra_force> extra)
    : sys_(std::move(sys)), tree_(sys_.tree()), extra_(std::move(extra)) {
    const std::size_t n = sys_.size();
    for (const auto& f : extra_) velocity_dependent_ = velocity_dependent_ || f.velocity_dependent;
    gm_.resize(n);
    for (std::size_t k = 0; k < n; ++k) gm_[k] = sys_.bodies_[k].gm_;
    stride_ = static_cast<std::size_t>(tree_.max_depth()) + 1;
    levels_.assign(3 * n * stride_, 0.0);
    deviation_levels_.assign(3 * n * stride_, 0.0);
    // Lowest common ancestor depth of every pair.
    auto ancestor_at = [&](int k, int depth) {
        while (tree_.depth(static_cast<std::size_t>(k)) > depth) {
            k = tree_.parent(static_cast<std::size_t>(k));
        }
        return k;
    };
    for (std::size_t i = 0; i < n; ++i) {
        for (std::size_t j = i + 1; j < n; ++j) {
            int lvl = std::min(tree_.depth(i), tree_.depth(j));
            while (ancestor_at(static_cast<int>(i), lvl) != ancestor_at(static_cast<int>(j), lvl))
                --lvl;
            pairs_.push_back({static_cast<int>(i), static_cast<int>(j), lvl});
        }
    }
    for (const pair_entry& pe : pairs_) {
        const auto i = static_cast<std::size_t>(pe.i), j = static_cast<std::size_t>(pe.j),
                   l = static_cast<std::size_t>(pe.level);
        pair_offsets_.push_back(force_model_pair{3 * (i * stride_ + l), 3 * (j * stride_ + l),
                                                 3 * i, 3 * j, gm_[i], gm_[j]});
    }
    // levels_[k][depth k] stays 0; the others are filled parents first (see fill_levels).
    for (std::size_t k = 1; k < n; ++k) {
        const auto p = static_cast<std::size_t>(tree_.parent(k));
        for (std::size_t l = 0; l < static_cast<std::size_t>(tree_.depth(k)); ++l)
            level_steps_.push_back({3 * (k * stride_ + l), 3 * (p * stride_ + l), 3 * k});
    }
    for (std::size_t p = 0; p < n; ++p) {
        const auto& b = sys_.bodies_[p];
        if ((b.j2_ == 0 && b.j4_ == 0) || !(b.radius_ > 0)) continue;
        const int dp = tree_.depth(p);
        for (std::size_t s = p + 1; s < n; ++s) {
            if (tree_.depth(s) > dp &&
                ancestor_at(static_cast<int>(s), dp) == static_cast<int>(p)) {
                oblate_.push_back({static_cast<int>(p), static_cast<int>(s), dp});
            }
        }
    }
}

void force_model::fill_levels(const double* rel_q) const noexcept {
    fill_levels_into(rel_q, levels_.data());
}

void force_model::fill_levels_into(const double* rel_q, double* lv) const noexcept {
    // levels[k][depth k] = 0 (never written); levels[k][l] = d_k + levels[parent][l] for
    // l < depth k, in the order parents before children.
    for (const level_step& st : level_steps_) {
        lv[st.dst] = rel_q[st.body] + lv[st.up];
        lv[st.dst + 1] = rel_q[st.body + 1] + lv[st.up + 1];
        lv[st.dst + 2] = rel_q[st.body + 2] + lv[st.up + 2];
    }
}

void add_zonal_acceleration(int n, double gm, double jn, double radius, const double* spin,
                            const double* d, double* acc) noexcept {
    const double r2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
    const double r = std::sqrt(r2);
    const double u = (d[0] * spin[0] + d[1] * spin[1] + d[2] * spin[2]) / r;
    double pn = 0, dpn = 0, rn = 0; // P_n(u), P_n'(u), R^n / r^(n+2)
    if (n == 2) {
        pn = 0.5 * (3 * u * u - 1);
        dpn = 3 * u;
        rn = radius * radius / (r2 * r2);
    } else { // n == 4: P4 = (35 u^4 - 30 u^2 + 3) / 8
        const double u2 = u * u;
        pn = (35 * u2 * u2 - 30 * u2 + 3) / 8;
        dpn = (140 * u2 * u - 60 * u) / 8;
        const double rr = radius * radius / r2;
        rn = rr * rr / r2;
    }
    const double k = gm * jn * rn;
    const double radial = k * ((n + 1) * pn + u * dpn) / r;
    const double axial = -k * dpn;
    for (int j = 0; j < 3; ++j) acc[j] += radial * d[j] + axial * spin[j];
}

namespace {

/// Newtonian accelerations of every pair, added to acc (levels and acc do not overlap).
/// Compiled for AVX2 and the baseline (engine/simd_clones.hpp): the same bits from both.
MOONWRIGHT_CLONES
void pair_forces(const double* __restrict lv, const force_model_pair* __restrict po,
                 std::size_t count, double* __restrict acc) noexcept {
    for (std::size_t k = 0; k < count; ++k) {
        const double* xi = lv + po[k].li;
        const double* xj = lv + po[k].lj;
        const double dx = xi[0] - xj[0], dy = xi[1] - xj[1], dz = xi[2] - xj[2];
        const double r2 = dx * dx + dy * dy + dz * dz;
        const double inv3 = 1.0 / (r2 * std::sqrt(r2));
        const double fi = po[k].gmj * inv3, fj = po[k].gmi * inv3;
        double* ai = acc + po[k].ai;
        double* aj = acc + po[k].aj;
        ai[0] -= fi * dx;
        ai[1] -= fi * dy;
        ai[2] -= fi * dz;
        aj[0] += fj * dx;
        aj[1] += fj * dy;
        aj[2] += fj * dz;
    }
}

/// Tidal-tensor variations of every pair, added to da: the derivative of pair_forces along the
/// deviation whose level table is dl (same layout as lv).
MOONWRIGHT_CLONES
void pair_variations(const double* __restrict lv, const double* __restrict dl,
                     const force_model_pair* __restrict po, std::size_t count,
                     double* __restrict da) noexcept {
    for (std::size_t k = 0; k < count; ++k) {
        const double* xi = lv + po[k].li;
        const double* xj = lv + po[k].lj;
        const double* ei = dl + po[k].li;
        const double* ej = dl + po[k].lj;
        const double dx = xi[0] - xj[0], dy = xi[1] - xj[1], dz = xi[2] - xj[2];
        const double ex = ei[0] - ej[0], ey = ei[1] - ej[1], ez = ei[2] - ej[2];
        const double r2 = dx * dx + dy * dy + dz * dz;
        const double inv3 = 1.0 / (r2 * std::sqrt(r2));
        const double proj = 3.0 * (dx * ex + dy * ey + dz * ez) / r2;
        const double tx = inv3 * (ex - proj * dx), ty = inv3 * (ey - proj * dy),
                     tz = inv3 * (ez - proj * dz); // tidal tensor times the deviation
        double* ai = da + po[k].ai;
        double* aj = da + po[k].aj;
        ai[0] -= po[k].gmj * tx;
        ai[1] -= po[k].gmj * ty;
        ai[2] -= po[k].gmj * tz;
        aj[0] += po[k].gmi * tx;
        aj[1] += po[k].gmi * ty;
        aj[2] += po[k].gmi * tz;
    }
}

} // namespace

void force_model::point_mass_variations(const double* rel_q, const double* dq, double* da) const {
    fill_levels(rel_q);
    fill_levels_into(dq, deviation_levels_.data());
    for (std::size_t j = 0; j < 3 * size(); ++j) da[j] = 0.0;
    pair_variations(levels_.data(), deviation_levels_.data(), pair_offsets_.data(),
                    pair_offsets_.size(), da);
}

void force_model::inertial_accelerations(double t, const double* rel_q, const double* rel_v,
                                         double* acc) const {
    const std::size_t n = size();
    fill_levels(rel_q);
    for (std::size_t j = 0; j < 3 * n; ++j) acc[j] = 0.0;
    pair_forces(levels_.data(), pair_offsets_.data(), pair_offsets_.size(), acc);
    for (const oblate_entry& oe : oblate_) {
        const auto p = static_cast<std::size_t>(oe.body),
                   s = static_cast<std::size_t>(oe.satellite);
        const nbody_body& b = sys_.bodies_[p];
        const double* d = level(oe.satellite, oe.level);
        double a[3] = {0, 0, 0};
        if (b.j2_ != 0)
            add_zonal_acceleration(2, b.gm_, b.j2_, b.radius_, b.spin_axis_.data(), d, a);
        if (b.j4_ != 0)
            add_zonal_acceleration(4, b.gm_, b.j4_, b.radius_, b.spin_axis_.data(), d, a);
        const double ratio = gm_[s] / gm_[p]; // reaction: m_p a_p = -m_s a_s
        for (std::size_t j = 0; j < 3; ++j) {
            acc[3 * s + j] += a[j];
            acc[3 * p + j] -= ratio * a[j];
        }
    }
    for (const extra_force& f : extra_) f.add(t, sys_, rel_q, rel_v, acc);
}

void force_model::relative_accelerations(double t, const double* rel_q, const double* rel_v,
                                         double* acc) const {
    inertial_accelerations(t, rel_q, rel_v, acc);
    // Children before parents, so a parent's inertial value is still there when read.
    for (std::size_t k = size(); k-- > 1;) {
        double* ak = acc + 3 * k;
        const double* ap = acc + 3 * static_cast<std::size_t>(tree_.parent(k));
        ak[0] -= ap[0];
        ak[1] -= ap[1];
        ak[2] -= ap[2];
    }
}

double force_model::potential_energy(const double* rel_q) const {
    fill_levels(rel_q);
    double u = 0;
    for (const pair_entry& pe : pairs_) {
        const double* xi = level(pe.i, pe.level);
        const double* xj = level(pe.j, pe.level);
        const double dx = xi[0] - xj[0], dy = xi[1] - xj[1], dz = xi[2] - xj[2];
        u -= gm_[static_cast<std::size_t>(pe.i)] * gm_[static_cast<std::size_t>(pe.j)] /
             std::sqrt(dx * dx + dy * dy + dz * dz);
    }
    for (const oblate_entry& oe : oblate_) {
        // U = m_s K r^-(n+1) P_n(u), K = G m_p J_n R^n (Murray & Dermott eq. 4.3x).
        const nbody_body& b = sys_.bodies_[static_cast<std::size_t>(oe.body)];
        const double* d = level(oe.satellite, oe.level);
        const double r2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        const double r = std::sqrt(r2);
        const double c =
            (d[0] * b.spin_axis_[0] + d[1] * b.spin_axis_[1] + d[2] * b.spin_axis_[2]) / r;
        const double rr = b.radius_ * b.radius_ / r2;
        const double p2 = 0.5 * (3 * c * c - 1);
        const double p4 = (35 * c * c * c * c - 30 * c * c + 3) / 8;
        u += gm_[static_cast<std::size_t>(oe.satellite)] * b.gm_ / r *
             (b.j2_ * rr * p2 + b.j4_ * rr * rr * p4);
    }
    return u / constants::G;
}

void relative_state_of(const nbody_system& sys, std::vector<double>& q, std::vector<double>& v) {
    const jacobi_tree tree = sys.tree();
    q.assign(3 * sys.size(), 0.0);
    v.assign(3 * sys.size(), 0.0);
    tree.inertial_to_relative(sys.x_.data(), q.data());
    tree.inertial_to_relative(sys.v_.data(), v.data());
}

void set_relative_state(nbody_system& sys, double t, const double* q, const double* v) {
    const jacobi_tree tree = sys.tree();
    sys.x_.assign(3 * sys.size(), 0.0);
    sys.v_.assign(3 * sys.size(), 0.0);
    tree.relative_to_inertial(q, sys.x_.data());
    tree.relative_to_inertial(v, sys.v_.data());
    sys.t_ = t;
}

second_order_system relative_system(std::shared_ptr<const force_model> model) {
    second_order_system s;
    s.n = model->size();
    s.velocity_dependent = model->velocity_dependent();
    s.acceleration = [m = std::move(model)](double t, const double* q, const double* v, double* a) {
        m->relative_accelerations(t, q, v, a);
    };
    return s;
}

second_order_system relative_system(const nbody_system& sys, std::vector<extra_force> extra) {
    return relative_system(std::make_shared<const force_model>(sys, std::move(extra)));
}

} // namespace moonwright
