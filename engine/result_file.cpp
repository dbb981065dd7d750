// HDF5 implementation of result_file (HDF5 C++ API, 1.10).
#include "engine/result_file.hpp"

#include "engine/error.hpp"
#include "engine/plane_deflate.hpp"

#include <H5Cpp.h>
#include <algorithm>
#include <array>
#include <bit>
#include <cmath>
#include <cstring>
#include <fmt/format.h>
#include <set>
#include <variant>
#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace moonwright {

namespace {

/// Rows per chunk of an extendible table: big enough to compress well, small enough to flush often.
constexpr hsize_t chunk_rows = 1024;

[[noreturn]] void fail(const std::string& what, const H5::Exception& e) {
    throw io_error(fmt::format("{}: {}", what, e.getDetailMsg()));
}

H5::StrType string_type() {
    H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
    t.setCset(H5T_CSET_UTF8);
    return t;
}

/// The types and dataspace every scalar attribute uses, made once per file.
struct attribute_types {
    H5::StrType text = string_type();
    H5::DataSpace scalar{H5S_SCALAR};
};

/// A scalar string attribute on an object that does not have it yet: a new dataset, or the
/// object set_attribute() found and cleared of the name.
void add_string_attribute(H5::H5Object& obj, const std::string& name, const std::string& value,
                          const attribute_types& types) {
    obj.createAttribute(name, types.text, types.scalar).write(types.text, value);
}

/// HDF5's shuffle of `count` doubles values[0], values[stride], ...: byte b of double i goes
/// to out[b * plane + i] (plane >= count). With SSE2 (every x86-64) 16 doubles at a time are
/// transposed in registers, 128 bytes in about 50 instructions instead of a byte store each.
void shuffle_doubles(const double* values, std::size_t stride, std::size_t count, std::size_t plane,
                     unsigned char* out) {
    std::size_t i = 0;
#if defined(__SSE2__)
    // Four rounds of interleaving (bytes, 16-bit words, 32-bit words, 64-bit halves) take
    // register slot s to output position bitrev4(s), so slot s is loaded with double
    // bitrev4(s) to come out in order.
    static constexpr std::size_t bitrev4[16] = {0, 8, 4, 12, 2, 10, 6, 14,
                                                1, 9, 5, 13, 3, 11, 7, 15};
    for (; i + 16 <= count; i += 16) {
        __m128i r[8], a[8], b[8], c[8];
        for (std::size_t j = 0; j < 8; ++j) {
            const double* lo = values + (i + bitrev4[2 * j]) * stride;
            const double* hi = values + (i + bitrev4[2 * j + 1]) * stride;
            r[j] = _mm_castpd_si128(_mm_loadh_pd(_mm_load_sd(lo), hi));
        }
        for (std::size_t j = 0; j < 4; ++j) {
            a[2 * j] = _mm_unpacklo_epi8(r[j], r[j + 4]);
            a[2 * j + 1] = _mm_unpackhi_epi8(r[j], r[j + 4]);
        }
        for (std::size_t j = 0; j < 4; ++j) {
            b[2 * j] = _mm_unpacklo_epi16(a[j], a[j + 4]);
            b[2 * j + 1] = _mm_unpackhi_epi16(a[j], a[j + 4]);
        }
        for (std::size_t j = 0; j < 2; ++j)
            for (std::size_t h = 0; h < 2; ++h) {
                c[4 * j + 2 * h] = _mm_unpacklo_epi32(b[2 * j + h], b[2 * (j + 2) + h]);
                c[4 * j + 2 * h + 1] = _mm_unpackhi_epi32(b[2 * j + h], b[2 * (j + 2) + h]);
            }
        // c[4j + 2h + u] holds bytes 4h + 2u and 4h + 2u + 1 of half j of the doubles.
        for (std::size_t h = 0; h < 2; ++h)
            for (std::size_t u = 0; u < 2; ++u) {
                const __m128i x = c[2 * h + u], y = c[4 + 2 * h + u];
                const std::size_t byte = 4 * h + 2 * u;
                _mm_storeu_si128(reinterpret_cast<__m128i*>(out + byte * plane + i),
                                 _mm_unpacklo_epi64(x, y));
                _mm_storeu_si128(reinterpret_cast<__m128i*>(out + (byte + 1) * plane + i),
                                 _mm_unpackhi_epi64(x, y));
            }
    }
#endif
    for (; i < count; ++i) {
        unsigned char src[sizeof(double)];
        std::memcpy(src, values + i * stride, sizeof(double));
        for (std::size_t b = 0; b < sizeof(double); ++b) out[b * plane + i] = src[b];
    }
}

/// Shuffles and deflates whole chunks of doubles as HDF5's shuffle and deflate filters would
/// (the same byte planes, a zlib stream any deflate reader decodes), so they can be written
/// with H5Dwrite_chunk. It is faster than the filter pipeline, and than zlib itself on such
/// data:
/// - each byte plane is judged by its byte histogram: a plane whose bytes carry more than
///   7 bits of entropy each and seldom repeat (the low mantissa bytes of most series) would
///   shrink by a few percent at most, and is stored as it is;
/// - the other planes (sign, exponent, the top of the mantissa: runs and few values) are
///   coded by deflate_planes, one block each with Huffman codes made for the plane, or stored
///   when that is smaller. A few instructions a byte; zlib's run-length strategy spent tens,
///   and its blocks mixed the planes' statistics.
class chunk_packer {
  public:
    /// Packs `count` doubles values[0], values[stride], ... (the rest of a chunk of
    /// `chunk_values` is zero). Returns the bytes to write and sets `deflated` (false when
    /// deflate did not make them smaller: the chunk is then stored only shuffled, its deflate
    /// skipped in the chunk's filter mask).
    std::span<const unsigned char> pack(const double* values, std::size_t stride, std::size_t count,
                                        std::size_t chunk_values, bool& deflated) {
        const std::size_t bytes = chunk_values * sizeof(double);
        shuffled_.resize(bytes);
        shuffle_doubles(values, stride, count, chunk_values, shuffled_.data());
        if (count < chunk_values) // the rows past the end are zero
            for (std::size_t b = 0; b < sizeof(double); ++b)
                std::fill(shuffled_.begin() + static_cast<std::ptrdiff_t>(b * chunk_values + count),
                          shuffled_.begin() + static_cast<std::ptrdiff_t>((b + 1) * chunk_values),
                          static_cast<unsigned char>(0));
        worth_.assign(sizeof(double), false);
        for (std::size_t b = 0; b < sizeof(double); ++b)
            worth_[b] = worth_deflating(shuffled_.data() + b * chunk_values, chunk_values);
        const std::size_t size =
            deflate_planes(shuffled_.data(), sizeof(double), chunk_values, worth_, packed_);
        deflated = size < bytes;
        if (!deflated) return {shuffled_.data(), bytes};
        return {packed_.data(), size};
    }

