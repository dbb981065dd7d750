// Forces of the N-body model: Newtonian point masses, the zonal harmonics J2 and J4 of a body
// acting on its satellites (with the reaction on the body), and extra forces supplied as
// callables (tides, drag). Separations are summed along the tree from parent-relative
// positions, so a moon's distance to its planet keeps all its digits.
#pragma once

#include "engine/hierarchy.hpp"
#include "engine/nbody_system.hpp"
#include "integrators/second_order_system.hpp"

#include <functional>
#include <memory>
#include <string>
#include <vector>

namespace moonwright {

/// An extra force. `add` adds inertial accelerations [m/s^2] (3 n doubles) given the time t
/// [s] and every body's position [m] and velocity [m/s] relative to its parent (the root's
/// entries are its inertial position and velocity). Set velocity_dependent when `add` reads
/// rel_v (tides with a time lag, drag); the Wisdom–Holman map then stops merging kicks and is
/// no longer symplectic.
struct extra_force {
    std::string name;
    bool velocity_dependent = false;
    std::function<void(double t, const nbody_system& sys, const double* rel_q, const double* rel_v,
                       double* acc)>
        add;
};

/// A pair of bodies flattened for the force loop: offsets of their two entries in the level
/// table and in the acceleration array, and their GM [m^3 s^-2].
struct force_model_pair {
    std::size_t li, lj, ai, aj;
    double gmi, gmj;
};

/// Accelerations and potential energy of a system. Holds scratch space: use one instance per
/// thread. Methods do not allocate.
class force_model {
  public:
    explicit force_model(nbody_system sys, std::vector<extra_force> extra = {});

    [[nodiscard]] const nbody_system& system() const noexcept { return sys_; }
    [[nodiscard]] const jacobi_tree& tree() const noexcept { return tree_; }
    [[nodiscard]] std::size_t size() const noexcept { return sys_.size(); }
    [[nodiscard]] bool velocity_dependent() const noexcept { return velocity_dependent_; }
    [[nodiscard]] bool has_extra_forces() const noexcept { return !extra_.empty(); }
    /// True when some body's J2 or J4 acts on a satellite.
    [[nodiscard]] bool has_zonal_terms() const noexcept { return !oblate_.empty(); }
    /// The extra forces (for their finite-difference Jacobian in force_variations).
    [[nodiscard]] const std::vector<extra_force>& extra_forces() const noexcept { return extra_; }

    /// Inertial accelerations [m/s^2] of every body (3 n) from parent-relative positions
    /// rel_q [m] and velocities rel_v [m/s] (rel_v may be null when no force reads it).
    void inertial_accelerations(double t, const double* rel_q, const double* rel_v,
                                double* acc) const;
    /// Parent-relative accelerations: acc_k - acc_parent(k); the root keeps its inertial one.
    void relative_accelerations(double t, const double* rel_q, const double* rel_v,
                                double* acc) const;
    /// Potential energy [J] of the point masses and zonal harmonics (extra forces excluded).
    [[nodiscard]] double potential_energy(const double* rel_q) const;
    /// The point masses' part of the variation of the inertial accelerations: sets da (3 n)
    /// to (d acc / d rel_q) dq [m/s^2 per unit of dq] for parent-relative positions rel_q [m]
    /// and a parent-relative deviation dq, from the tidal tensor of every pair,
    /// G m_j [delta d / r^3 - 3 d (d . delta d) / r^5], d = x_i - x_j (e.g. Mikkola & Innanen
    /// 1999, AJ 118, 1063). Zonal and extra forces are not included.
    void point_mass_variations(const double* rel_q, const double* dq, double* da) const;

  private:
    struct pair_entry {
        int i, j, level; ///< bodies and the depth of their lowest common ancestor
    };
    /// levels_[dst] = rel_q[body] + levels_[up] (one coordinate triple each).
    struct level_step {
        std::size_t dst, up, body;
    };
    struct oblate_entry {
        int body, satellite, level; ///< oblate body, one of its descendants, body's depth
    };
    void fill_levels(const double* rel_q) const noexcept;
    /// The same table for any parent-relative vector, written to out (levels_' layout).
    void fill_levels_into(const double* rel_q, double* out) const noexcept;
    [[nodiscard]] const double* level(int k, int lvl) const noexcept {
        return &levels_[3 *
                        (static_cast<std::size_t>(k) * stride_ + static_cast<std::size_t>(lvl))];
    }

    nbody_system sys_;
    jacobi_tree tree_;
    std::vector<extra_force> extra_;
    bool velocity_dependent_ = false;
    std::vector<double> gm_;
    std::vector<pair_entry> pairs_;
    std::vector<force_model_pair> pair_offsets_;
    std::vector<level_step> level_steps_;
    std::vector<oblate_entry> oblate_;
    std::size_t stride_ = 1;
    /// levels_[k][l] = x_k - x_(ancestor of k at depth l), for l <= depth(k).
    mutable std::vector<double> levels_;
    mutable std::vector<double> deviation_levels_; ///< the same for a deviation (variations)
};

/// Acceleration [m/s^2] of a satellite at d = x_sat - x_body [m] from the zonal harmonic J_n
/// (n = 2 or 4) of a body with gm [m^3 s^-2], reference radius radius [m], unit spin axis s:
/// a = K r^-(n+2) [((n+1) P_n(u) + u P_n'(u)) d/r - P_n'(u) s], K = gm J_n R^n, u = d.s / r,
/// the gradient of Phi = K r^-(n+1) P_n(u) (Murray & Dermott, Solar System Dynamics, eq. 4.3x:
/// exterior potential V = -(GM/r)[1 - sum J_n (R/r)^n P_n(sin lat)]). Adds to acc.
void add_zonal_acceleration(int n, double gm, double jn, double radius, const double* spin,
                            const double* d, double* acc) noexcept;

/// Parent-relative positions and velocities (3 n each) of a system's inertial state.
void relative_state_of(const nbody_system& sys, std::vector<double>& q, std::vector<double>& v);
/// Sets a system's inertial state x_, v_ (and t_) from parent-relative coordinates.
void set_relative_state(nbody_system& sys, double t, const double* q, const double* v);

/// The system as q'' = f(t, q, q') in parent-relative coordinates (each body relative to its
/// parent; the root in inertial coordinates), for the adaptive integrators. The returned
/// function holds its own force_model; it is not safe to call it from two threads at once.
second_order_system relative_system(const nbody_system& sys, std::vector<extra_force> extra = {});
/// The same from an existing model (shared, not copied).
second_order_system relative_system(std::shared_ptr<const force_model> model);

} // namespace moonwright
