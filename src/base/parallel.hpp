// Internal: a minimal parallel loop for independent, seeded units of work
// (k-means restarts, classifiability runs). Which thread runs a unit never
// changes its result: every unit derives its own random stream.
#pragma once

#include <algorithm>
#include <atomic>
#include <condition_variable>
#include <cstddef>
#include <exception>
#include <functional>
#include <memory>
#include <mutex>
#include <thread>
#include <vector>

namespace isohypse::detail {

// requested > 0: that many; 0: the hardware's; never more than the units.
inline int resolve_threads(int requested, std::size_t units) {
  int t = requested > 0 ? requested : static_cast<int>(std::thread::hardware_concurrency());
  t = std::max(t, 1);
  return static_cast<int>(std::min<std::size_t>(static_cast<std::size_t>(t), std::max<std::size_t>(units, 1)));
}

// Runs task(i) for every i in [0, n) on `threads` threads (see
// resolve_threads). progress(done, n), if set, is called from the calling
// thread after each finished unit. The first exception (from a task or from
// progress) stops the remaining units and is rethrown here.
template <class Task>
void parallel_for(std::size_t n, int threads, Task&& task,
                  const std::function<void(std::size_t, std::size_t)>& progress = {}) {
  const int nt = resolve_threads(threads, n);
  if (nt == 1) {
    for (std::size_t i = 0; i < n; ++i) {
      task(i);
      if (progress) progress(i + 1, n);
    }
    return;
  }
  std::atomic<std::size_t> next{0};
  std::mutex m;
  std::condition_variable cv;
  std::size_t done = 0;
  int finished = 0;
  std::exception_ptr error;
  auto fail = [&](std::exception_ptr e) {  // caller holds m
    if (!error) error = e;
    next.store(n);
  };
  auto worker = [&] {
    for (std::size_t i; (i = next.fetch_add(1)) < n;) {
      std::exception_ptr e;
      try {
        task(i);
      } catch (...) {
        e = std::current_exception();
      }
      std::lock_guard<std::mutex> lock(m);
      if (e) fail(e);
      else ++done;
      cv.notify_all();
    }
    std::lock_guard<std::mutex> lock(m);
    ++finished;
    cv.notify_all();
  };
  std::vector<std::thread> pool;
  pool.reserve(static_cast<std::size_t>(nt));
  for (int t = 0; t < nt; ++t) pool.emplace_back(worker);
  {
    std::unique_lock<std::mutex> lock(m);
    std::size_t reported = 0;
    while (true) {
      cv.wait(lock, [&] { return (done > reported && !error) || finished == nt; });
      while (reported < done && !error) {
        const std::size_t now = ++reported;
        if (!progress) continue;
        lock.unlock();
        std::exception_ptr e;
        try {
          progress(now, n);
        } catch (...) {
          e = std::current_exception();
        }
        lock.lock();
        if (e) fail(e);
      }
      if (finished == nt) break;
    }
  }
  for (auto& t : pool) t.join();
  if (error) std::rethrow_exception(error);
}

// Per-thread state for parallel_for's tasks (buffers to reuse): lease()
// hands a task a state no other running task holds, made on first need, so
// there are at most as many as tasks ever ran at once; the lease gives it
// back when it ends, whatever way the task leaves.
template <class State>
class StatePool {
public:
  explicit StatePool(std::function<std::unique_ptr<State>()> make) : make_(std::move(make)) {}

  class Lease {
  public:
    Lease(StatePool& pool, State* s) : pool_(pool), state_(s) {}
    Lease(const Lease&) = delete;
    Lease& operator=(const Lease&) = delete;
    ~Lease() {
      std::lock_guard<std::mutex> lock(pool_.m_);
      pool_.idle_.push_back(state_);
    }
    State& operator*() const { return *state_; }
    State* operator->() const { return state_; }

  private:
    StatePool& pool_;
    State* state_;
  };

  Lease lease() {
    std::lock_guard<std::mutex> lock(m_);
    if (idle_.empty()) {
      all_.push_back(make_());
      return Lease(*this, all_.back().get());
    }
    State* s = idle_.back();
    idle_.pop_back();
    return Lease(*this, s);
  }
  // Every state made (call when no task runs).
  const std::vector<std::unique_ptr<State>>& all() const { return all_; }

private:
  std::function<std::unique_ptr<State>()> make_;
  std::mutex m_;
  std::vector<std::unique_ptr<State>> all_;
  std::vector<State*> idle_;
};

}  // namespace isohypse::detail
