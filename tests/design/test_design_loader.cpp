// Design files: every scenario loads, values land in SI where they were written, and
// TOML -> model -> JSON/TOML -> model round trips give an equal design, bit for bit.
#include "engine/constants.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"
#include "engine/materials.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <string>
#include <vector>

using namespace moonwright;
namespace fs = std::filesystem;
namespace c = moonwright::constants;

namespace {
const fs::path scenario_dir = fs::path(MOONWRIGHT_SOURCE_DIR) / "scenarios";

std::vector<fs::path> scenario_files() {
    std::vector<fs::path> out;
    for (const auto& e : fs::directory_iterator(scenario_dir))
        if (e.path().extension() == ".toml" || e.path().extension() == ".json")
            out.push_back(e.path());
    std::sort(out.begin(), out.end());
    return out;
}

const body_spec& body(const design& d, const std::string& name) {
    for (const auto& b : d.bodies)
        if (b.name == name) return b;
    FAIL("no body " << name);
    return d.bodies.front();
}
} // namespace

TEST_CASE("every scenario loads") {
    const auto files = scenario_files();
    CHECK(files.size() >= 6);
    for (const auto& f : files) {
        INFO("scenario: " << f.string());
        design d;
        CHECK_NOTHROW(d = load_design_file(f.string()));
        CHECK(d.bodies.size() >= 2);
        CHECK(d.source_name == f.string());
        CHECK(!d.source_text.empty());
        CHECK(d.where.count("body[" + d.bodies.front().name + "]") == 1);
    }
}

TEST_CASE("every scenario round trips exactly through JSON and through TOML") {
    for (const auto& f : scenario_files()) {
        INFO("scenario: " << f.string());
        const design d = load_design_file(f.string());
        const std::string json = design_to_json(d);
        const design from_json = parse_design(json, design_format::json, "rt.json");
        CHECK(from_json == d);
        const std::string toml = design_to_toml(d);
        const design from_toml = parse_design(toml, design_format::toml, "rt.toml");
        CHECK(from_toml == d);
        // Writing again gives the same text: the writers are a fixed point after one pass.
        CHECK(design_to_json(from_json) == json);
        CHECK(design_to_toml(from_toml) == toml);
        CHECK(design_to_toml(from_json) == toml);
    }
}

TEST_CASE("the JSON copy of teodora equals the TOML original") {
    const design t = load_design_file((scenario_dir / "teodora.toml").string());
    const design j = load_design_file((scenario_dir / "teodora.json").string());
    design j_same_text = j;
    j_same_text.description = t.description; // the JSON says in its description that it is a copy
    CHECK(j_same_text == t);
}

TEST_CASE("values land in SI with the default or written unit") {
    const design d = load_design_file((scenario_dir / "teodora.toml").string());
    CHECK(d.name == "Ysolde");
    REQUIRE(d.seed.has_value());
    CHECK(*d.seed == 20261u);
    const auto& star = body(d, "Ysolde");
    CHECK(star.orbits.empty());
    CHECK(*star.kind == body_kind::star);
    CHECK(*star.mass_kg == 1.03 * c::M_sun);
    CHECK(*star.luminosity_w == 1.08 * c::L_sun);
    CHECK(*star.age_s == 3.9 * c::Gyr);
    const auto& planet = body(d, "Teodora");
    CHECK(planet.orbits == "Ysolde");
    CHECK(*planet.radius_m == 6.21e6);
    CHECK(*planet.rotation_period_s == 22.6 * c::hour);
    CHECK(*planet.obliquity_rad == 19.5 * c::deg);
    CHECK(*planet.k2 == 0.3);
    CHECK(*planet.tidal_q == 12.0);
    REQUIRE(planet.orbit.has_value());
    CHECK(planet.orbit->a->value == 1.04 * c::au);
    CHECK(planet.orbit->a->ref == length_ref::absolute);
    CHECK(planet.orbit->e == 0.021);
    const auto& moon = body(d, "Brannoc");
    REQUIRE(moon.composition.size() == 2); // file order is kept
    CHECK(moon.composition[0] == material_fraction{"rock", 0.9});
    CHECK(moon.composition[1] == material_fraction{"iron", 0.1});
    CHECK(*moon.orbit->sense == orbit_sense::prograde);
    CHECK(*moon.orbit->i_rad == 5.1 * c::deg);
    CHECK(!moon.mass_kg.has_value());
    // Where things were written: found independently by searching the text for the line.
    auto line_of = [&](const std::string& needle) {
        const auto pos = d.source_text.find(needle);
        REQUIRE(pos != std::string::npos);
        return 1 +
               static_cast<int>(std::count(d.source_text.begin(),
                                           d.source_text.begin() + static_cast<long>(pos), '\n'));
    };
    REQUIRE(d.where.count("body[Brannoc].orbit.e") == 1);
    CHECK(d.where.at("body[Brannoc].orbit.e").line == line_of("\ne = 0.045") + 1);
    CHECK(d.where.at("body[Brannoc].orbit.e").column == 5);
    CHECK(d.where.at("body[Teodora].radius").line == line_of("radius = \"6210 km\""));
    CHECK(d.where.at("body[Teodora].radius").column == 10);
}

