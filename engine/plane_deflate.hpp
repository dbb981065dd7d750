// A zlib stream of byte planes, written by moonwright itself (RFC 1950 and RFC 1951).
#pragma once

#include <cstddef>
#include <vector>

namespace moonwright {

/// Packs `planes` byte planes of `plane_size` bytes each, laid end to end at `data`, as one
/// zlib stream (RFC 1950) that any inflate reads, HDF5's deflate filter among them. Each
/// plane becomes one block (RFC 1951), whichever of two is smaller:
/// - a stored block (the bytes as they are), or
/// - a block of Huffman codes made for the plane, coding its bytes and its runs of one
///   byte (copies at distance 1).
/// A plane that `worth_trying` rejects is stored without building codes. Meant for shuffled
/// doubles, whose low mantissa planes are random and whose sign and exponent planes are runs:
/// it spends a few instructions a byte, where zlib's run-length strategy spends tens.
/// Writes the stream to the start of `out` (grown as needed, never shrunk, so a buffer used
/// again is not refilled); returns the stream's size in bytes.
std::size_t deflate_planes(const unsigned char* data, std::size_t planes, std::size_t plane_size,
                           const std::vector<bool>& worth_trying, std::vector<unsigned char>& out);

} // namespace moonwright
