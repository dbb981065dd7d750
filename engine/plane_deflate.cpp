// A zlib stream of byte planes (RFC 1950, RFC 1951): stored blocks and dynamic-Huffman blocks
// of literals and runs, one block a plane.
#include "engine/plane_deflate.hpp"

#include "engine/error.hpp"

#include <algorithm>
#include <array>
#include <bit>
#include <cstdint>
#include <cstring>
#include <numeric>
#include <zlib.h>

namespace moonwright {

namespace {

constexpr std::size_t literal_symbols = 286; ///< 0-255 bytes, 256 end of block, 257-285 lengths
constexpr std::size_t end_of_block = 256;
constexpr unsigned max_code_bits = 15;    ///< RFC 1951: literal/length and distance codes
constexpr unsigned max_length_bits = 7;   ///< RFC 1951: the code-length code
constexpr std::size_t max_run = 258;      ///< the longest copy a length code says
constexpr std::size_t max_stored = 65535; ///< the most bytes one stored block holds

/// The length code of every copy length 3..258 (RFC 1951 section 3.2.5), with its extra bits.
struct length_table {
    std::array<std::uint16_t, max_run + 1> symbol{};
    std::array<std::uint8_t, max_run + 1> extra_bits{};
    std::array<std::uint16_t, max_run + 1> extra_value{};
    length_table() {
        constexpr std::uint16_t base[29] = {3,  4,  5,  6,   7,   8,   9,   10,  11, 13,
                                            15, 17, 19, 23,  27,  31,  35,  43,  51, 59,
                                            67, 83, 99, 115, 131, 163, 195, 227, 258};
        constexpr std::uint8_t extra[29] = {0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2,
                                            2, 3, 3, 3, 3, 4, 4, 4, 4, 5, 5, 5, 5, 0};
        for (std::size_t length = 3; length <= max_run; ++length) {
            std::size_t code = 28; // the last code whose base is at most the length
            while (base[code] > length) --code;
            symbol[length] = static_cast<std::uint16_t>(257 + code);
            extra_bits[length] = extra[code];
            extra_value[length] = static_cast<std::uint16_t>(length - base[code]);
        }
    }
};
const length_table& lengths() {
    static const length_table table;
    return table;
}

/// Huffman code lengths (depths of the tree Huffman's method builds) of the `m` symbols
/// `used` (their frequencies nonzero; `length` of the others is left as it is). Returns the
/// longest length.
unsigned huffman_lengths(const std::uint32_t* freq, const std::uint16_t* symbols, std::size_t m,
                         std::uint8_t* length) {
    if (m == 0) return 0;
    if (m == 1) {
        length[symbols[0]] = 1;
        return 1;
    }
    std::array<std::uint16_t, literal_symbols> used; // by rising frequency
    std::copy_n(symbols, m, used.begin());
    std::stable_sort(used.begin(), used.begin() + static_cast<std::ptrdiff_t>(m),
                     [&](std::uint16_t a, std::uint16_t b) { return freq[a] < freq[b]; });
    // Nodes 0..m-1 are the sorted leaves, m..2m-2 the merged nodes in the order made (their
    // weights never fall, so the two lightest are always at the heads of the two queues).
    std::array<std::uint64_t, 2 * literal_symbols> weight;
    std::array<std::uint16_t, 2 * literal_symbols> parent;
    std::array<std::uint8_t, 2 * literal_symbols> depth;
    for (std::size_t k = 0; k < m; ++k) weight[k] = freq[used[k]];
    std::size_t next_leaf = 0, next_node = m;
    const auto lightest = [&](std::size_t made) {
        if (next_leaf < m && (next_node >= made || weight[next_leaf] <= weight[next_node]))
            return next_leaf++;
        return next_node++;
    };
    for (std::size_t k = m; k < 2 * m - 1; ++k) {
        const std::size_t a = lightest(k), b = lightest(k);
        weight[k] = weight[a] + weight[b];
        parent[a] = parent[b] = static_cast<std::uint16_t>(k);
    }
    depth[2 * m - 2] = 0; // the root
    unsigned longest = 0;
    for (std::size_t k = 2 * m - 2; k-- > 0;) {
        depth[k] = static_cast<std::uint8_t>(std::min(depth[parent[k]] + 1, 255));
        if (k < m) {
            length[used[k]] = depth[k];
            longest = std::max<unsigned>(longest, depth[k]);
        }
    }
    return longest;
}

/// The symbols 0..n-1 with nonzero frequency, in order, into `used`; returns their number.
std::size_t used_symbols(const std::uint32_t* freq, std::size_t n, std::uint16_t* used) {
    std::size_t m = 0;
    for (std::size_t s = 0; s < n; ++s)
        if (freq[s] > 0) used[m++] = static_cast<std::uint16_t>(s);
    return m;
}

/// The bits of v (len of them) in reverse order.
std::uint16_t reversed(unsigned v, unsigned len) {
    static const auto table = [] {
        std::array<std::uint8_t, 256> t{};
        for (unsigned x = 0; x < 256; ++x) {
            unsigned r = 0;
            for (unsigned b = 0; b < 8; ++b) r |= ((x >> b) & 1u) << (7 - b);
            t[x] = static_cast<std::uint8_t>(r);
        }
        return t;
    }();
    const unsigned r16 = (unsigned{table[v & 0xffu]} << 8) | table[(v >> 8) & 0xffu];
    return static_cast<std::uint16_t>(r16 >> (16 - len));
}

/// Canonical codes for the code lengths of the `m` symbols `used`, in symbol order (RFC 1951
/// section 3.2.2 numbers codes of equal length in symbol order), bit-reversed for the
/// least-significant-bit-first output.
void canonical_codes(const std::uint8_t* length, const std::uint16_t* used, std::size_t m,
                     std::uint16_t* code) {
    std::array<std::uint16_t, max_code_bits + 1> count{}, next{};
    for (std::size_t k = 0; k < m; ++k) ++count[length[used[k]]];
    count[0] = 0;
    std::uint16_t c = 0;
    for (unsigned bits = 1; bits <= max_code_bits; ++bits) {
        c = static_cast<std::uint16_t>((c + count[bits - 1]) << 1);
        next[bits] = c;
    }
    for (std::size_t k = 0; k < m; ++k) {
        const std::uint16_t s = used[k];
        code[s] = reversed(next[length[s]]++, length[s]);
    }
}

/// Bits out, least significant first (RFC 1951 section 3.1.1), into a buffer sized ahead.
class bit_writer {
  public:
    explicit bit_writer(unsigned char* at) : at_(at) {}
    void put(std::uint32_t bits, unsigned count) {
        buffer_ |= static_cast<std::uint64_t>(bits) << filled_;
        filled_ += count;
        if (filled_ >= 32) {
            for (unsigned k = 0; k < 4; ++k)
                *at_++ = static_cast<unsigned char>(buffer_ >> (8 * k));
            buffer_ >>= 32;
            filled_ -= 32;
        }
    }
    /// Pads to a byte boundary and writes out every whole byte.
    void align() {
        while (filled_ > 0) {
            *at_++ = static_cast<unsigned char>(buffer_);
            buffer_ >>= 8;
            filled_ = filled_ >= 8 ? filled_ - 8 : 0;
        }
        buffer_ = 0;
    }
    void bytes(const unsigned char* p, std::size_t n) {
        if (n == 0) return; // p may be null then (an empty plane)
        std::memcpy(at_, p, n);
        at_ += n;
    }
    [[nodiscard]] unsigned char* at() const { return at_; }