  private:
    /// Whether a byte plane's histogram entropy is at most 7 bits a byte (Shannon's bound
    /// for the Huffman coding of its bytes), or an eighth of its bytes repeat the one before
    /// (runs). Common practice, no source for the thresholds.
    bool worth_deflating(const unsigned char* plane, std::size_t size) {
        if (size != counts_log_.size() - 1) {
            counts_log_.resize(size + 1); // c log2 c for every count c a plane can have
            for (std::size_t c = 1; c <= size; ++c)
                counts_log_[c] = static_cast<double>(c) * std::log2(static_cast<double>(c));
        }
        // Four tables, so runs of one byte (the usual case in the exponent planes) do not
        // wait for each other's increments.
        std::uint32_t counts[4][256] = {};
        std::size_t i = 0;
        for (; i + 4 <= size; i += 4) {
            ++counts[0][plane[i]];
            ++counts[1][plane[i + 1]];
            ++counts[2][plane[i + 2]];
            ++counts[3][plane[i + 3]];
        }
        for (; i < size; ++i) ++counts[0][plane[i]];
        double sum = 0; // sum c log2 c; the entropy in bits is size log2 size - sum
        for (std::size_t c = 0; c < 256; ++c)
            sum += counts_log_[counts[0][c] + counts[1][c] + counts[2][c] + counts[3][c]];
        if (counts_log_[size] - sum <= 7.0 * static_cast<double>(size)) return true;
        // Bytes of any value that often repeat their predecessor (a slowly changing middle
        // byte): deflate takes them in runs.
        std::size_t repeats = 0, j = 1;
#if defined(__SSE2__)
        __m128i total = _mm_setzero_si128();
        for (; j + 16 <= size; j += 16) {
            const __m128i now = _mm_loadu_si128(reinterpret_cast<const __m128i*>(plane + j));
            const __m128i before = _mm_loadu_si128(reinterpret_cast<const __m128i*>(plane + j - 1));
            // 1 in each byte that repeats, summed by groups of eight bytes.
            const __m128i ones = _mm_and_si128(_mm_cmpeq_epi8(now, before), _mm_set1_epi8(1));
            total = _mm_add_epi64(total, _mm_sad_epu8(ones, _mm_setzero_si128()));
        }
        repeats = static_cast<std::size_t>(_mm_cvtsi128_si64(total)) +
                  static_cast<std::size_t>(_mm_cvtsi128_si64(_mm_unpackhi_epi64(total, total)));
#endif
        for (; j < size; ++j) repeats += plane[j] == plane[j - 1] ? 1 : 0;
        return repeats >= size / 8;
    }

