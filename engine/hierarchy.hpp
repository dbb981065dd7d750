// Hierarchical Jacobi coordinates on a tree of bodies (Beust 2003, A&A 400, 1129): each body's
// subsystem (the body and its descendants) relative to the barycentre of its parent subsystem
// (the parent, the parent's inner children and all their descendants), plus conversions to
// and from inertial and parent-relative ("planetocentric") coordinates.
#pragma once

#include <cstddef>
#include <vector>

namespace moonwright {

/// The tree and the mass factors of the hierarchical Jacobi transform. Every vector array
/// below holds 3 n doubles (x, y, z of body 0, then body 1, ...). Index order must put parents
/// before children (as resolved_system does); `children` lists each body's children innermost
/// first. Body 0 is the root; its Jacobi "coordinate" is the barycentre of the whole system.
/// No function allocates.
class jacobi_tree {
  public:
    jacobi_tree() = default;
    /// parent[k] (-1 for the root, which must be body 0), children[k] innermost first, gm[k]
    /// [m^3 s^-2]. Throws numerical_error for a malformed tree or non-positive GM.
    jacobi_tree(std::vector<int> parent, std::vector<std::vector<int>> children,
                std::vector<double> gm);

    [[nodiscard]] std::size_t size() const noexcept { return parent_.size(); }
    [[nodiscard]] int parent(std::size_t k) const noexcept { return parent_[k]; }
    /// Depth in the tree: 0 for the root, 1 for its children, ...
    [[nodiscard]] int depth(std::size_t k) const noexcept { return depth_[k]; }
    [[nodiscard]] int max_depth() const noexcept { return max_depth_; }
    /// Indices in topological order (parents before children, siblings innermost first).
    [[nodiscard]] const std::vector<int>& order() const noexcept { return order_; }
    [[nodiscard]] const std::vector<int>& children(std::size_t k) const noexcept {
        return children_[k];
    }
    [[nodiscard]] double gm(std::size_t k) const noexcept { return gm_[k]; }
    /// G times the mass of body k with all its descendants [m^3 s^-2].
    [[nodiscard]] double subtree_gm(std::size_t k) const noexcept { return subtree_gm_[k]; }
    /// G (M_inner + M_subtree) of Jacobi orbit k: the GM of its Kepler drift [m^3 s^-2]
    /// (Beust 2003, eq. 11); for the root, G times the total mass.
    [[nodiscard]] double kepler_gm(std::size_t k) const noexcept { return kepler_gm_[k]; }
    /// Reduced Jacobi mass times G: G M_inner M_subtree / (M_inner + M_subtree) [m^3 s^-2];
    /// for the root, G times the total mass. Kinetic energy = sum mu_k v_k^2 / (2 G).
    [[nodiscard]] double jacobi_gm(std::size_t k) const noexcept { return jacobi_gm_[k]; }
    /// G M_inner of orbit k: the parent and its inner subsystems [m^3 s^-2].
    [[nodiscard]] double inner_gm(std::size_t k) const noexcept { return inner_gm_[k]; }

    /// Inertial (any inertial frame) -> hierarchical Jacobi. Works for positions, velocities
    /// and accelerations alike (the transform is linear).
    void inertial_to_jacobi(const double* x, double* out) const noexcept;
    /// Hierarchical Jacobi -> inertial.
    void jacobi_to_inertial(const double* r, double* out) const noexcept;
    /// Inertial -> parent-relative: d_k = x_k - x_parent(k); d_0 = x_0 (the root, inertial).
    void inertial_to_relative(const double* x, double* out) const noexcept;
    /// Parent-relative -> inertial.
    void relative_to_inertial(const double* d, double* out) const noexcept;
    /// Parent-relative -> Jacobi without passing through inertial coordinates, so a moon's
    /// digits survive (every term is of the size of the subsystem it belongs to).
    void relative_to_jacobi(const double* d, double* out) const noexcept;
    /// Jacobi -> parent-relative, the inverse of relative_to_jacobi (same precision property).
    void jacobi_to_relative(const double* r, double* out) const noexcept;

  private:
    std::vector<int> parent_, depth_, order_;
    std::vector<std::vector<int>> children_;
    std::vector<double> gm_, subtree_gm_, kepler_gm_, jacobi_gm_, inner_gm_;
    std::vector<double> eta_;    ///< M_subtree / (M_inner + M_subtree) of orbit k
    std::vector<double> weight_; ///< M_subtree(k) / M_subtree(parent k)
    /// Flat copy of the tree for the transforms: each parent with children, in index order,
    /// owns the range [begin, end) of sibling_ (its children innermost first) and sibling_eta_.
    struct family {
        std::size_t parent, begin, end;
    };
    std::vector<family> families_;
    std::vector<std::size_t> sibling_;
    std::vector<double> sibling_eta_;
    int max_depth_ = 0;
};

} // namespace moonwright
