// A small, portable, seedable random number generator: identical streams on every platform,
// unlike std:: distributions whose algorithms differ between standard libraries.
#pragma once

#include <cmath>
#include <cstdint>

namespace moonwright {

/// splitmix64 (Steele, Lea & Flood 2014): used to seed and to derive independent sub-seeds.
inline std::uint64_t splitmix64(std::uint64_t& state) {
    std::uint64_t z = (state += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

/// Derives a seed for a sub-task (design id, clone index, ...) from a parent seed.
inline std::uint64_t derive_seed(std::uint64_t seed, std::uint64_t a, std::uint64_t b = 0) {
    std::uint64_t s = seed ^ (a * 0xd1b54a32d192ed03ULL) ^ (b * 0x8cb92ba72f3d8dd7ULL);
    return splitmix64(s);
}

/// xoshiro256** (Blackman & Vigna 2018). State is four words, so it checkpoints easily.
class rng {
  public:
    explicit rng(std::uint64_t seed = 1) { reseed(seed); }
    void reseed(std::uint64_t seed) {
        std::uint64_t sm = seed;
        for (auto& w : s_) w = splitmix64(sm);
    }
    std::uint64_t next() {
        const std::uint64_t result = rotl(s_[1] * 5, 7) * 9;
        const std::uint64_t t = s_[1] << 17;
        s_[2] ^= s_[0];
        s_[3] ^= s_[1];
        s_[1] ^= s_[2];
        s_[0] ^= s_[3];
        s_[2] ^= t;
        s_[3] = rotl(s_[3], 45);
        return result;
    }
    /// Uniform in [0, 1) with 53 random bits.
    double uniform() { return static_cast<double>(next() >> 11) * 0x1.0p-53; }
    /// Uniform in [lo, hi).
    double uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }
    /// Standard normal by Box–Muller (portable, unlike std::normal_distribution).
    double normal() {
        double u1 = uniform();
        while (u1 <= 0.0) u1 = uniform();
        const double u2 = uniform();
        return std::sqrt(-2.0 * std::log(u1)) * std::cos(6.283185307179586 * u2);
    }
    const std::uint64_t* state() const { return s_; }
    void set_state(const std::uint64_t st[4]) {
        for (int i = 0; i < 4; ++i) s_[i] = st[i];
    }

  private:
    static std::uint64_t rotl(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }
    std::uint64_t s_[4]{};
};

} // namespace moonwright