    std::vector<unsigned char> shuffled_, packed_;
    std::vector<bool> worth_;
    std::vector<double> counts_log_{0.0};
};

std::string parent_of(const std::string& path) {
    const auto slash = path.find_last_of('/');
    return slash == 0 || slash == std::string::npos ? "/" : path.substr(0, slash);
}

} // namespace

struct result_file::impl {
    std::string path;
    H5::H5File file;
    /// Tables made by create_table() in this session: their chunks, filters and byte order
    /// are known, so whole chunks go to the file directly (append_rows).
    std::set<std::string> fresh_tables;
    std::unique_ptr<chunk_packer> packer;
    /// The table create_table() made last, still open: its first append (the usual next call)
    /// needs no lookup by path.
    std::string last_table_path;
    H5::DataSet last_table;
    attribute_types types;
    /// The object set_attribute() wrote to last, still open: attributes come in runs on one
    /// object (/run, /verdict), so the next one usually needs no lookup by path.
    std::string attribute_path;
    std::variant<H5::Group, H5::DataSet> attribute_holder;
    H5::H5Object* attribute_object = nullptr;

    /// Removes an object (and forgets the objects kept open).
    void unlink(const std::string& object_path) {
        if (object_path == last_table_path) last_table_path.clear(), last_table = H5::DataSet();
        attribute_path.clear(), attribute_object = nullptr, attribute_holder = H5::Group();
        ensured_parent.clear();
        file.unlink(object_path);
    }

    /// The object at `object_path` for set_attribute(), with any attribute `name` removed.
    H5::H5Object& attribute_target(const std::string& object_path, const std::string& name) {
        if (!attribute_object || object_path != attribute_path) {
            attribute_object = nullptr;
            attribute_object = &object(object_path, attribute_holder);
            attribute_path = object_path;
        }
        if (attribute_object->attrExists(name)) attribute_object->removeAttr(name);
        return *attribute_object;
    }

    /// Opens a group or dataset into `holder` and returns it as an object with attributes.
    H5::H5Object& object(const std::string& object_path,
                         std::variant<H5::Group, H5::DataSet>& holder) {
        if (object_path != "/" && file.childObjType(object_path) == H5O_TYPE_DATASET) {
            holder = file.openDataSet(object_path);
            return std::get<H5::DataSet>(holder);
        }
        holder = file.openGroup(object_path);
        return std::get<H5::Group>(holder);
    }
    void ensure_parent(const std::string& dataset_path) {
        const std::string parent = parent_of(dataset_path);
        if (parent == ensured_parent) return; // tables come in runs in one group
        if (parent != "/" && !file.nameExists(parent)) {
            H5::LinkCreatPropList lcpl;
            lcpl.setCreateIntermediateGroup(true);
            file.createGroup(parent, lcpl);
        }
        ensured_parent = parent;
    }
    std::string ensured_parent; ///< the group ensure_parent() found or made last
    /// create_table()'s dataset creation properties (chunks, shuffle, deflate), made once.
    std::unique_ptr<H5::DSetCreatPropList> table_properties;
};

result_file::result_file(const std::string& path, mode m) : impl_(std::make_unique<impl>()) {
    H5::Exception::dontPrint();
    impl_->path = path;
    try {
        switch (m) {
        case mode::create:
            impl_->file = H5::H5File(path, H5F_ACC_TRUNC);
            break;
        case mode::read:
            impl_->file = H5::H5File(path, H5F_ACC_RDONLY);
            break;
        case mode::update:
            impl_->file = H5::H5File(path, H5F_ACC_RDWR);
            break;
        }
    } catch (const H5::Exception& e) {
        fail(fmt::format("cannot open result file '{}'", path), e);
    }
}

