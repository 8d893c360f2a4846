// Internal: OpenBLAS's thread count, set for a scope and restored after.
// Many small products (classify projects one member of 46 days at a time)
// run faster on one thread: OpenBLAS otherwise wakes its pool for each call
// and the idle threads spin in sched_yield. Looked up at run time, so this is
// a no-op with any other BLAS (reference BLAS, BLIS), which Debian's
// alternatives may provide instead.
#pragma once

#include <dlfcn.h>

namespace isohypse::detail {

class ScopedBlasThreads {
public:
  explicit ScopedBlasThreads(int threads) {
    set_ = reinterpret_cast<void (*)(int)>(dlsym(RTLD_DEFAULT, "openblas_set_num_threads"));
    auto get = reinterpret_cast<int (*)()>(dlsym(RTLD_DEFAULT, "openblas_get_num_threads"));
    if (!set_ || !get) return;
    previous_ = get();
    set_(threads);
  }
  ~ScopedBlasThreads() {
    if (set_ && previous_ > 0) set_(previous_);
  }
  ScopedBlasThreads(const ScopedBlasThreads&) = delete;
  ScopedBlasThreads& operator=(const ScopedBlasThreads&) = delete;

private:
  void (*set_)(int) = nullptr;
  int previous_ = 0;
};

}  // namespace isohypse::detail
