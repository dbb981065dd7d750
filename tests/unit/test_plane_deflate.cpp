// deflate_planes: its zlib streams inflate (zlib's own uncompress, the RFC 1950/1951 reference)
// to the bytes they were made from, whatever the planes hold.
#include "engine/plane_deflate.hpp"

#include <algorithm>
#include <cstdint>
#include <doctest/doctest.h>
#include <random>
#include <vector>
#include <zlib.h>

using namespace moonwright;

namespace {

/// Packs `data` as planes of `plane_size`, inflates it with zlib and returns the stream size
/// (0 when inflating failed or gave other bytes).
std::size_t round_trip(const std::vector<unsigned char>& data, std::size_t plane_size,
                       bool try_all = true) {
    const std::size_t planes = plane_size == 0 ? 0 : data.size() / plane_size;
    std::vector<unsigned char> packed;
    const std::size_t size =
        deflate_planes(data.data(), planes, plane_size, std::vector<bool>(planes, try_all), packed);
    REQUIRE(size <= packed.size());
    std::vector<unsigned char> back(data.size() + 1);
    uLongf back_size = static_cast<uLongf>(back.size());
    if (uncompress(back.data(), &back_size, packed.data(), static_cast<uLong>(size)) != Z_OK)
        return 0;
    back.resize(back_size);
    return back == data ? size : 0;
}

} // namespace

TEST_CASE("random planes are stored, and come back whole") {
    std::mt19937_64 bits(20261202);
    std::vector<unsigned char> data(8 * 1024);
    for (auto& b : data) b = static_cast<unsigned char>(bits());
    const std::size_t size = round_trip(data, 1024);
    REQUIRE(size > 0);
    // Eight stored blocks: 5 bytes each on top of the data, 6 for zlib's header and check.
    CHECK(size == data.size() + 8 * 5 + 6);
    // Not tried: stored too, the same bytes.
    CHECK(round_trip(data, 1024, false) == size);
}

TEST_CASE("runs and few values shrink, also across plane boundaries") {
    std::vector<unsigned char> data(8 * 1024, 0x41); // all one byte: runs from plane to plane
    const std::size_t constant = round_trip(data, 1024);
    REQUIRE(constant > 0);
    CHECK(constant < 200);
    // Runs of every length around the code boundaries (3, 10, 11, 258, 259), in bytes of
    // a few values, and single bytes between them.
    data.clear();
    std::mt19937 pick(7);
    for (const std::size_t run : {1, 2, 3, 4, 10, 11, 12, 257, 258, 259, 300, 515, 516, 1000})
        for (int k = 0; k < 3; ++k) {
            const auto b = static_cast<unsigned char>(pick() % 5);
            data.insert(data.end(), run, b);
            data.push_back(static_cast<unsigned char>(200 + pick() % 40));
        }
    data.resize(data.size() - data.size() % 512);
    const std::size_t mixed = round_trip(data, 512);
    REQUIRE(mixed > 0);
    CHECK(mixed < data.size() / 4);
}

TEST_CASE("skewed, large, tiny and empty inputs") {
    // Counts 1, 2, 4, ..., 2^20 (and the end-of-block code's 1) make a Huffman tree 21 deep,
    // deeper than deflate's 15 bits: that plane is stored, and the stream still inflates. No
    // byte repeats the one before (no runs to take instead): each is the most frequent one
    // left that differs from it.
    std::vector<std::uint64_t> left;
    for (int s = 0; s < 21; ++s) left.push_back(std::uint64_t{1} << s);
    std::vector<unsigned char> spread;
    int before = -1;
    for (;;) {
        int pick = -1;
        for (int s = 0; s < 21; ++s)
            if (s != before && left[s] > 0 && (pick < 0 || left[s] > left[pick])) pick = s;
        if (pick < 0) break;
        spread.push_back(static_cast<unsigned char>(pick));
        --left[pick], before = pick;
    }
    REQUIRE(spread.size() == (std::size_t{1} << 21) - 1);
    // Stored in blocks of 65,535 bytes (5 bytes of header each), with zlib's 6 bytes.
    const std::size_t blocks = (spread.size() + 65534) / 65535;
    CHECK(round_trip(spread, spread.size()) == spread.size() + 5 * blocks + 6);
    // Planes larger than a stored block (65,535 bytes): random, then constant.
    std::mt19937_64 bits(3);
    std::vector<unsigned char> big(2 * 70000);
    for (std::size_t k = 0; k < 70000; ++k) big[k] = static_cast<unsigned char>(bits());
    CHECK(round_trip(big, 70000) > 0);
    // One-byte planes, and nothing at all.
    CHECK(round_trip({1, 2, 2, 2, 2, 9}, 1) > 0);
    CHECK(round_trip({}, 0) > 0);
    CHECK(round_trip({}, 16) > 0);
}