result_file::~result_file() = default;
result_file::result_file(result_file&&) noexcept = default;
result_file& result_file::operator=(result_file&&) noexcept = default;

const std::string& result_file::path() const noexcept {
    return impl_->path;
}

void result_file::create_group(const std::string& group_path) {
    try {
        if (impl_->file.nameExists(group_path)) return;
        H5::LinkCreatPropList lcpl;
        lcpl.setCreateIntermediateGroup(true);
        impl_->file.createGroup(group_path, lcpl);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot create group {}", impl_->path, group_path), e);
    }
}

bool result_file::exists(const std::string& object_path) const {
    try {
        return object_path == "/" || impl_->file.nameExists(object_path);
    } catch (const H5::Exception&) {
        return false; // a missing intermediate group
    }
}

void result_file::set_attribute(const std::string& p, const std::string& name,
                                const std::string& value) {
    try {
        add_string_attribute(impl_->attribute_target(p, name), name, value, impl_->types);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot write attribute {}@{}", impl_->path, p, name), e);
    }
}

void result_file::set_attribute(const std::string& p, const std::string& name, double value) {
    try {
        impl_->attribute_target(p, name)
            .createAttribute(name, H5::PredType::NATIVE_DOUBLE, impl_->types.scalar)
            .write(H5::PredType::NATIVE_DOUBLE, &value);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot write attribute {}@{}", impl_->path, p, name), e);
    }
}

void result_file::set_attribute(const std::string& p, const std::string& name, std::int64_t value) {
    try {
        impl_->attribute_target(p, name)
            .createAttribute(name, H5::PredType::NATIVE_INT64, impl_->types.scalar)
            .write(H5::PredType::NATIVE_INT64, &value);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot write attribute {}@{}", impl_->path, p, name), e);
    }
}

bool result_file::has_attribute(const std::string& p, const std::string& name) const {
    try {
        std::variant<H5::Group, H5::DataSet> holder;
        return impl_->object(p, holder).attrExists(name);
    } catch (const H5::Exception&) {
        return false;
    }
}

std::string result_file::string_attribute(const std::string& p, const std::string& name) const {
    try {
        std::variant<H5::Group, H5::DataSet> holder;
        H5::Attribute a = impl_->object(p, holder).openAttribute(name);
        std::string value;
        a.read(a.getStrType(), value);
        return value;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read attribute {}@{}", impl_->path, p, name), e);
    }
}

double result_file::real_attribute(const std::string& p, const std::string& name) const {
    try {
        std::variant<H5::Group, H5::DataSet> holder;
        double v = 0;
        impl_->object(p, holder).openAttribute(name).read(H5::PredType::NATIVE_DOUBLE, &v);
        return v;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read attribute {}@{}", impl_->path, p, name), e);
    }
}

std::int64_t result_file::integer_attribute(const std::string& p, const std::string& name) const {
    try {
        std::variant<H5::Group, H5::DataSet> holder;
        std::int64_t v = 0;
        impl_->object(p, holder).openAttribute(name).read(H5::PredType::NATIVE_INT64, &v);
        return v;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read attribute {}@{}", impl_->path, p, name), e);
    }
}

