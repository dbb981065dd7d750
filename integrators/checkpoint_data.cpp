// Checked serialisation of integrator checkpoints into vectors of doubles.
#include "integrators/checkpoint_data.hpp"

#include "engine/error.hpp"

#include <cmath>

namespace moonwright {

namespace {
/// Leading tag of every integrator checkpoint (an arbitrary exact double), and the format.
constexpr double checkpoint_tag = 7306079.0;
constexpr double checkpoint_version = 1.0;

std::string number(double x) {
    std::string s = std::to_string(x);
    return s;
}
} // namespace

checkpoint_writer::checkpoint_writer(checkpoint_kind kind, std::size_t bodies) {
    data_ = {checkpoint_tag, checkpoint_version, static_cast<double>(static_cast<int>(kind)),
             static_cast<double>(bodies)};
}

void checkpoint_writer::put_vector(const std::vector<double>& x) {
    put_count(x.size());
    data_.insert(data_.end(), x.begin(), x.end());
}

std::vector<double> checkpoint_writer::finish() {
    data_.push_back(static_cast<double>(data_.size() + 1));
    return std::move(data_);
}

checkpoint_reader::checkpoint_reader(const std::vector<double>& data, checkpoint_kind kind,
                                     std::size_t bodies)
    : data_(data) {
    if (data_.size() < 5 || data_[0] != checkpoint_tag)
        fail("tag", data_.empty() ? "no data" : number(data_[0]), "an integrator checkpoint");
    if (data_[1] != checkpoint_version)
        fail("version", number(data_[1]), number(checkpoint_version));
    if (data_[2] != static_cast<double>(static_cast<int>(kind)))
        fail("kind", number(data_[2]), std::to_string(static_cast<int>(kind)));
    if (data_[3] != static_cast<double>(bodies))
        fail("bodies", number(data_[3]), std::to_string(bodies));
    if (data_.back() != static_cast<double>(data_.size()))
        fail("length", std::to_string(data_.size()), number(data_.back()));
    pos_ = 4;
    end_ = data_.size() - 1;
}

void checkpoint_reader::fail(const std::string& field, const std::string& found,
                             const std::string& expected) const {
    throw input_error(source_location{"<checkpoint>", 0, 0}, "checkpoint." + field, found,
                      expected);
}

double checkpoint_reader::get(const char* field) {
    if (pos_ >= end_) fail(field, "end of data", "a value");
    return data_[pos_++];
}

std::size_t checkpoint_reader::get_count(const char* field) {
    const double x = get(field);
    if (!(x >= 0) || x != std::floor(x) || x > 9007199254740992.0)
        fail(field, number(x), "a count");
    return static_cast<std::size_t>(x);
}

bool checkpoint_reader::get_flag(const char* field) {
    const double x = get(field);
    if (x != 0.0 && x != 1.0) fail(field, number(x), "0 or 1");
    return x == 1.0;
}

void checkpoint_reader::get_vector(const char* field, std::vector<double>& out,
                                   std::size_t expected) {
    const std::size_t k = get_count(field);
    if (k != expected) fail(field, std::to_string(k) + " values", std::to_string(expected));
    if (end_ - pos_ < k) fail(field, "end of data", std::to_string(k) + " values");
    out.assign(data_.begin() + static_cast<std::ptrdiff_t>(pos_),
               data_.begin() + static_cast<std::ptrdiff_t>(pos_ + k));
    pos_ += k;
}

void checkpoint_reader::finish() const {
    if (pos_ != end_)
        fail("length", std::to_string(end_ - pos_) + " values left", "no values left");
}

} // namespace moonwright
