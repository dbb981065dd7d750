// Stability maps: parsing --vary, setting design fields, grid layout, jobs independence and
// the HDF5 record.
#include "engine/constants.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/resolved_system.hpp"
#include "engine/result_file.hpp"
#include "engine/stability_map.hpp"

#include <cmath>
#include <doctest/doctest.h>
#include <filesystem>
#include <string>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
design vela() {
    return load_design_file(std::string(MOONWRIGHT_SOURCE_DIR) + "/tests/map/data/vela.toml");
}

/// The message of the input_error thrown by parse_map_axis, or "" when none is thrown.
std::string axis_error(const std::string& text) {
    try {
        (void)parse_map_axis(text, vela());
    } catch (const input_error& e) {
        return e.what();
    }
    return "";
}
} // namespace

TEST_CASE("--vary parses body, field, units and cells") {
    const map_axis a = parse_map_axis("Vela.a=0.2RH:0.7RH:6", vela());
    CHECK(a.body == "Vela");
    CHECK(a.field == "a");
    CHECK(a.unit == "RH");
    CHECK(a.ref == length_ref::parent_hill);
    CHECK(a.n == 6);
    CHECK(a.value(0) == doctest::Approx(0.2));
    CHECK(a.value(5) == doctest::Approx(0.7));
    CHECK(a.value(1) == doctest::Approx(0.3));

    const map_axis i = parse_map_axis("Vela.orbit.i=0deg:180deg:3", vela());
    CHECK(i.field == "i");
    CHECK(i.unit == "deg");
    CHECK(i.value(1) * i.unit_si == doctest::Approx(c::pi / 2));

    const map_axis e = parse_map_axis("Vela.e=0:0.6:4", vela());
    CHECK(e.unit == "1");
    CHECK(e.value(3) == doctest::Approx(0.6));

    const map_axis au = parse_map_axis("Brann.a=5 AU:6 AU:2", vela());
    CHECK(au.unit_si == doctest::Approx(c::au));
}

TEST_CASE("--vary input errors say what was found and what was expected") {
    CHECK(axis_error("Nope.a=0.2RH:0.7RH:6").find("body 'Nope'") != std::string::npos);
    CHECK(axis_error("Nope.a=0.2RH:0.7RH:6").find("Vela") != std::string::npos);
    CHECK(axis_error("Vela.colour=0:1:2").find("field 'colour'") != std::string::npos);
    CHECK(axis_error("Vela.a=0.2kg:0.7kg:6").find("body[Vela].orbit.a") != std::string::npos);
    CHECK(axis_error("Vela.e=0:1.2:6").find("0 <= e < 1") != std::string::npos);
    CHECK(axis_error("Vela.a=0.2RH:1AU:6").find("same kind of length") != std::string::npos);
    CHECK(axis_error("Vela.a=0.7RH:0.2RH:6").find("FROM < TO") != std::string::npos);
    CHECK(axis_error("Vela.a=0.2RH:0.7RH:zero").find("whole number") != std::string::npos);
    CHECK(axis_error("Vela.a=0.2RH:0.7RH").find("FROM:TO:N") != std::string::npos);
    CHECK(axis_error("Ardent.e=0:0.5:3").find("a body with an orbit") != std::string::npos);
    CHECK(axis_error("Vela.a=0.2RH:0.7RH:6").empty());
}

TEST_CASE("setting fields on the design model resolves to the values asked for") {
    design d = vela();
    const resolved_system base = resolve(d);
    const double rh = base.bodies[1].orbit->a_m * std::cbrt(c::M_jup / (3 * c::M_sun));
    set_design_field(d, parse_map_axis("Vela.a=0.45RH:0.5RH:2", d), 0.45);
    set_design_field(d, parse_map_axis("Vela.e=0:0.5:2", d), 0.25);
    set_design_field(d, parse_map_axis("Vela.i=0deg:180deg:2", d), 150);
    set_design_field(d, parse_map_axis("Vela.mean_anomaly=0deg:90deg:2", d), 90);
    set_design_field(d, parse_map_axis("Vela.mass=1e15kg:1e20kg:2", d), 1e18);
    const resolved_system sys = resolve(parse_design(design_to_json(d), design_format::json, "x"));
    const auto& m = sys.bodies[static_cast<std::size_t>(sys.find("Vela"))];
    // RH as resolved: the planet's Hill radius at pericentre (e = 0 here), Murray & Dermott 3.75.
    CHECK(m.orbit->a_m == doctest::Approx(0.45 * rh).epsilon(1e-3));
    CHECK(m.orbit->e == doctest::Approx(0.25));
    CHECK(m.orbit->i_rad == doctest::Approx(150 * c::deg));
    CHECK(m.orbit->retrograde); // the written sense was cleared: i > 90 deg decides
    CHECK(m.orbit->mean_anomaly_rad == doctest::Approx(c::pi / 2));
    CHECK(m.mass_kg == doctest::Approx(1e18));
}

TEST_CASE("a small grid does not depend on --jobs, and its file carries units") {
    const design d = vela();
    map_options o;
    o.axes = {parse_map_axis("Vela.a=0.3RH:0.7RH:2", d), parse_map_axis("Vela.e=0:0.3:2", d)};
    o.orbits = 5;
    o.samples = 10;
    o.jobs = 1;
    const map_result one = run_stability_map(d, o);
    o.jobs = 2;
    const map_result two = run_stability_map(d, o);
    REQUIRE(one.cells() == 4);
    CHECK(one.reference_body == "Brann");
    // Jupiter-like orbit at 5.2 AU around 1 Msun: 11.86 yr (Kepler's third law).
    CHECK(one.reference_period_s / c::year == doctest::Approx(11.86).epsilon(0.01));
    for (std::size_t k = 0; k < 4; ++k) {
        CAPTURE(k);
        CHECK(one.survival_s[k] == two.survival_s[k]);
        CHECK(one.first_event[k] == two.first_event[k]);
        CHECK((one.mean_megno[k] == two.mean_megno[k] ||
               (std::isnan(one.mean_megno[k]) && std::isnan(two.mean_megno[k]))));
        CHECK(one.max_e[k] >= 0);
    }
    CHECK(one.references.moon);
    CHECK(one.references.stability_m / one.references.metres_per_unit ==
          doctest::Approx(0.4895).epsilon(1e-3)); // Domingos et al. 2006, e_p = e_s = 0

    const std::string path =
        (std::filesystem::temp_directory_path() / "moonwright_map_test.h5").string();
    write_map_file(path, d, o, one, "test");
    result_file f(path, result_file::mode::read);
    CHECK(f.string_attribute("/run", "command") == "map");
    CHECK(f.string_attribute("/map/axis0", "units") == "RH");
    CHECK(f.string_attribute("/map/survival_time", "units") == "s");
    CHECK(f.rows("/map/survival_time") == 2);
    CHECK(f.columns("/map/survival_time") == 2);
    CHECK(f.read_array("/map/survival_time") == one.survival_s);
    CHECK(f.string_attribute("/map/first_event", "legend").find("4 escape") != std::string::npos);
    CHECK_FALSE(f.string_attribute("/map/mean_megno", "description").empty());
    std::filesystem::remove(path);
}
