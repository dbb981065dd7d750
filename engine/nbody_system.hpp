// The N-body model of a resolved design: per-body GM, radius, oblateness and spin axis, the
// tree of parents, and the initial barycentric state built from the resolved elements.
#pragma once

// design.hpp uses source_location without including error.hpp, so error.hpp comes first.
#include "engine/error.hpp"

#include "engine/design.hpp"
#include "engine/hierarchy.hpp"
#include "engine/orbital_elements.hpp"
#include "engine/resolved_system.hpp"

#include <string>
#include <vector>

namespace moonwright {

/// One body of the N-body model (SI units).
struct nbody_body {
    std::string name_;
    body_kind kind_ = body_kind::star;
    int parent_ = -1;         ///< index of the parent body; -1 for the root (index 0)
    double gm_ = 0;           ///< G m [m^3 s^-2]
    double radius_ = 0;       ///< mean radius [m]; also the reference radius of J2 and J4
    double j2_ = 0, j4_ = 0;  ///< zonal harmonics (dimensionless)
    vec3 spin_axis_{0, 0, 1}; ///< unit vector of the rotation axis, inertial frame
};

/// The model: bodies (same indices as the resolved system: parents before children), each
/// body's children innermost first, and the state in an inertial frame whose origin is the
/// barycentre at t = 0.
struct nbody_system {
    std::vector<nbody_body> bodies_;
    std::vector<std::vector<int>> children_; ///< innermost first
    std::vector<double> x_, v_;              ///< inertial positions [m], velocities [m/s], 3 n
    double t_ = 0;                           ///< time of the state [s]

    [[nodiscard]] std::size_t size() const noexcept { return bodies_.size(); }
    /// The hierarchical Jacobi tree of these bodies (Beust 2003).
    [[nodiscard]] jacobi_tree tree() const;
};

/// Which plane a body's elements are measured from (DESIGN.md: the parent's orbital plane by
/// default). Planets (children of the root) always use the inertial x-y plane.
enum class reference_plane { parent_orbit, parent_equator };

struct build_options {
    reference_plane plane_ = reference_plane::parent_orbit;
};

/// Builds the model of a resolved design. Elements of body k are those of its Jacobi orbit:
/// the subsystem of k (k with its descendants) about the barycentre of its parent subsystem
/// (the parent, its inner children and their descendants), with GM = G (M_inner + M_k). The
/// frame of a moon's elements has z along the parent's orbit normal (or spin axis) and x along
/// the parent orbit's ascending node (the inertial x axis when that orbit is equatorial). The
/// inclination alone decides the sense of revolution (i > 90 deg is retrograde).
/// Spin axes: a body's axis is its orbit normal tilted by its obliquity about its orbit's line
/// of nodes (0 obliquity when not given); the root's axis is +z tilted about +x.
/// Siblings are ordered by semi-major axis (innermost first). Throws input_error for a body
/// without a positive mass, an orbit missing, or a parent listed after its child.
nbody_system build_nbody(const resolved_system& rs, const build_options& options = {});

/// A model from explicit inertial states (for tests and generated systems). Siblings are taken
/// in index order as innermost first. x and v hold 3 n doubles each.
nbody_system make_nbody(std::vector<nbody_body> bodies, std::vector<double> x,
                        std::vector<double> v);

} // namespace moonwright