void result_file::create_table(const std::string& path, std::size_t columns,
                               const std::string& units, const std::string& description,
                               const std::vector<std::string>& column_names) {
    try {
        impl_->ensure_parent(path);
        const hsize_t dims[2] = {0, columns};
        const hsize_t maxdims[2] = {H5S_UNLIMITED, columns};
        H5::DataSpace space(2, dims, maxdims);
        if (!impl_->table_properties) {
            auto plist = std::make_unique<H5::DSetCreatPropList>();
            // One column per chunk: a body's series lies together (it compresses better, and a
            // column of NaN, the star's, to almost nothing).
            const hsize_t chunk[2] = {chunk_rows, 1};
            plist->setChunk(2, chunk);
            plist->setShuffle();
            plist->setDeflate(1);
            plist->setFillTime(H5D_FILL_TIME_NEVER); // every row is written: no zero-filled chunks
            impl_->table_properties = std::move(plist);
        }
        H5::DataSet ds = impl_->file.createDataSet(path, H5::PredType::NATIVE_DOUBLE, space,
                                                   *impl_->table_properties);
        // The chunk writer produces the file's bytes itself: little-endian IEEE doubles.
        if constexpr (std::endian::native == std::endian::little) impl_->fresh_tables.insert(path);
        add_string_attribute(ds, "units", units, impl_->types);
        add_string_attribute(ds, "description", description, impl_->types);
        impl_->last_table_path = path;
        impl_->last_table = ds;
        if (!column_names.empty()) {
            std::string joined;
            for (const auto& n : column_names) joined += (joined.empty() ? "" : ",") + n;
            add_string_attribute(ds, "columns", joined, impl_->types);
        }
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot create table {}", impl_->path, path), e);
    }
}

void result_file::append_rows(const std::string& path, std::span<const double> values) {
    try {
        H5::DataSet ds =
            path == impl_->last_table_path ? impl_->last_table : impl_->file.openDataSet(path);
        hsize_t dims[2];
        ds.getSpace().getSimpleExtentDims(dims);
        if (dims[1] == 0 || values.size() % dims[1] != 0)
            throw io_error(fmt::format("{}: {} values do not fill rows of {} columns", path,
                                       values.size(), dims[1]));
        const hsize_t add = values.size() / dims[1];
        const hsize_t newdims[2] = {dims[0] + add, dims[1]};
        ds.extend(newdims);
        if (add > 0 && dims[0] % chunk_rows == 0 && impl_->fresh_tables.count(path) > 0) {
            // Appending from a chunk boundary to a table made here: write whole chunks, packed
            // as the filters would pack them. A later append into the last, partly filled
            // chunk goes through the filters (which read this chunk back like any other).
            if (!impl_->packer) impl_->packer = std::make_unique<chunk_packer>();
            const std::size_t cols = dims[1];
            for (hsize_t row = 0; row < add; row += chunk_rows)
                for (std::size_t col = 0; col < cols; ++col) {
                    const std::size_t rows = std::min<hsize_t>(chunk_rows, add - row);
                    bool deflated = false;
                    const auto bytes = impl_->packer->pack(values.data() + row * cols + col, cols,
                                                           rows, chunk_rows, deflated);
                    const hsize_t offset[2] = {dims[0] + row, col};
                    const std::uint32_t skipped = deflated ? 0u : 2u; // bit 1: deflate
                    if (H5Dwrite_chunk(ds.getId(), H5P_DEFAULT, skipped, offset, bytes.size(),
                                       bytes.data()) < 0)
                        throw io_error(
                            fmt::format("{}: cannot write a chunk of {}", impl_->path, path));
                }
            return;
        }
        H5::DataSpace file_space = ds.getSpace();
        const hsize_t start[2] = {dims[0], 0};
        const hsize_t count[2] = {add, dims[1]};
        file_space.selectHyperslab(H5S_SELECT_SET, count, start);
        H5::DataSpace mem_space(2, count);
        ds.write(values.data(), H5::PredType::NATIVE_DOUBLE, mem_space, file_space);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot append to {}", impl_->path, path), e);
    }
}

std::size_t result_file::rows(const std::string& path) const {
    try {
        hsize_t dims[2] = {0, 0};
        impl_->file.openDataSet(path).getSpace().getSimpleExtentDims(dims);
        return dims[0];
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read {}", impl_->path, path), e);
    }
}

std::size_t result_file::columns(const std::string& path) const {
    try {
        H5::DataSpace space = impl_->file.openDataSet(path).getSpace();
        hsize_t dims[2] = {0, 1};
        const int rank = space.getSimpleExtentDims(dims);
        return rank >= 2 ? dims[1] : 1;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read {}", impl_->path, path), e);
    }
}

void result_file::truncate_rows(const std::string& path, std::size_t n) {
    try {
        H5::DataSet ds = impl_->file.openDataSet(path);
        H5::DataSpace space = ds.getSpace();
        hsize_t dims[2] = {0, 0};
        const int rank = space.getSimpleExtentDims(dims);
        dims[0] = std::min<hsize_t>(dims[0], n);
        ds.extend(dims);
        (void)rank;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot truncate {}", impl_->path, path), e);
    }
}

