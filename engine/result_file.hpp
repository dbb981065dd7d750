// Result files in HDF5: groups, attributes, extendible chunked and compressed tables, fixed
// arrays, texts and record tables. Every dataset carries `units` and `description` attributes.
// Only result_file.cpp includes the HDF5 headers; the rest of moonwright sees this class.
#pragma once

#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <variant>
#include <vector>

namespace moonwright {

/// One field of a record table (e.g. the event table).
struct record_field {
    enum class type { real, integer, text };
    std::string name;
    type kind = type::real;
    std::string units;          ///< "1" for dimensionless, "" for text
    std::size_t text_size = 48; ///< fixed width of a text field in bytes (longer text is cut)
};
using record_value = std::variant<double, std::int64_t, std::string>;

class result_file {
  public:
    enum class mode { create, read, update };
    /// Opens a file; `create` truncates. Throws io_error when it cannot.
    result_file(const std::string& path, mode m);
    ~result_file();
    result_file(result_file&&) noexcept;
    result_file& operator=(result_file&&) noexcept;
    result_file(const result_file&) = delete;
    result_file& operator=(const result_file&) = delete;

    [[nodiscard]] const std::string& path() const noexcept;
    /// Creates a group and its missing parents ("/a/b/c").
    void create_group(const std::string& group_path);
    [[nodiscard]] bool exists(const std::string& object_path) const;

    /// Attributes on a group or dataset (replaced when they exist).
    void set_attribute(const std::string& object_path, const std::string& name,
                       const std::string& value);
    void set_attribute(const std::string& object_path, const std::string& name, double value);
    void set_attribute(const std::string& object_path, const std::string& name, std::int64_t value);
    [[nodiscard]] std::string string_attribute(const std::string& object_path,
                                               const std::string& name) const;
    [[nodiscard]] double real_attribute(const std::string& object_path,
                                        const std::string& name) const;
    [[nodiscard]] std::int64_t integer_attribute(const std::string& object_path,
                                                 const std::string& name) const;
    [[nodiscard]] bool has_attribute(const std::string& object_path, const std::string& name) const;

    /// An extendible 2-D table of doubles (rows grow, `columns` fixed), chunked, shuffled and
    /// deflated. `column_names` (optional) are stored as the attribute `columns` (comma
    /// separated).
    void create_table(const std::string& path, std::size_t columns, const std::string& units,
                      const std::string& description,
                      const std::vector<std::string>& column_names = {});
    /// Appends rows; `values.size()` must be a multiple of the table's column count.
    void append_rows(const std::string& path, std::span<const double> values);
    /// Number of rows and columns of a table or 2-D array.
    [[nodiscard]] std::size_t rows(const std::string& path) const;
    [[nodiscard]] std::size_t columns(const std::string& path) const;
    /// Cuts a table back to `rows` rows (used when a run resumes from a checkpoint).
    void truncate_rows(const std::string& path, std::size_t rows);

    /// A fixed array of doubles with shape `dims` (1-D or 2-D).
    void write_array(const std::string& path, std::span<const double> values,
                     const std::vector<std::size_t>& dims, const std::string& units,
                     const std::string& description);
    /// Reads a table or array of doubles, row-major.
    [[nodiscard]] std::vector<double> read_array(const std::string& path) const;

    /// A text dataset (e.g. the original design file).
    void write_text(const std::string& path, const std::string& text,
                    const std::string& description);
    [[nodiscard]] std::string read_text(const std::string& path) const;

    /// An extendible table of records (compound type) with the given fields.
    void create_record_table(const std::string& path, const std::vector<record_field>& fields,
                             const std::string& description);
    void append_record(const std::string& path, const std::vector<record_value>& values);
    /// Appends many records in one write (one chunk compression instead of one per record).
    void append_records(const std::string& path,
                        const std::vector<std::vector<record_value>>& records);
    [[nodiscard]] std::vector<std::vector<record_value>>
    read_records(const std::string& path) const;

    /// Pushes buffered data to disk.
    void flush();

  private:
    struct impl;
    std::unique_ptr<impl> impl_;
};

} // namespace moonwright