  private:
    unsigned char* at_;
    std::uint64_t buffer_ = 0;
    unsigned filled_ = 0;
};

void put_stored(bit_writer& w, const unsigned char* p, std::size_t n, bool final_plane) {
    do {
        const std::size_t part = std::min(n, max_stored);
        const bool last = final_plane && part == n;
        w.put(last ? 1u : 0u, 3); // BFINAL, BTYPE 00
        w.align();
        const auto len = static_cast<std::uint16_t>(part);
        const auto nlen = static_cast<std::uint16_t>(~len);
        const unsigned char head[4] = {
            static_cast<unsigned char>(len & 0xff), static_cast<unsigned char>(len >> 8),
            static_cast<unsigned char>(nlen & 0xff), static_cast<unsigned char>(nlen >> 8)};
        w.bytes(head, 4);
        w.bytes(p, part);
        p += part, n -= part;
    } while (n > 0);
}

/// How many of the first `limit` bytes at p equal b (p[0] does), eight at a time.
std::size_t run_length(const unsigned char* p, unsigned char b, std::size_t limit) {
    const std::uint64_t all = 0x0101010101010101ull * b;
    std::size_t r = 1;
    while (r + 8 <= limit) {
        std::uint64_t w;
        std::memcpy(&w, p + r, sizeof w);
        const std::uint64_t diff = w ^ all;
        if (diff != 0) {
            if constexpr (std::endian::native == std::endian::little)
                return r + static_cast<std::size_t>(std::countr_zero(diff)) / 8;
            while (p[r] == b) ++r;
            return r;
        }
        r += 8;
    }
    while (r < limit && p[r] == b) ++r;
    return r;
}

/// One plane as a dynamic-Huffman block, when that is smaller than storing it.
class plane_coder {
  public:
    /// Codes `n` bytes at p (`previous` is the stream's byte before them, or -1) into w and
    /// returns true, or returns false having written nothing (store the plane instead).
    bool put(bit_writer& w, const unsigned char* p, std::size_t n, int previous, bool final) {
        const length_table& lt = lengths();
        tokens_.resize(n);
        std::array<std::uint32_t, literal_symbols> freq{};
        std::size_t count = 0, runs = 0;
        std::uint64_t run_extra_bits = 0;
        for (std::size_t i = 0; i < n;) {
            const unsigned char b = p[i];
            if (b == previous) {
                const std::size_t r = run_length(p + i, b, std::min(max_run, n - i));
                if (r >= 3) {
                    tokens_[count++] = static_cast<std::uint16_t>(256 + r);
                    ++freq[lt.symbol[r]];
                    ++runs, run_extra_bits += lt.extra_bits[r];
                    i += r;
                    continue;
                }
            }
            tokens_[count++] = b;
            ++freq[b];
            previous = b;
            ++i;
        }
        freq[end_of_block] = 1;
        std::array<std::uint16_t, literal_symbols> used;
        const std::size_t m = used_symbols(freq.data(), literal_symbols, used.data());
        std::array<std::uint8_t, literal_symbols> len{};
        if (huffman_lengths(freq.data(), used.data(), m, len.data()) > max_code_bits) return false;
        std::size_t hlit = literal_symbols;
        while (hlit > 257 && len[hlit - 1] == 0) --hlit;
        // The code lengths of both alphabets in one sequence, run-length coded with 16 (repeat
        // the last 3-6 times), 17 (3-10 zeros) and 18 (11-138 zeros). One distance code (0,
        // distance 1) of one bit, also when no run uses it (RFC 1951 section 3.2.7).
        std::array<std::uint8_t, literal_symbols + 1> all; // [0, total) written below
        std::copy_n(len.begin(), hlit, all.begin());
        all[hlit] = 1;
        const std::size_t total = hlit + 1;
        std::array<std::uint32_t, 19> cl_freq{};
        std::size_t ops = 0;
        std::array<std::uint16_t, literal_symbols + 1> cl_op; // symbol | extra value << 5
        for (std::size_t i = 0; i < total;) {
            const std::uint8_t v = all[i];
            std::size_t r = 1;
            while (i + r < total && all[i + r] == v) ++r;
            i += r;
            if (v == 0) {
                while (r >= 11) {
                    const std::size_t k = std::min<std::size_t>(r, 138);
                    cl_op[ops++] = static_cast<std::uint16_t>(18 | ((k - 11) << 5)), ++cl_freq[18];
                    r -= k;
                }
                if (r >= 3) {
                    cl_op[ops++] = static_cast<std::uint16_t>(17 | ((r - 3) << 5)), ++cl_freq[17];
                    r = 0;
                }
            } else {
                cl_op[ops++] = v, ++cl_freq[v], --r;
                while (r >= 3) {
                    const std::size_t k = std::min<std::size_t>(r, 6);
                    cl_op[ops++] = static_cast<std::uint16_t>(16 | ((k - 3) << 5)), ++cl_freq[16];
                    r -= k;
                }
            }
            for (; r > 0; --r) cl_op[ops++] = v, ++cl_freq[v];
        }
        std::array<std::uint8_t, 19> cl_len{};
        std::size_t cl_count = 0;
        for (const std::uint32_t f : cl_freq) cl_count += f > 0 ? 1 : 0;
        if (cl_count == 1) ++cl_freq[cl_freq[0] > 0 ? 1 : 0]; // a single code must have a mate
        std::array<std::uint16_t, 19> cl_used;
        const std::size_t cl_m = used_symbols(cl_freq.data(), 19, cl_used.data());
        // Codes too long for either alphabet (rare, and only for skewed planes): stored.
        if (huffman_lengths(cl_freq.data(), cl_used.data(), cl_m, cl_len.data()) > max_length_bits)
            return false;
        static constexpr std::uint8_t order[19] = {16, 17, 18, 0, 8,  7, 9,  6, 10, 5,
                                                   11, 4,  12, 3, 13, 2, 14, 1, 15};
        std::size_t hclen = 19;
        while (hclen > 4 && cl_len[order[hclen - 1]] == 0) --hclen;

        // The block's size in bits against a stored block's.
        static constexpr unsigned op_extra[19] = {0, 0, 0, 0, 0, 0, 0, 0, 0, 0,
                                                  0, 0, 0, 0, 0, 0, 2, 3, 7};
        std::uint64_t bits = 3 + 5 + 5 + 4 + 3 * hclen + run_extra_bits + runs; // + 1-bit dist
        for (std::size_t s = 0; s < 19; ++s)
            bits += std::uint64_t{cl_freq[s]} * (cl_len[s] + op_extra[s]);
        for (std::size_t k = 0; k < m; ++k) bits += std::uint64_t{freq[used[k]]} * len[used[k]];
        if (bits >= 3 + 32 + 8 * std::uint64_t{n}) return false;

        std::array<std::uint16_t, literal_symbols> code; // read for used symbols only
        std::array<std::uint16_t, 19> cl_code;
        canonical_codes(len.data(), used.data(), m, code.data());
        canonical_codes(cl_len.data(), cl_used.data(), cl_m, cl_code.data());
        w.put(final ? 1u : 0u, 1);
        w.put(2, 2); // BTYPE 10: dynamic Huffman codes
        w.put(static_cast<std::uint32_t>(hlit - 257), 5);
        w.put(0, 5); // HDIST: one distance code
        w.put(static_cast<std::uint32_t>(hclen - 4), 4);
        for (std::size_t k = 0; k < hclen; ++k) w.put(cl_len[order[k]], 3);
        for (std::size_t k = 0; k < ops; ++k) {
            const unsigned s = cl_op[k] & 31u, extra = cl_op[k] >> 5;
            w.put(cl_code[s], cl_len[s]);
            if (op_extra[s] > 0) w.put(extra, op_extra[s]);
        }
        for (std::size_t k = 0; k < count; ++k) {
            const std::uint16_t t = tokens_[k];
            if (t < 256) {
                w.put(code[t], len[t]);
                continue;
            }
            const std::size_t r = t - 256u;
            const std::uint16_t s = lt.symbol[r];
            w.put(code[s], len[s]);
            if (lt.extra_bits[r] > 0) w.put(lt.extra_value[r], lt.extra_bits[r]);
            w.put(0, 1); // distance code 0: distance 1
        }
        w.put(code[end_of_block], len[end_of_block]);
        return true;
    }