void result_file::write_array(const std::string& path, std::span<const double> values,
                              const std::vector<std::size_t>& dims, const std::string& units,
                              const std::string& description) {
    try {
        impl_->ensure_parent(path);
        std::vector<hsize_t> hd(dims.begin(), dims.end());
        H5::DataSpace space(static_cast<int>(hd.size()), hd.data());
        if (impl_->file.nameExists(path)) impl_->unlink(path);
        H5::DataSet ds = impl_->file.createDataSet(path, H5::PredType::NATIVE_DOUBLE, space);
        if (!values.empty()) ds.write(values.data(), H5::PredType::NATIVE_DOUBLE);
        add_string_attribute(ds, "units", units, impl_->types);
        add_string_attribute(ds, "description", description, impl_->types);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot write {}", impl_->path, path), e);
    }
}

std::vector<double> result_file::read_array(const std::string& path) const {
    try {
        H5::DataSet ds = impl_->file.openDataSet(path);
        const auto n = static_cast<std::size_t>(ds.getSpace().getSimpleExtentNpoints());
        std::vector<double> out(n);
        if (n > 0) ds.read(out.data(), H5::PredType::NATIVE_DOUBLE);
        return out;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read {}", impl_->path, path), e);
    }
}

void result_file::write_text(const std::string& path, const std::string& text,
                             const std::string& description) {
    try {
        impl_->ensure_parent(path);
        if (impl_->file.nameExists(path)) impl_->unlink(path);
        // A fixed-length UTF-8 string of the text's size: a variable-length one goes through
        // HDF5's global heap, which cost a tenth of a run file's instructions.
        H5::StrType fixed(H5::PredType::C_S1, std::max<std::size_t>(text.size(), 1));
        fixed.setCset(H5T_CSET_UTF8);
        fixed.setStrpad(H5T_STR_NULLPAD);
        H5::DataSet ds = impl_->file.createDataSet(path, fixed, H5::DataSpace(H5S_SCALAR));
        ds.write(text.empty() ? std::string(1, '\0') : text, fixed);
        add_string_attribute(ds, "units", "", impl_->types);
        add_string_attribute(ds, "description", description, impl_->types);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot write {}", impl_->path, path), e);
    }
}

std::string result_file::read_text(const std::string& path) const {
    try {
        H5::DataSet ds = impl_->file.openDataSet(path);
        std::string text;
        ds.read(text, ds.getStrType());
        return text;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read {}", impl_->path, path), e);
    }
}

namespace {
/// Compound layout for record fields: doubles, 64-bit integers, fixed-width NUL-padded text.
H5::CompType compound_for(const std::vector<record_field>& fields) {
    std::size_t size = 0;
    for (const auto& f : fields) size += f.kind == record_field::type::text ? f.text_size : 8;
    H5::CompType t(size);
    std::size_t offset = 0;
    for (const auto& f : fields) {
        switch (f.kind) {
        case record_field::type::real:
            t.insertMember(f.name, offset, H5::PredType::NATIVE_DOUBLE);
            offset += 8;
            break;
        case record_field::type::integer:
            t.insertMember(f.name, offset, H5::PredType::NATIVE_INT64);
            offset += 8;
            break;
        case record_field::type::text: {
            H5::StrType s(H5::PredType::C_S1, f.text_size);
            s.setStrpad(H5T_STR_NULLPAD);
            t.insertMember(f.name, offset, s);
            offset += f.text_size;
            break;
        }
        }
    }
    return t;
}

struct member {
    std::size_t offset, size;
    H5T_class_t cls;
};
std::vector<member> members_of(const H5::CompType& t) {
    std::vector<member> out;
    for (int k = 0; k < t.getNmembers(); ++k) {
        const auto u = static_cast<unsigned>(k);
        out.push_back(
            {t.getMemberOffset(u), t.getMemberDataType(u).getSize(), t.getMemberClass(u)});
    }
    return out;
}
} // namespace