TEST_CASE("relative lengths, left-out angles, semi-axes and periods keep what was written") {
    const design d = load_design_file((scenario_dir / "frost_moons.toml").string());
    const auto& snell = body(d, "Snell");
    CHECK(snell.orbit->a->ref == length_ref::parent_hill);
    CHECK(snell.orbit->a->value == 0.25);
    CHECK(!snell.orbit->i_rad);
    CHECK(!snell.orbit->node_rad);
    CHECK(!snell.orbit->peri_rad);
    CHECK(!snell.orbit->mean_anomaly_rad);
    CHECK(!snell.orbit->sense);
    const auto& rime = body(d, "Rime");
    REQUIRE(rime.semi_axes_m.has_value());
    CHECK((*rime.semi_axes_m)[0] == 62e3);
    CHECK((*rime.semi_axes_m)[2] == 41e3);
    const auto& nirl = body(d, "Nirl");
    CHECK(!nirl.orbit->a);
    CHECK(*nirl.orbit->period_s == 412 * c::day);
    REQUIRE(d.materials.size() == 1);
    CHECK(d.materials[0].name == "dusty_ice");
    CHECK(d.materials[0].density_kg_m3 == 1200.0);
    CHECK(d.materials[0].source == "invented mixture for this example");

    const design s = load_design_file((scenario_dir / "submoon.toml").string());
    CHECK(*body(s, "Pip").kind == body_kind::submoon);
    CHECK(body(s, "Pip").orbit->a->ref == length_ref::parent_hill);
    CHECK(body(s, "Mirelle").orbit->a->ref == length_ref::parent_radii);
    CHECK(body(s, "Mirelle").orbit->a->value == 40.0);

    const design r = load_design_file((scenario_dir / "far_retrograde.toml").string());
    CHECK(*body(r, "Ebbet").orbit->sense == orbit_sense::retrograde);
    CHECK(*body(r, "Ebbet").orbit->i_rad > c::pi / 2);
}

