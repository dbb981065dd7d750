// The design generator: determinism in (seed, index), names, tree shape and the kind rules.
#include "engine/design_generator.hpp"

#include "engine/constants.hpp"
#include "engine/design_loader.hpp"
#include "engine/error.hpp"

#include <algorithm>
#include <doctest/doctest.h>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {
constexpr generator_kind all_kinds[] = {generator_kind::rocky, generator_kind::giant,
                                        generator_kind::mixed};

std::vector<std::string> split_lines(const std::string& text) {
    std::vector<std::string> lines;
    std::istringstream in(text);
    for (std::string line; std::getline(in, line);) lines.push_back(line);
    return lines;
}
} // namespace

TEST_CASE("generator kinds have names that parse back") {
    for (const auto k : all_kinds) CHECK(parse_generator_kind(generator_kind_name(k)) == k);
    CHECK_FALSE(parse_generator_kind("gas").has_value());
    CHECK_FALSE(parse_generator_kind("").has_value());
}

TEST_CASE("a generated design depends only on seed, index and kind") {
    for (const auto kind : all_kinds) {
        // Forward and backward order give the same designs: no state leaks between designs.
        std::vector<design> forward;
        for (std::uint64_t k = 0; k < 20; ++k) forward.push_back(generate_design(99, k, kind));
        for (std::uint64_t k = 20; k-- > 0;) CHECK(generate_design(99, k, kind) == forward[k]);
    }
}

TEST_CASE("different seeds, indices and kinds give different designs") {
    int same_seed = 0, same_index = 0, same_kind = 0;
    for (std::uint64_t k = 0; k < 50; ++k) {
        const design d = generate_design(1, k, generator_kind::mixed);
        same_seed += d == generate_design(2, k, generator_kind::mixed);
        same_index += d == generate_design(1, k + 1, generator_kind::mixed);
        same_kind += d == generate_design(1, k, generator_kind::rocky);
    }
    CHECK(same_seed == 0);
    CHECK(same_index == 0);
    CHECK(same_kind == 0);
}

TEST_CASE("a generated design is a star, one to three planets and their moons") {
    for (const auto kind : all_kinds) {
        for (std::uint64_t k = 0; k < 200; ++k) {
            const design d = generate_design(5, k, kind);
            CAPTURE(k);
            REQUIRE(!d.bodies.empty());
            CHECK(d.name == d.bodies.front().name);
            CHECK(d.seed.has_value());
            CHECK(*d.seed <= 9223372036854775807ULL); // the loader's range for a seed
            const body_spec& star = d.bodies.front();
            CHECK(star.orbits.empty());
            CHECK_FALSE(star.orbit.has_value());
            REQUIRE(star.mass_kg.has_value());
            CHECK(*star.mass_kg >= 0.5 * c::M_sun);
            CHECK(*star.mass_kg <= 1.4 * c::M_sun);
            std::set<std::string> names;
            int planets = 0;
            for (std::size_t b = 0; b < d.bodies.size(); ++b) {
                const body_spec& s = d.bodies[b];
                CHECK(names.insert(s.name).second); // unique
                CHECK(s.name.size() >= 3);
                CHECK(s.name.size() <= 12);
                CHECK(std::all_of(s.name.begin(), s.name.end(), [](char ch) {
                    return std::isalpha(static_cast<unsigned char>(ch));
                }));
                if (b == 0) continue;
                // Parents come before their children; planets orbit the star, moons a planet.
                const auto parent =
                    std::find_if(d.bodies.begin(), d.bodies.begin() + static_cast<long>(b),
                                 [&](const body_spec& o) { return o.name == s.orbits; });
                REQUIRE(parent != d.bodies.begin() + static_cast<long>(b));
                REQUIRE(s.orbit.has_value());
                CHECK((s.orbit->a.has_value() != s.orbit->period_s.has_value()));
                CHECK(s.orbit->e >= 0.0);
                CHECK(s.orbit->e < 0.2);
                if (parent == d.bodies.begin()) {
                    ++planets;
                    CHECK(s.kind == body_kind::planet);
                } else {
                    CHECK(s.kind == body_kind::moon);
                    CHECK(parent->orbits == star.name);
                }
            }
            CHECK(planets >= 1);
            CHECK(planets <= 3);
        }
    }
}

TEST_CASE("some angles are left out to be drawn, some written") {
    int written = 0, left_out = 0;
    for (std::uint64_t k = 0; k < 50; ++k)
        for (const auto& b : generate_design(3, k, generator_kind::giant).bodies) {
            if (!b.orbit) continue;
            for (const auto& angle :
                 {b.orbit->i_rad, b.orbit->node_rad, b.orbit->peri_rad, b.orbit->mean_anomaly_rad})
                (angle ? written : left_out) += 1;
        }
    CHECK(written > 100);
    CHECK(left_out > 100);
}

TEST_CASE("JSON lines: one compact design per line, design k the same in any batch") {
    const std::string five = generate_json_lines(11, 5, generator_kind::mixed);
    const auto lines = split_lines(five);
    REQUIRE(lines.size() == 5);
    CHECK(five.back() == '\n');
    for (std::size_t k = 0; k < lines.size(); ++k) {
        CHECK(lines[k] == design_to_json_line(generate_design(11, k, generator_kind::mixed)));
        CHECK(lines[k].front() == '{');
        CHECK(lines[k].back() == '}');
        CHECK(lines[k].find("\n") == std::string::npos);
        CHECK(lines[k].find("\": ") == std::string::npos); // compact: no space after a key
        CHECK(lines[k].size() <
              design_to_json(generate_design(11, k, generator_kind::mixed)).size());
    }
    std::ostringstream tail;
    write_generated_json_lines(tail, 11, 3, 2, generator_kind::mixed);
    CHECK(tail.str() == lines[3] + "\n" + lines[4] + "\n");
}

TEST_CASE("a JSON line and a TOML text load back to the same design") {
    for (const auto kind : all_kinds)
        for (std::uint64_t k = 0; k < 30; ++k) {
            const design d = generate_design(17, k, kind);
            CAPTURE(k);
            CHECK(parse_design(design_to_json_line(d), design_format::json, "<line>") == d);
            CHECK(parse_design(design_to_toml(d), design_format::toml, "<toml>") == d);
        }
}

TEST_CASE("TOML files: one per design, named by index and design name, loading back equal") {
    const std::filesystem::path folder =
        std::filesystem::path(MOONWRIGHT_BINARY_DIR) / "tests" / "generate" / "toml_out";
    std::filesystem::remove_all(folder);
    const auto paths = write_generated_toml_files(folder.string(), 23, 4, 3, generator_kind::giant);
    REQUIRE(paths.size() == 3);
    for (std::uint64_t k = 0; k < 3; ++k) {
        const design d = generate_design(23, 4 + k, generator_kind::giant);
        CHECK(std::filesystem::path(paths[k]).filename().string() ==
              generated_file_name(4 + k, d, "toml"));
        CHECK(load_design_file(paths[k]) == d);
    }
    CHECK(generated_file_name(42, generate_design(23, 4, generator_kind::giant), "toml")
              .starts_with("000042-"));
}

TEST_CASE("TOML files: a folder that cannot be made is an io_error") {
    const std::filesystem::path blocker =
        std::filesystem::path(MOONWRIGHT_BINARY_DIR) / "tests" / "generate" / "not_a_folder";
    std::filesystem::create_directories(blocker.parent_path());
    std::ofstream(blocker) << "a file, not a folder\n";
    CHECK_THROWS_AS(write_generated_toml_files(blocker.string(), 1, 0, 1, generator_kind::rocky),
                    io_error);
}
