// Malformed design files: each must raise one input_error that names the rule it breaks and the
// place (file:line:column) of the offending value. The list is tests/design/malformed/expected.txt.
#include "engine/design_loader.hpp"
#include "engine/error.hpp"

#include <doctest/doctest.h>

#include <cctype>
#include <filesystem>
#include <fstream>
#include <random>
#include <set>
#include <string>
#include <vector>

using namespace moonwright;
namespace fs = std::filesystem;

namespace {
struct expectation {
    std::string file, fragment, location;
};

std::string trim(const std::string& s) {
    const auto b = s.find_first_not_of(" \t");
    const auto e = s.find_last_not_of(" \t\r");
    return b == std::string::npos ? std::string() : s.substr(b, e - b + 1);
}

const fs::path malformed_dir = fs::path(MOONWRIGHT_SOURCE_DIR) / "tests/design/malformed";

std::vector<expectation> read_manifest() {
    std::ifstream in(malformed_dir / "expected.txt");
    REQUIRE(in.good());
    std::vector<expectation> out;
    std::string line;
    while (std::getline(in, line)) {
        if (trim(line).empty() || trim(line)[0] == '#') continue;
        const auto p1 = line.find(" | ");
        const auto p2 = line.rfind(" | ");
        REQUIRE_MESSAGE(p1 != p2, "manifest line needs three fields: " << line);
        out.push_back({trim(line.substr(0, p1)), trim(line.substr(p1 + 3, p2 - p1 - 3)),
                       trim(line.substr(p2 + 3))});
    }
    return out;
}
} // namespace

TEST_CASE("the malformed manifest lists every malformed file, and only those") {
    std::set<std::string> listed, present;
    for (const auto& e : read_manifest()) CHECK_MESSAGE(listed.insert(e.file).second, e.file);
    for (const auto& entry : fs::directory_iterator(malformed_dir))
        if (entry.path().filename() != "expected.txt")
            present.insert(entry.path().filename().string());
    CHECK(listed == present);
    CHECK(listed.size() >= 25);
}

TEST_CASE("every malformed design raises one input_error with the rule and its location") {
    int json = 0, toml = 0;
    for (const auto& e : read_manifest()) {
        INFO("file: " << e.file);
        const std::string path = (malformed_dir / e.file).string();
        (fs::path(path).extension() == ".json" ? json : toml) += 1;
        bool thrown = false;
        try {
            (void)load_design_file(path);
        } catch (const input_error& err) {
            thrown = true;
            const std::string msg = err.what();
            INFO("message: " << msg);
            CHECK(err.code() == exit_code::bad_input); // exit code 2 on the command line
            CHECK(msg.find(e.fragment) != std::string::npos);
            if (e.location != "-") {
                CHECK(msg.rfind(path + ":" + e.location + ": ", 0) == 0);
                CHECK(err.where().to_string() == path + ":" + e.location);
            } else {
                CHECK(err.where().file == path);
            }
        } catch (const std::exception& other) {
            FAIL_CHECK("wrong exception type: " << other.what());
        }
        CHECK_MESSAGE(thrown, "no input_error for " << e.file);
    }
    CHECK(json >= 8); // both formats are exercised
    CHECK(toml >= 8);
}

TEST_CASE("the same rule breaks alike in TOML and in JSON text") {
    const std::string toml_text = "[[body]]\nname = \"S\"\nmass = \"1 Msun\"\n"
                                  "[[body]]\nname = \"P\"\norbits = \"S\"\nmass = \"1 Mearth\"\n"
                                  "orbit = { a = \"1 AU\", eccentricity = 0.1 }\n";
    const std::string json_text = "{\"body\": [{\"name\": \"S\", \"mass\": \"1 Msun\"},\n"
                                  "  {\"name\": \"P\", \"orbits\": \"S\", \"mass\": \"1 Mearth\",\n"
                                  "   \"orbit\": {\"a\": \"1 AU\", \"eccentricity\": 0.1}}]}";
    // A long name of a short key gets the short key suggested (common practice, no source).
    CHECK_THROWS_WITH_AS(parse_design(toml_text, design_format::toml, "t.toml"),
                         doctest::Contains("t.toml:8:23: body[P].orbit.eccentricity"), input_error);
    CHECK_THROWS_WITH_AS(parse_design(toml_text, design_format::toml, "t.toml"),
                         doctest::Contains("did you mean \"e\"?"), input_error);
    CHECK_THROWS_WITH_AS(parse_design(json_text, design_format::json, "j.json"),
                         doctest::Contains("j.json:3:27: body[P].orbit.eccentricity"), input_error);
}

TEST_CASE("unreadable inputs are input errors, not crashes") {
    CHECK_THROWS_AS(load_design_file("/nonexistent/dir/none.toml"), input_error);
    CHECK_THROWS_WITH_AS(load_design_file(malformed_dir.string() + "/expected.txt"),
                         doctest::Contains("expected .toml or .json"), input_error);
    CHECK_THROWS_AS(load_design_file(malformed_dir.string() + "/.toml"), input_error);
    // A directory named like a design file.
    const fs::path dir = fs::path(MOONWRIGHT_BINARY_DIR) / "dir_named_design.toml";
    fs::create_directories(dir);
    CHECK_THROWS_WITH_AS(load_design_file(dir.string()), doctest::Contains("regular file"),
                         input_error);
    // Truncations of a valid design never crash: each prefix either loads or is an input_error.
    std::ifstream in(fs::path(MOONWRIGHT_SOURCE_DIR) / "scenarios/teodora.json");
    std::string full((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    while (!full.empty() && std::isspace(static_cast<unsigned char>(full.back()))) full.pop_back();
    REQUIRE(full.size() > 100);
    int errors = 0;
    for (std::size_t n = 0; n < full.size(); n += 7) {
        try {
            (void)parse_design(full.substr(0, n), design_format::json, "cut.json");
        } catch (const input_error&) {
            ++errors;
        }
    }
    CHECK(errors == static_cast<int>((full.size() + 6) / 7)); // every strict prefix is broken
}

TEST_CASE("cut and corrupted scenario files load or give input_error, nothing else") {
    // Deterministic corruption (fixed seed): every outcome must be a design or an input_error.
    std::mt19937 rng(12345);
    for (const char* name : {"teodora.toml", "teodora.json", "frost_moons.toml"}) {
        INFO("scenario: " << name);
        std::ifstream in(fs::path(MOONWRIGHT_SOURCE_DIR) / "scenarios" / name);
        const std::string full((std::istreambuf_iterator<char>(in)),
                               std::istreambuf_iterator<char>());
        REQUIRE(!full.empty());
        const auto format =
            fs::path(name).extension() == ".json" ? design_format::json : design_format::toml;
        int loaded = 0, refused = 0;
        auto attempt = [&](const std::string& text) {
            try {
                (void)parse_design(text, format, name);
                ++loaded;
            } catch (const input_error&) {
                ++refused;
            } catch (const std::exception& e) {
                FAIL_CHECK("unexpected exception: " << e.what());
            }
        };
        for (std::size_t n = 0; n < full.size(); n += 5) attempt(full.substr(0, n));
        const std::string junk = "\"{}[]=,:.-+0123456789eE \n\t\\x\xff";
        for (int trial = 0; trial < 300; ++trial) {
            std::string text = full;
            const std::size_t at = rng() % text.size();
            text[at] = junk[rng() % junk.size()];
            attempt(text);
        }
        CHECK(refused > 0);
        CHECK(loaded + refused == static_cast<int>((full.size() + 4) / 5) + 300);
    }
}
