// The Jacobian of the N-body accelerations applied to a deviation: the variational equations
// delta q'' = (da/dq) delta q + (da/dv) delta v that MEGNO integrates alongside the state.
#pragma once

#include "engine/forces.hpp"

#include <cstddef>
#include <vector>

namespace moonwright {

/// Variations of a force_model's parent-relative accelerations. Point masses use the tidal
/// tensor exactly: d(a_i)/d(x_j) delta = G m_j [delta d / r^3 - 3 d (d . delta d) / r^5],
/// d = x_i - x_j (e.g. Mikkola & Innanen 1999, AJ 118, 1063). Zonal harmonics (J2, J4) and extra
/// forces use central differences along the deviation with a relative step of 1e-6 (zonal
/// term; its O(h^2) error is 1e-12 of a term that is itself small) and 1e-7 (extra forces, which
/// may also read velocities). Holds scratch space: one instance per thread; no allocation per
/// call.
class force_variations {
  public:
    explicit force_variations(const force_model& model);

    /// delta a [m/s^2 per unit of the deviation] (3 n) of the parent-relative accelerations at
    /// time t [s], state rel_q [m], rel_v [m/s] (rel_v may be null when no force reads it),
    /// for the deviation dq, dv (3 n each; dv may be null when no force reads velocities).
    /// The root's entry is set to zero: its inertial position feeds back into nothing.
    void relative(double t, const double* rel_q, const double* rel_v, const double* dq,
                  const double* dv, double* da) const;

  private:
    /// Separation x_i - x_j summed along the tree (digits kept); the same for the deviation.
    void separation(std::size_t i, std::size_t j, int lca_depth, const double* q,
                    double* out) const noexcept;

    const force_model& model_;
    struct pair_entry {
        std::size_t i, j;
        int lca_depth;
    };
    std::vector<pair_entry> oblate_; ///< (oblate body, its descendant, body's depth)
    mutable std::vector<double> qp_, qm_, vp_, vm_, ap_, am_;
};

} // namespace moonwright
