// Wall time of a run's steps, one lap after another (for --timings, the
// model's provenance.timings_s and debug logs). Header-only.
#pragma once

#include <chrono>

namespace isohypse {

class Stopwatch {
public:
  // Seconds since the previous lap (or the start); starts the next lap.
  double lap() {
    const auto now = Clock::now();
    const double s = std::chrono::duration<double>(now - last_).count();
    last_ = now;
    return s;
  }
  // Seconds since the start.
  double total() const { return std::chrono::duration<double>(Clock::now() - start_).count(); }

private:
  using Clock = std::chrono::steady_clock;
  Clock::time_point start_ = Clock::now(), last_ = start_;
};

}  // namespace isohypse
