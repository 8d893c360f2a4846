// The parallel loop and the per-thread state pool (src/numerics_parallel.hpp)
// that classify's members and derive's k-means units run on.
#include <doctest/doctest.h>

#include <atomic>
#include <set>
#include <stdexcept>
#include <vector>

#include "base/parallel.hpp"

using isohypse::detail::parallel_for;
using isohypse::detail::StatePool;

namespace {
struct Buffers {
  std::vector<double> scratch;
  std::atomic<int> holders{0};
  int tasks = 0;
};
}  // namespace

TEST_CASE("state pool: a state serves one task at a time and is reused") {
  StatePool<Buffers> pool([] { return std::make_unique<Buffers>(); });
  std::vector<int> done(500, 0);
  std::atomic<bool> shared{false};
  parallel_for(done.size(), 2, [&](std::size_t i) {
    const auto b = pool.lease();
    if (b->holders.fetch_add(1) != 0) shared = true;
    b->scratch.assign(64, static_cast<double>(i));
    for (double x : b->scratch)
      if (x != static_cast<double>(i)) shared = true;  // another task wrote into it meanwhile
    ++b->tasks;
    done[i] = 1;
    b->holders.fetch_sub(1);
  });
  CHECK_FALSE(shared.load());
  for (int d : done) CHECK(d == 1);
  CHECK(pool.all().size() >= 1);
  CHECK(pool.all().size() <= 2);  // never more states than tasks at once
  int tasks = 0;
  for (const auto& b : pool.all()) tasks += b->tasks;
  CHECK(tasks == 500);
}

TEST_CASE("state pool: a task that throws gives its state back") {
  StatePool<Buffers> pool([] { return std::make_unique<Buffers>(); });
  CHECK_THROWS_AS(parallel_for(10, 1,
                               [&](std::size_t i) {
                                 const auto b = pool.lease();
                                 if (i == 3) throw std::runtime_error("member 3");
                               }),
                  std::runtime_error);
  const auto again = pool.lease();  // the one state is free again, not a second one
  CHECK(pool.all().size() == 1);
}
