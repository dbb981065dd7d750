// The text and JSON renderings of a check report: fields, units, nulls, findings.
#include "design_builders.hpp"

#include "engine/design_check.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

using namespace moonwright;
using namespace moonwright::testing;
namespace c = moonwright::constants;

namespace {
/// Star, planet (rotating, J2 derived), two moons: one inside the Roche limit (an error) and
/// one with drawn angles (a note).
check_report sample_report() {
    design d = sun_earth();
    d.name = "sample";
    d.bodies[1].rotation_period_s = 86164.1;
    d.bodies.push_back(make_body("Close", "Planet", 1e20, 2e5, parent_radii(2.0)));
    body_spec far = make_body("Far", "Planet", 7e22, 1.7e6, metres(4e8));
    far.orbit->node_rad.reset();
    d.bodies.push_back(far);
    return run_check(resolve(d, 12));
}
} // namespace

TEST_CASE("JSON report parses and carries the documented fields") {
    const check_report r = sample_report();
    const auto j = nlohmann::json::parse(render_check_json(r));
    CHECK(j["design"] == "sample");
    CHECK(j["seed"] == 12);
    CHECK(j["summary"]["errors"] == r.count(severity::error));
    CHECK(j["summary"]["warnings"] == r.count(severity::warning));
    CHECK(j["summary"]["notes"] == r.count(severity::note));
    CHECK(j["summary"]["errors"].get<int>() >= 1);
    REQUIRE(j["bodies"].size() == 4);
    const char* fields[] = {"name",
                            "kind",
                            "parent",
                            "mass_kg",
                            "radius_m",
                            "density_kg_m3",
                            "surface_gravity_m_s2",
                            "surface_gravity_g",
                            "escape_velocity_m_s",
                            "period_s",
                            "hill_radius_m",
                            "roche_limit_fluid_m",
                            "roche_limit_fluid_rotating_m",
                            "roche_limit_rigid_m",
                            "stability_limit_m",
                            "synchronous_orbit_m",
                            "semi_major_axis_m",
                            "eccentricity",
                            "inclination_rad",
                            "pericentre_m",
                            "apocentre_m",
                            "barycentre_offset_m",
                            "double_body",
                            "j2",
                            "j2_derived",
                            "shape",
                            "next_sibling",
                            "findings"};
    for (const auto& b : j["bodies"])
        for (const char* f : fields) {
            INFO(b["name"], " field ", f);
            CHECK(b.contains(f));
        }
    const auto& star = j["bodies"][0];
    CHECK(star["kind"] == "star");
    CHECK(star["parent"].is_null());
    CHECK(star["period_s"].is_null());
    CHECK(star["hill_radius_m"].is_null());
    const auto& planet = j["bodies"][1];
    CHECK(planet["period_s"].get<double>() == doctest::Approx(r.bodies[1].period_s.value()));
    CHECK(planet["stability_limit_m"].is_null());
    CHECK(planet["j2_derived"] == true);
    const auto& close = j["bodies"][2];
    CHECK(close["name"] == "Close");
    CHECK(close["synchronous_orbit_m"].is_number());
    CHECK(close["next_sibling"]["name"] == "Far");
    CHECK(close["next_sibling"]["mutual_hill_spacing"].is_number());
    bool roche = false;
    for (const auto& f : close["findings"]) {
        CHECK(f.contains("severity"));
        CHECK(f.contains("message"));
        if (f["code"] == "inside_roche_limit") roche = f["severity"] == "error";
    }
    CHECK(roche);
    CHECK(j["bodies"][3]["next_sibling"].is_null());
}

TEST_CASE("text report: tables with units in the headers, findings grouped by severity") {
    const std::string t = render_check_text(sample_report());
    for (const char* s : {"mass [kg]", "radius [km]", "density [g/cm3]", "gravity [m/s2]",
                          "v_esc [km/s]", "Orbits around Star", "a [AU]", "Orbits around Planet",
                          "a [km]", "period [d]", "Roche fluid [km]", "spacing [mutual Hill radii]",
                          "Errors (", "Notes (", "[inside_roche_limit] Close:", "Summary: "}) {
        INFO(s);
        CHECK(t.find(s) != std::string::npos);
    }
    CHECK(t.find("Errors (") < t.find("Notes ("));
    // The planet has no stability limit (no grandparent): a dash in its row.
    const auto row = t.substr(t.find("\n", t.find("Orbits around Star")));
    CHECK(row.find(" -") != std::string::npos);
}