TEST_CASE("bare numbers take the field's documented default unit") {
    const std::string text =
        "[[body]]\nname = \"S\"\nmass = 2e30\nradius = 700000\n"
        "luminosity = 1\nage = 2\n"
        "[[body]]\nname = \"P\"\norbits = \"S\"\nradius = 6000\ndensity = 5.5\n"
        "rotation_period = 24\nobliquity = 10\ntime_lag = 600\n"
        "orbit = { period = 365, i = 3, node = 1, peri = 2, mean_anomaly = 4 }\n"
        "[[body]]\nname = \"M\"\norbits = \"P\"\nsemi_axes = [30, 20, 10]\n"
        "density = 2\norbit = { a = 100000 }\n";
    const design d = parse_design(text, design_format::toml, "bare.toml");
    CHECK(*body(d, "S").mass_kg == 2e30);                   // kg
    CHECK(*body(d, "S").radius_m == 7e8);                   // km
    CHECK(*body(d, "S").luminosity_w == c::L_sun);          // Lsun
    CHECK(*body(d, "S").age_s == 2 * c::Gyr);               // Gyr
    CHECK(*body(d, "P").density_kg_m3 == 5500.0);           // g/cm3
    CHECK(*body(d, "P").rotation_period_s == 24 * c::hour); // h
    CHECK(*body(d, "P").obliquity_rad == 10 * c::deg);      // deg
    CHECK(*body(d, "P").time_lag_s == 600.0);               // s
    CHECK(*body(d, "P").orbit->period_s == 365 * c::day);   // d
    CHECK(*body(d, "P").orbit->i_rad == 3 * c::deg);        // deg
    CHECK(body(d, "M").orbit->a->value == 1e8);             // km
    CHECK((*body(d, "M").semi_axes_m)[1] == 2e4);           // km
}

TEST_CASE("awkward names, keys and values survive both writers") {
    const std::string text =
        "[system]\nname = \"Quote \\\" and \\\\ back\\tslash\"\ndescription = \"línea ☾\"\n"
        "seed = 9223372036854775807\n"
        "[materials]\n\"odd mix.1\" = \"0.30000000000000004 g/cm3\"\n"
        "plain = { density = \"1234.5678901234567 kg/m3\" }\n"
        "[[body]]\nname = \"Ω star\"\nmass = \"1.0000000000000002 Msun\"\nJ2 = 1e-300\n"
        "J4 = -4.9406564584124654e-324\n"
        "[[body]]\nname = \"p [1]\"\norbits = \"Ω star\"\nradius = \"0.1 Rearth\"\n"
        "composition = { \"odd mix.1\" = 0.1, plain = 0.2, ice = 0.7 }\n"
        "orbit = { a = \"0.3333333333333333 AU\", e = 0.9999999999999999, i = \"90 deg\", "
        "sense = \"retrograde\", mean_anomaly = \"-720 deg\" }\n"
        "[[body]]\nname = \"m\"\norbits = \"p [1]\"\nmass = 1\n"
        "orbit = { a = \"1e-3 Rp\", i = \"180 deg\" }\n";
    const design d = parse_design(text, design_format::toml, "odd.toml");
    CHECK(d.name == "Quote \" and \\ back\tslash");
    CHECK(*d.seed == 9223372036854775807u);
    CHECK(*body(d, "Ω star").j4 == -4.9406564584124654e-324);
    const design from_json = parse_design(design_to_json(d), design_format::json, "odd.json");
    CHECK(from_json == d);
    const design from_toml = parse_design(design_to_toml(d), design_format::toml, "odd2.toml");
    CHECK(from_toml == d);
}

TEST_CASE("materials: the design's own table first, then the built-in handbook values") {
    design d;
    CHECK(*material_density(d, "iron") == 7874.0); // CRC Handbook, Fe 7.874 g/cm3 (from memory)
    CHECK(*material_density(d, "ice") == 916.7);   // CRC Handbook, ice Ih at 0 C 0.9167 g/cm3
    CHECK(!material_density(d, "unobtainium").has_value());
    d.materials.push_back(material_spec{"iron", 7000.0, "a lighter iron for a test"});
    d.materials.push_back(material_spec{"unobtainium", 12345.0, "invented"});
    CHECK(*material_density(d, "iron") == 7000.0);
    CHECK(*material_density(d, "unobtainium") == 12345.0);
    // Every built-in entry has a positive density, a source, and a unique name.
    std::vector<std::string_view> names;
    for (const auto& m : builtin_materials()) {
        INFO(m.name);
        CHECK(m.density_kg_m3 > 0);
        CHECK(!m.source.empty());
        names.push_back(m.name);
    }
    std::sort(names.begin(), names.end());
    CHECK(std::adjacent_find(names.begin(), names.end()) == names.end());
    CHECK(names.size() >= 15);
}
