// Internal: a two-stage pipeline. produce(emit) runs on a second thread and
// hands items to consume(item), which runs on the calling thread, with at
// most `depth` items in flight; the item objects are recycled, so their
// buffers are allocated once. Classify reads the next member from its file
// (netCDF-C, one thread only) while the previous one is projected.
//
// emit(fill) takes a free item, calls fill(item) and queues it; it returns
// false when the consumer has stopped (the producer should then return).
// The first exception on either side stops both and is rethrown here.
#pragma once

#include <algorithm>
#include <condition_variable>
#include <cstddef>
#include <deque>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace isohypse::detail {

template <class Item, class Produce, class Consume>
void two_stage_pipeline(std::size_t depth, Produce&& produce, Consume&& consume) {
  std::vector<Item> items(std::max<std::size_t>(depth, 1));
  std::deque<Item*> free_items, full_items;
  for (auto& it : items) free_items.push_back(&it);
  std::mutex m;
  std::condition_variable changed;
  bool produced_all = false, stop = false;
  std::exception_ptr producer_error;

  auto emit = [&](auto&& fill) -> bool {
    Item* it = nullptr;
    {
      std::unique_lock<std::mutex> lock(m);
      changed.wait(lock, [&] { return stop || !free_items.empty(); });
      if (stop) return false;
      it = free_items.front();
      free_items.pop_front();
    }
    fill(*it);
    {
      std::lock_guard<std::mutex> lock(m);
      full_items.push_back(it);
    }
    changed.notify_all();
    return true;
  };
  std::thread producer([&] {
    try {
      produce(emit);
    } catch (...) {
      std::lock_guard<std::mutex> lock(m);
      producer_error = std::current_exception();
    }
    {
      std::lock_guard<std::mutex> lock(m);
      produced_all = true;
    }
    changed.notify_all();
  });

  std::exception_ptr consumer_error;
  try {
    for (;;) {
      Item* it = nullptr;
      {
        std::unique_lock<std::mutex> lock(m);
        changed.wait(lock, [&] { return !full_items.empty() || produced_all; });
        if (full_items.empty() || producer_error) break;  // the producer has finished or failed
        it = full_items.front();
        full_items.pop_front();
      }
      consume(*it);
      {
        std::lock_guard<std::mutex> lock(m);
        free_items.push_back(it);
      }
      changed.notify_all();
    }
  } catch (...) {
    consumer_error = std::current_exception();
  }
  {
    std::lock_guard<std::mutex> lock(m);
    stop = true;
  }
  changed.notify_all();
  producer.join();
  if (consumer_error) std::rethrow_exception(consumer_error);  // the producer then only saw the stop
  if (producer_error) std::rethrow_exception(producer_error);
}

}  // namespace isohypse::detail
