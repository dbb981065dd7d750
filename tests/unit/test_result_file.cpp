// Result files: every kind of dataset written, reopened and read back; units on every dataset.
#include "engine/error.hpp"
#include "engine/result_file.hpp"

#include <cmath>
#include <cstdint>
#include <cstring>
#include <doctest/doctest.h>
#include <filesystem>
#include <limits>
#include <random>
#include <string>
#include <vector>

using namespace moonwright;

namespace {
std::string scratch(const char* name) {
    return (std::filesystem::temp_directory_path() / name).string();
}
} // namespace

TEST_CASE("tables grow by appended rows and read back exactly") {
    const std::string path = scratch("mw_result_table.h5");
    {
        result_file f(path, result_file::mode::create);
        f.create_table("/series/a", 3, "m", "semi-major axes", {"x", "y", "z"});
        const std::vector<double> first{1.0, 2.0, 3.0, 4.0, 5.0, 6.0};
        f.append_rows("/series/a", first);
        const std::vector<double> second{0.1 + 0.2, 8.0, 9.0};
        f.append_rows("/series/a", second);
        CHECK(f.rows("/series/a") == 3);
        CHECK(f.columns("/series/a") == 3);
    }
    result_file f(path, result_file::mode::update);
    const auto v = f.read_array("/series/a");
    REQUIRE(v.size() == 9);
    CHECK(v[6] == 0.1 + 0.2); // bit for bit
    CHECK(f.string_attribute("/series/a", "units") == "m");
    CHECK(f.string_attribute("/series/a", "columns") == "x,y,z");
    f.truncate_rows("/series/a", 1);
    CHECK(f.rows("/series/a") == 1);
    const std::vector<double> bad{1.0, 2.0};
    CHECK_THROWS_AS(f.append_rows("/series/a", bad), io_error);
}

TEST_CASE("tables written in whole chunks (packed without HDF5's filters) read back bit for bit") {
    // append_rows packs whole chunks of a new table itself (shuffle and deflate, the same
    // stream the filters make) and writes them with H5Dwrite_chunk. HDF5's own filters read
    // them back here. Three chunks of 1024 rows (the last partly filled, then topped up through
    // the filters), special values, and a table of random bits that deflate cannot shrink
    // (stored shuffled only, its chunks marked as such).
    const std::string path = scratch("mw_result_chunks.h5");
    std::vector<double> smooth, noise, more;
    for (int k = 0; k < 2500 * 3; ++k) smooth.push_back(1.5e11 + 3.0e5 * std::sin(0.01 * k));
    smooth[5] = std::numeric_limits<double>::quiet_NaN();
    smooth[6] = -std::numeric_limits<double>::infinity();
    smooth[7] = std::numeric_limits<double>::denorm_min();
    smooth[8] = -0.0;
    std::mt19937_64 bits(20261202);
    for (int k = 0; k < 1100 * 2; ++k) {
        const std::uint64_t u = bits();
        double x;
        std::memcpy(&x, &u, sizeof x);
        noise.push_back(x);
    }
    for (int k = 0; k < 10 * 3; ++k) more.push_back(0.5 * k);
    {
        result_file f(path, result_file::mode::create);
        f.create_table("/series/smooth", 3, "m", "a smooth series");
        f.append_rows("/series/smooth", smooth);
        f.append_rows("/series/smooth", more);
        f.create_table("/series/noise", 2, "1", "random bits");
        f.append_rows("/series/noise", noise);
    }
    auto same_bits = [](const std::vector<double>& a, const std::vector<double>& b) {
        return a.size() == b.size() && std::memcmp(a.data(), b.data(), a.size() * 8) == 0;
    };
    const result_file f(path, result_file::mode::read);
    CHECK(f.rows("/series/smooth") == 2510);
    std::vector<double> expect = smooth;
    expect.insert(expect.end(), more.begin(), more.end());
    CHECK(same_bits(f.read_array("/series/smooth"), expect));
    CHECK(f.rows("/series/noise") == 1100);
    CHECK(same_bits(f.read_array("/series/noise"), noise));
    CHECK(f.string_attribute("/series/noise", "units") == "1");
    // The smooth series is compressed to about half: the raw doubles of both tables alone are
    // 77,840 bytes (chunks padded to 1024 rows), the file with its metadata about 64,000.
    CHECK(std::filesystem::file_size(path) < 70000);
}

TEST_CASE("attributes, arrays, texts and record tables") {
    const std::string path = scratch("mw_result_misc.h5");
    {
        result_file f(path, result_file::mode::create);
        f.create_group("/run");
        f.set_attribute("/run", "verdict", std::string("stable"));
        f.set_attribute("/run", "step_s", 3600.5);
        f.set_attribute("/run", "seed", std::int64_t{42});
        f.write_array("/bodies/mass", std::vector<double>{1.0e30, 6.0e24}, {2}, "kg", "masses");
        f.write_text("/design/text", "[system]\nname = \"x\"\n", "design as written");
        f.create_record_table("/events",
                              {{"time", record_field::type::real, "s"},
                               {"body", record_field::type::integer, "1"},
                               {"kind", record_field::type::text, "", 16}},
                              "events in time order");
        f.append_record("/events", {12.5, std::int64_t{3}, std::string("close_approach")});
        f.append_record("/events",
                        {99.0, std::int64_t{1}, std::string("a very long kind name that is cut")});
    }
    result_file f(path, result_file::mode::read);
    CHECK(f.string_attribute("/run", "verdict") == "stable");
    CHECK(f.real_attribute("/run", "step_s") == 3600.5);
    CHECK(f.integer_attribute("/run", "seed") == 42);
    CHECK(f.read_array("/bodies/mass")[1] == 6.0e24);
    CHECK(f.read_text("/design/text") == "[system]\nname = \"x\"\n");
    CHECK(f.string_attribute("/design/text", "units").empty());
    const auto rec = f.read_records("/events");
    REQUIRE(rec.size() == 2);
    CHECK(std::get<double>(rec[0][0]) == 12.5);
    CHECK(std::get<std::int64_t>(rec[0][1]) == 3);
    CHECK(std::get<std::string>(rec[0][2]) == "close_approach");
    CHECK(std::get<std::string>(rec[1][2]).size() == 16);
    CHECK(f.string_attribute("/events", "units") == "time: s; body: 1; kind: -");
    CHECK(f.exists("/bodies/mass"));
    CHECK_FALSE(f.exists("/nowhere/else"));
}

TEST_CASE("a file that cannot be created is an io_error") {
    CHECK_THROWS_AS(result_file("/nonexistent-dir/x.h5", result_file::mode::create), io_error);
    CHECK_THROWS_AS(result_file(scratch("mw_missing_file.h5"), result_file::mode::read), io_error);
}
