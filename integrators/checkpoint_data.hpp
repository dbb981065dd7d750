// Writing and reading the opaque checkpoint vectors of the integrators: a leading tag, version,
// kind and body count, then fields in a fixed order; every read is checked.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace moonwright {

/// Integrator kinds in a checkpoint's header.
enum class checkpoint_kind : int {
    wisdom_holman = 1,
    gauss_radau = 2,
    bulirsch_stoer = 3,
    rkf78 = 4
};

/// Appends fields to a checkpoint. Counts and flags are stored as exact doubles (< 2^53).
class checkpoint_writer {
  public:
    /// Starts with the header: tag, format version, kind, number of bodies.
    checkpoint_writer(checkpoint_kind kind, std::size_t bodies);
    void put(double x) { data_.push_back(x); }
    void put_count(std::size_t k) { data_.push_back(static_cast<double>(k)); }
    void put_flag(bool b) { data_.push_back(b ? 1.0 : 0.0); }
    /// Writes the length, then the values.
    void put_vector(const std::vector<double>& x);
    /// Appends the total length and returns the data.
    [[nodiscard]] std::vector<double> finish();

  private:
    std::vector<double> data_;
};

/// Reads what checkpoint_writer wrote; throws input_error (file "<checkpoint>", the field,
/// what was found, what was expected) when the data do not fit.
class checkpoint_reader {
  public:
    /// Checks the header (tag, version, kind, bodies) and the trailing total length.
    checkpoint_reader(const std::vector<double>& data, checkpoint_kind kind, std::size_t bodies);
    double get(const char* field);
    std::size_t get_count(const char* field);
    bool get_flag(const char* field);
    /// Reads a vector written by put_vector; its length must be `expected`.
    void get_vector(const char* field, std::vector<double>& out, std::size_t expected);
    /// Checks that every field was read.
    void finish() const;

  private:
    [[noreturn]] void fail(const std::string& field, const std::string& found,
                           const std::string& expected) const;
    const std::vector<double>& data_;
    std::size_t pos_ = 0, end_ = 0;
};

} // namespace moonwright
