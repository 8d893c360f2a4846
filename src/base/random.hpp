// Internal: the random numbers behind the EOF test matrices, k-means seeding
// and red-noise surrogates. Own generators (not <random>'s distributions,
// whose output the C++ standard leaves to the library) so that a seed gives
// the same numbers with any standard library and any thread count.
#pragma once

#include <cmath>
#include <cstdint>
#include <initializer_list>

namespace isohypse::detail {

// splitmix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number
// generators"): one step of the generator; also a good 64-bit mixer.
inline std::uint64_t splitmix64(std::uint64_t& state) {
  std::uint64_t z = (state += 0x9E3779B97F4A7C15ULL);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
  return z ^ (z >> 31);
}

// A seed for an independent stream identified by `ids` (restart index, run,
// k, ...), derived from the user's seed: equal inputs give equal streams,
// whatever thread runs them.
inline std::uint64_t derive_seed(std::uint64_t seed, std::initializer_list<std::uint64_t> ids) {
  std::uint64_t state = seed;
  std::uint64_t h = splitmix64(state);
  for (std::uint64_t id : ids) {
    state = h ^ (id + 0x632BE59BD9B4E019ULL);
    h = splitmix64(state);
  }
  return h;
}

// xoshiro256** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number
// generators"), state filled by splitmix64 as its authors recommend.
class Rng {
public:
  explicit Rng(std::uint64_t seed) {
    for (auto& w : s_) w = splitmix64(seed);
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

  // Uniform in [0, 1) with 53 random bits.
  double uniform() { return static_cast<double>(next() >> 11) * 0x1.0p-53; }

  // Uniform integer in [0, n), n > 0 (Lemire's multiply-shift; the bias is
  // below 2^-40 for the sizes used here).
  std::uint64_t below(std::uint64_t n) {
    return static_cast<std::uint64_t>((static_cast<unsigned __int128>(next()) * n) >> 64);
  }

  // Standard normal, Box & Muller (1958) transform.
  double normal() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    const double u1 = 1.0 - uniform();  // in (0, 1]: log stays finite
    const double u2 = uniform();
    const double r = std::sqrt(-2.0 * std::log(u1));
    const double a = 6.283185307179586 * u2;
    spare_ = r * std::sin(a);
    has_spare_ = true;
    return r * std::cos(a);
  }

private:
  static std::uint64_t rotl(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }
  std::uint64_t s_[4];
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace isohypse::detail
