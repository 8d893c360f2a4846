// The two-stage pipeline that overlaps classify's reading and labelling
// (src/pipeline.hpp): order, recycling of items, and errors from either side.
#include <doctest/doctest.h>

#include <set>
#include <stdexcept>
#include <vector>

#include "pipeline.hpp"

using isohypse::detail::two_stage_pipeline;

namespace {
struct Item {
  int value = -1;
  std::vector<double> buffer;
};
}  // namespace

TEST_CASE("pipeline: every item arrives once and in order, and at most depth item objects are used") {
  std::vector<int> seen;
  std::set<const Item*> objects;
  two_stage_pipeline<Item>(
      3,
      [](auto& emit) {
        for (int i = 0; i < 200; ++i)
          CHECK(emit([&](Item& it) {
            it.value = i;
            it.buffer.assign(100, i);
          }));
      },
      [&](const Item& it) {
        seen.push_back(it.value);
        objects.insert(&it);
        CHECK(it.buffer.size() == 100);
        CHECK(it.buffer.back() == it.value);
      });
  REQUIRE(seen.size() == 200);
  for (int i = 0; i < 200; ++i) CHECK(seen[static_cast<std::size_t>(i)] == i);
  CHECK(objects.size() <= 3);
}

TEST_CASE("pipeline: a producer error reaches the caller after the items before it") {
  std::vector<int> seen;
  CHECK_THROWS_WITH_AS(two_stage_pipeline<Item>(
                           2,
                           [](auto& emit) {
                             for (int i = 0; i < 5; ++i) emit([&](Item& it) { it.value = i; });
                             throw std::runtime_error("file.nc: truncated");
                           },
                           [&](const Item& it) { seen.push_back(it.value); }),
                       "file.nc: truncated", std::runtime_error);
  CHECK(seen.size() <= 5);
  for (std::size_t i = 0; i < seen.size(); ++i) CHECK(seen[i] == static_cast<int>(i));
}

TEST_CASE("pipeline: a consumer error stops the producer and is the one reported") {
  int emitted = 0;
  bool refused = false;
  CHECK_THROWS_WITH_AS(two_stage_pipeline<Item>(
                           2,
                           [&](auto& emit) {
                             for (int i = 0; i < 100000; ++i) {
                               if (!emit([&](Item& it) { it.value = i; })) {
                                 refused = true;
                                 return;
                               }
                               ++emitted;
                             }
                           },
                           [](const Item& it) {
                             if (it.value == 3) throw std::invalid_argument("member 3: NaN");
                           }),
                       "member 3: NaN", std::invalid_argument);
  CHECK(refused);
  CHECK(emitted < 100000);
}

TEST_CASE("pipeline: nothing produced, nothing consumed") {
  int consumed = 0;
  two_stage_pipeline<Item>(4, [](auto&) {}, [&](const Item&) { ++consumed; });
  CHECK(consumed == 0);
}
