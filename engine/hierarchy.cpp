// Hierarchical Jacobi coordinates (Beust 2003, A&A 400, 1129).
#include "engine/hierarchy.hpp"

#include "engine/error.hpp"

#include <algorithm>
#include <string>

namespace moonwright {

jacobi_tree::jacobi_tree(std::vector<int> parent, std::vector<std::vector<int>> children,
                         std::vector<double> gm)
    : parent_(std::move(parent)), children_(std::move(children)), gm_(std::move(gm)) {
    const std::size_t n = parent_.size();
    if (n == 0 || children_.size() != n || gm_.size() != n || parent_[0] != -1) {
        throw numerical_error("jacobi_tree: body 0 must be the root and sizes must agree");
    }
    depth_.assign(n, 0);
    for (std::size_t k = 1; k < n; ++k) {
        const int p = parent_[k];
        if (p < 0 || static_cast<std::size_t>(p) >= k) {
            throw numerical_error("jacobi_tree: body " + std::to_string(k) +
                                  " must have a parent listed before it");
        }
        depth_[k] = depth_[static_cast<std::size_t>(p)] + 1;
        const auto& ch = children_[static_cast<std::size_t>(p)];
        if (std::count(ch.begin(), ch.end(), static_cast<int>(k)) != 1) {
            throw numerical_error("jacobi_tree: body " + std::to_string(k) +
                                  " is not listed once among its parent's children");
        }
    }
    std::size_t listed = 0;
    for (const auto& ch : children_) listed += ch.size();
    if (listed != n - 1) throw numerical_error("jacobi_tree: children lists do not match parents");
    for (double g : gm_) {
        if (!(g > 0)) throw numerical_error("jacobi_tree: every body needs GM > 0");
    }
    max_depth_ = *std::max_element(depth_.begin(), depth_.end());

    // Topological order: pre-order walk, children innermost first.
    order_.clear();
    std::vector<int> stack{0};
    while (!stack.empty()) {
        const int k = stack.back();
        stack.pop_back();
        order_.push_back(k);
        const auto& ch = children_[static_cast<std::size_t>(k)];
        for (auto it = ch.rbegin(); it != ch.rend(); ++it) stack.push_back(*it);
    }

    subtree_gm_ = gm_;
    for (auto it = order_.rbegin(); it != order_.rend(); ++it) {
        const int k = *it;
        if (k != 0)
            subtree_gm_[static_cast<std::size_t>(parent_[static_cast<std::size_t>(k)])] +=
                subtree_gm_[static_cast<std::size_t>(k)];
    }
    kepler_gm_.assign(n, 0);
    jacobi_gm_.assign(n, 0);
    inner_gm_.assign(n, 0);
    eta_.assign(n, 0);
    weight_.assign(n, 0);
    kepler_gm_[0] = jacobi_gm_[0] = subtree_gm_[0];
    for (std::size_t p = 0; p < n; ++p) {
        double inner = gm_[p];
        for (int c : children_[p]) {
            const auto cu = static_cast<std::size_t>(c);
            const double out = subtree_gm_[cu];
            inner_gm_[cu] = inner;
            kepler_gm_[cu] = inner + out;
            jacobi_gm_[cu] = inner * out / (inner + out);
            eta_[cu] = out / (inner + out);
            weight_[cu] = out / subtree_gm_[p];
            inner += out;
        }
    }
    for (std::size_t p = 0; p < n; ++p) {
        if (children_[p].empty()) continue;
        const std::size_t begin = sibling_.size();
        for (int c : children_[p]) {
            sibling_.push_back(static_cast<std::size_t>(c));
            sibling_eta_.push_back(eta_[static_cast<std::size_t>(c)]);
        }
        families_.push_back({p, begin, sibling_.size()});
    }
}

void jacobi_tree::inertial_to_relative(const double* x, double* out) const noexcept {
    const std::size_t n = size();
    for (std::size_t j = 0; j < 3; ++j) out[j] = x[j];
    for (std::size_t k = 1; k < n; ++k) {
        const auto p = static_cast<std::size_t>(parent_[k]);
        for (std::size_t j = 0; j < 3; ++j) out[3 * k + j] = x[3 * k + j] - x[3 * p + j];
    }
}

void jacobi_tree::relative_to_inertial(const double* d, double* out) const noexcept {
    const std::size_t n = size();
    for (std::size_t j = 0; j < 3; ++j) out[j] = d[j];
    for (std::size_t k = 1; k < n; ++k) { // parents come first, so out[p] is ready
        const auto p = static_cast<std::size_t>(parent_[k]);
        for (std::size_t j = 0; j < 3; ++j) out[3 * k + j] = d[3 * k + j] + out[3 * p + j];
    }
}

void jacobi_tree::relative_to_jacobi(const double* d, double* out) const noexcept {
    const std::size_t n = size();
    // Pass 1 (children before parents): out[k] = Y_k = X_subtree(k) - x_k
    //   = sum over children c of w_c (d_c + Y_c).
    for (std::size_t j = 0; j < 3 * n; ++j) out[j] = 0.0;
    for (std::size_t k = n; k-- > 1;) {
        double* op = out + 3 * static_cast<std::size_t>(parent_[k]);
        const double* ok = out + 3 * k;
        const double* dk = d + 3 * k;
        const double w = weight_[k];
        op[0] += w * (dk[0] + ok[0]);
        op[1] += w * (dk[1] + ok[1]);
        op[2] += w * (dk[2] + ok[2]);
    }
    // Pass 2 (parents first): root -> barycentre; each child c of p:
    //   r_c = (X_subtree(c) - x_p) - (X_inner(c) - x_p) = d_c + Y_c - Z, Z += eta_c r_c.
    for (std::size_t j = 0; j < 3; ++j) out[j] += d[j];
    for (const family& fam : families_) {
        double zx = 0, zy = 0, zz = 0;
        for (std::size_t i = fam.begin; i < fam.end; ++i) {
            double* o = out + 3 * sibling_[i];
            const double* dc = d + 3 * sibling_[i];
            const double e = sibling_eta_[i];
            const double rx = dc[0] + o[0] - zx, ry = dc[1] + o[1] - zy, rz = dc[2] + o[2] - zz;
            o[0] = rx;
            o[1] = ry;
            o[2] = rz;
            zx += e * rx;
            zy += e * ry;
            zz += e * rz;
        }
    }
}

void jacobi_tree::jacobi_to_relative(const double* r, double* out) const noexcept {
    const std::size_t n = size();
    // d_c = (Z_c + r_c) - Y_c, with Z_c the inner barycentre offset from the parent and
    // Y_c = X_subtree(c) - x_c = sum over c's children of eta r (the final Z of c's loop).
    for (std::size_t j = 0; j < 3; ++j) out[j] = r[j];
    for (std::size_t j = 3; j < 3 * n; ++j) out[j] = 0.0;
    for (const family& fam : families_) {
        double zx = 0, zy = 0, zz = 0;
        for (std::size_t i = fam.begin; i < fam.end; ++i) {
            double* o = out + 3 * sibling_[i];
            const double* rc = r + 3 * sibling_[i];
            const double e = sibling_eta_[i];
            o[0] += zx + rc[0];
            o[1] += zy + rc[1];
            o[2] += zz + rc[2];
            zx += e * rc[0];
            zy += e * rc[1];
            zz += e * rc[2];
        }
        double* op = out + 3 * fam.parent;
        op[0] -= zx;
        op[1] -= zy;
        op[2] -= zz;
    }
}

void jacobi_tree::inertial_to_jacobi(const double* x, double* out) const noexcept {
    const std::size_t n = size();
    // Subtree barycentres, children before parents, accumulated in out.
    for (std::size_t j = 0; j < 3 * n; ++j) out[j] = x[j] * gm_[j / 3];
    for (std::size_t k = n; k-- > 1;) {
        const auto p = static_cast<std::size_t>(parent_[k]);
        for (std::size_t j = 0; j < 3; ++j) out[3 * p + j] += out[3 * k + j];
    }
    for (std::size_t j = 0; j < 3 * n; ++j) out[j] /= subtree_gm_[j / 3];
    // out[k] = X_subtree(k). For each parent, sweep children: r_c = X_subtree(c) - X_inner.
    for (std::size_t p = 0; p < n; ++p) {
        if (children_[p].empty()) continue;
        double xi[3] = {x[3 * p], x[3 * p + 1], x[3 * p + 2]};
        for (int c : children_[p]) {
            const auto cu = static_cast<std::size_t>(c);
            for (std::size_t j = 0; j < 3; ++j) {
                const double xs = out[3 * cu + j];
                out[3 * cu + j] = xs - xi[j];
                xi[j] += eta_[cu] * (xs - xi[j]);
            }
        }
    }
}

void jacobi_tree::jacobi_to_inertial(const double* r, double* out) const noexcept {
    jacobi_to_relative(r, out);
    // In place: relative -> inertial walks parents first and reads only finished entries.
    const std::size_t n = size();
    for (std::size_t k = 1; k < n; ++k) {
        const auto p = static_cast<std::size_t>(parent_[k]);
        for (std::size_t j = 0; j < 3; ++j) out[3 * k + j] += out[3 * p + j];
    }
}

} // namespace moonwright