void result_file::create_record_table(const std::string& path,
                                      const std::vector<record_field>& fields,
                                      const std::string& description) {
    try {
        impl_->ensure_parent(path);
        const hsize_t dims[1] = {0};
        const hsize_t maxdims[1] = {H5S_UNLIMITED};
        H5::DataSpace space(1, dims, maxdims);
        H5::DSetCreatPropList plist;
        const hsize_t chunk[1] = {64};
        plist.setChunk(1, chunk);
        plist.setDeflate(4);
        H5::DataSet ds = impl_->file.createDataSet(path, compound_for(fields), space, plist);
        std::string units;
        for (const auto& f : fields)
            units += fmt::format("{}{}: {}", units.empty() ? "" : "; ", f.name,
                                 f.units.empty() ? "-" : f.units);
        add_string_attribute(ds, "units", units, impl_->types);
        add_string_attribute(ds, "description", description, impl_->types);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot create table {}", impl_->path, path), e);
    }
}

void result_file::append_record(const std::string& path, const std::vector<record_value>& values) {
    append_records(path, {values});
}

void result_file::append_records(const std::string& path,
                                 const std::vector<std::vector<record_value>>& records) {
    if (records.empty()) return;
    try {
        H5::DataSet ds = impl_->file.openDataSet(path);
        const H5::CompType type = ds.getCompType();
        const auto mem = members_of(type);
        const std::size_t size = type.getSize();
        std::vector<char> buffer(size * records.size(), '\0');
        for (std::size_t r = 0; r < records.size(); ++r) {
            const std::vector<record_value>& values = records[r];
            if (mem.size() != values.size())
                throw io_error(
                    fmt::format("{}: {} values for {} fields", path, values.size(), mem.size()));
            for (std::size_t k = 0; k < mem.size(); ++k) {
                char* at = buffer.data() + r * size + mem[k].offset;
                if (mem[k].cls == H5T_FLOAT) {
                    const double v = std::get<double>(values[k]);
                    std::memcpy(at, &v, 8);
                } else if (mem[k].cls == H5T_INTEGER) {
                    const std::int64_t v = std::get<std::int64_t>(values[k]);
                    std::memcpy(at, &v, 8);
                } else {
                    const std::string& s = std::get<std::string>(values[k]);
                    std::memcpy(at, s.data(), std::min(s.size(), mem[k].size));
                }
            }
        }
        hsize_t dims[1];
        ds.getSpace().getSimpleExtentDims(dims);
        const hsize_t newdims[1] = {dims[0] + records.size()};
        ds.extend(newdims);
        H5::DataSpace file_space = ds.getSpace();
        const hsize_t start[1] = {dims[0]};
        const hsize_t count[1] = {records.size()};
        file_space.selectHyperslab(H5S_SELECT_SET, count, start);
        H5::DataSpace mem_space(1, count);
        ds.write(buffer.data(), type, mem_space, file_space);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot append to {}", impl_->path, path), e);
    } catch (const std::bad_variant_access&) {
        throw io_error(fmt::format("{}: a value does not match its field's type", path));
    }
}

std::vector<std::vector<record_value>> result_file::read_records(const std::string& path) const {
    try {
        H5::DataSet ds = impl_->file.openDataSet(path);
        const H5::CompType type = ds.getCompType();
        const auto mem = members_of(type);
        hsize_t dims[1];
        ds.getSpace().getSimpleExtentDims(dims);
        std::vector<char> buffer(type.getSize() * dims[0]);
        if (dims[0] > 0) ds.read(buffer.data(), type);
        std::vector<std::vector<record_value>> out;
        for (hsize_t r = 0; r < dims[0]; ++r) {
            const char* row = buffer.data() + r * type.getSize();
            std::vector<record_value> rec;
            for (const auto& m : mem) {
                if (m.cls == H5T_FLOAT) {
                    double v;
                    std::memcpy(&v, row + m.offset, 8);
                    rec.emplace_back(v);
                } else if (m.cls == H5T_INTEGER) {
                    std::int64_t v;
                    std::memcpy(&v, row + m.offset, 8);
                    rec.emplace_back(v);
                } else {
                    std::string s(row + m.offset, m.size);
                    s.resize(std::strlen(s.c_str()));
                    rec.emplace_back(std::move(s));
                }
            }
            out.push_back(std::move(rec));
        }
        return out;
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot read {}", impl_->path, path), e);
    }
}

void result_file::flush() {
    try {
        impl_->file.flush(H5F_SCOPE_GLOBAL);
    } catch (const H5::Exception& e) {
        fail(fmt::format("{}: cannot flush", impl_->path), e);
    }
}

} // namespace moonwright
