// Helpers shared by the resampling functions of the numerics layer (private):
// an integer draw and a quantile that are the same on every standard library.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <random>
#include <vector>

namespace isohypse::resampling {

// Uniform integer in [0, n) by rejection: unbiased, and unlike
// std::uniform_int_distribution the same on every standard library. n > 0.
inline std::uint64_t uniform_below(std::mt19937_64& rng, std::uint64_t n) {
  const std::uint64_t limit = std::numeric_limits<std::uint64_t>::max() - std::numeric_limits<std::uint64_t>::max() % n;
  std::uint64_t u;
  do {
    u = rng();
  } while (u >= limit);
  return u % n;
}

// Quantile q in [0, 1] of sorted, non-empty values with linear interpolation
// (Hyndman & Fan 1996 type 7, numpy's default).
inline double sorted_quantile(const std::vector<double>& sorted, double q) {
  const double h = q * static_cast<double>(sorted.size() - 1);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, sorted.size() - 1);
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
}

}  // namespace isohypse::resampling
