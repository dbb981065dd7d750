// JSON check report with stable field names (documented in docs/check.md). SI units throughout;
// quantities that do not apply are null.
#include "engine/design_check.hpp"

#include <nlohmann/json.hpp>

namespace moonwright {

namespace {

// ordered_json keeps the fields in the documented order.
using json = nlohmann::ordered_json;

json opt(const std::optional<double>& v) {
    return v ? json(*v) : json(nullptr);
}

json body_json(const body_check& b, const check_report& r) {
    json j;
    j["name"] = b.name;
    j["kind"] = body_kind_name(b.kind);
    j["parent"] = b.parent.empty() ? json(nullptr) : json(b.parent);
    j["mass_kg"] = b.mass_kg;
    j["mass_from"] = b.mass_from;
    j["radius_m"] = b.radius_m;
    j["density_kg_m3"] = b.density_kg_m3;
    j["surface_gravity_m_s2"] = b.surface_gravity_m_s2;
    j["surface_gravity_g"] = b.surface_gravity_g;
    j["escape_velocity_m_s"] = b.escape_velocity_m_s;
    j["semi_major_axis_m"] = opt(b.a_m);
    j["eccentricity"] = opt(b.e);
    j["inclination_rad"] = opt(b.i_rad);
    j["retrograde"] = b.a_m ? json(b.retrograde) : json(nullptr);
    j["pericentre_m"] = opt(b.pericentre_m);
    j["apocentre_m"] = opt(b.apocentre_m);
    j["period_s"] = opt(b.period_s);
    j["hill_radius_m"] = opt(b.hill_radius_m);
    j["parent_hill_radius_m"] = opt(b.parent_hill_radius_m);
    j["roche_limit_fluid_m"] = opt(b.roche_limit_fluid_m);
    j["roche_limit_fluid_rotating_m"] = opt(b.roche_limit_fluid_rotating_m);
    j["roche_limit_rigid_m"] = opt(b.roche_limit_rigid_m);
    j["stability_limit_m"] = opt(b.stability_limit_m);
    j["synchronous_orbit_m"] = opt(b.synchronous_orbit_m);
    j["barycentre_offset_m"] = opt(b.barycentre_offset_m);
    j["double_body"] = b.a_m ? json(b.double_body) : json(nullptr);
    j["j2"] = b.j2;
    j["j2_derived"] = b.j2_derived;
    j["shape"] = b.shape ? json(shape_class_name(*b.shape)) : json(nullptr);
    j["rounding_radius_m"] = opt(b.rounding_radius_m);
    if (b.next_sibling) {
        const auto& s = *b.next_sibling;
        j["next_sibling"] = {
            {"name", s.other},
            {"mutual_hill_radius_m", s.mutual_hill_radius_m},
            {"mutual_hill_spacing", s.mutual_hill_spacing},
            {"period_ratio", s.period_ratio},
            {"commensurability",
             s.near ? json(std::to_string(s.near->p) + ":" + std::to_string(s.near->q))
                    : json(nullptr)},
            {"commensurability_offset", s.near ? json(s.near->offset) : json(nullptr)},
            {"min_orbit_distance_m", s.min_orbit_distance_m},
        };
    } else {
        j["next_sibling"] = nullptr;
    }
    j["tidal_fate"] = b.tidal_fate ? json(*b.tidal_fate) : json(nullptr);
    json list = json::array();
    for (const auto& f : r.findings)
        if (f.body == b.name)
            list.push_back(
                {{"severity", severity_name(f.level)}, {"code", f.code}, {"message", f.message}});
    j["findings"] = list;
    return j;
}

} // namespace

std::string render_check_json(const check_report& r) {
    json j;
    j["design"] = r.design;
    j["seed"] = r.seed;
    j["summary"] = {{"errors", r.count(severity::error)},
                    {"warnings", r.count(severity::warning)},
                    {"notes", r.count(severity::note)}};
    json bodies = json::array();
    for (const auto& b : r.bodies) bodies.push_back(body_json(b, r));
    j["bodies"] = bodies;
    return j.dump(2) + "\n";
}

} // namespace moonwright