  private:
    std::vector<std::uint16_t> tokens_;
};

} // namespace

std::size_t deflate_planes(const unsigned char* data, std::size_t planes, std::size_t plane_size,
                           const std::vector<bool>& worth_trying, std::vector<unsigned char>& out) {
    const std::size_t n = planes * plane_size;
    // Every plane stored (the largest the stream can be), the zlib header and Adler-32.
    const std::size_t bound = 2 + n + planes * (5 * (plane_size / max_stored + 1) + 1) + 4 + 16;
    if (out.size() < bound) out.resize(bound); // kept at its largest: no refill per call
    bit_writer w(out.data());
    w.put(0x78, 8); // CMF: deflate, 32 KiB window
    w.put(0x01, 8); // FLG: no dictionary, fastest; (0x78 * 256 + 0x01) % 31 == 0
    thread_local plane_coder coder;
    for (std::size_t k = 0; k < planes; ++k) {
        const unsigned char* p = data + k * plane_size;
        const bool final = k + 1 == planes;
        const int previous = k == 0 || plane_size == 0 ? -1 : p[-1];
        const bool coded = k < worth_trying.size() && worth_trying[k] && plane_size > 0 &&
                           coder.put(w, p, plane_size, previous, final);
        if (!coded) put_stored(w, p, plane_size, final);
    }
    if (planes == 0) put_stored(w, data, 0, true);
    w.align();
    uLong adler = adler32(0L, Z_NULL, 0);
    for (std::size_t at = 0; at < n;) { // zlib takes at most 4 GiB a call
        const std::size_t part = std::min<std::size_t>(n - at, std::size_t{1} << 30);
        adler = adler32(adler, data + at, static_cast<uInt>(part));
        at += part;
    }
    const auto sum = static_cast<std::uint32_t>(adler);
    const unsigned char tail[4] = {
        static_cast<unsigned char>(sum >> 24), static_cast<unsigned char>(sum >> 16),
        static_cast<unsigned char>(sum >> 8), static_cast<unsigned char>(sum)};
    w.bytes(tail, 4);
    const auto size = static_cast<std::size_t>(w.at() - out.data());
    if (size > bound) throw io_error("deflate_planes: output overran its buffer");
    return size;
}

} // namespace moonwright
