// Keep freed memory for reuse. isohypse allocates fields of one to a few
// megabytes per initialisation or member (a climatology, a drift, a
// running mean), above glibc's default threshold for serving a block by
// mmap, so each one came fresh from the kernel and every page was faulted
// in and zeroed again: on the project machine about 12 microseconds a page,
// which was 45 % of calibrate's time (perf, 2026-12-02). Raising the mmap
// threshold to its largest (32 MB on 64-bit) and keeping up to 1 GB of
// freed heap untrimmed lets the same pages serve the next block. Peak
// memory does not grow (the blocks are reused, not added); an idle service
// may keep up to that much freed heap mapped.
#pragma once

#include <malloc.h>

namespace isohypse::detail {

inline void keep_freed_memory() {
#ifdef M_MMAP_THRESHOLD
  mallopt(M_MMAP_THRESHOLD, 32 * 1024 * 1024);
  mallopt(M_TRIM_THRESHOLD, 1024 * 1024 * 1024);
  mallopt(M_TOP_PAD, 64 * 1024 * 1024);
#endif
}

}  // namespace isohypse::detail
