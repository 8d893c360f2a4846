// Writing files in parallel. netCDF-C and HDF5 are not thread-safe, but
// separate processes may each write their own files, so the generator forks.
#pragma once

#include <cstddef>
#include <functional>

namespace demo {

// Runs job(i) for every i in [0, n), job i in process i % processes (the
// calling process being process 0, the others forked from it and sharing
// nothing afterwards). Jobs must not depend on one another or on which
// process runs them. Waits for every process; throws isohypse::DataError
// when a job failed in a forked process (whose message went to stderr), or
// rethrows the calling process's own failure.
void run_in_processes(std::size_t n, int processes, const std::function<void(std::size_t)>& job);

// The default number of processes: the machine's cores, at most 4.
int default_processes();

}  // namespace demo
