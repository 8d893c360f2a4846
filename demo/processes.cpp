#include "processes.hpp"

#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <exception>
#include <iostream>
#include <string>
#include <thread>
#include <vector>

#include "isohypse/base/error.hpp"

namespace demo {

namespace {

void run_share(std::size_t n, int processes, int index, const std::function<void(std::size_t)>& job) {
  for (std::size_t i = static_cast<std::size_t>(index); i < n; i += static_cast<std::size_t>(processes)) job(i);
}

}  // namespace

int default_processes() {
  return static_cast<int>(std::clamp(std::thread::hardware_concurrency(), 1u, 4u));
}

void run_in_processes(std::size_t n, int processes, const std::function<void(std::size_t)>& job) {
  processes = static_cast<int>(std::min<std::size_t>(static_cast<std::size_t>(std::max(processes, 1)), std::max<std::size_t>(n, 1)));
  if (processes == 1) return run_share(n, 1, 0, job);

  // Buffered output would otherwise be written once per process.
  std::cout.flush();
  std::cerr.flush();
  std::fflush(nullptr);
  std::vector<pid_t> children;
  for (int p = 1; p < processes; ++p) {
    pid_t pid = ::fork();
    if (pid < 0) break;  // fewer processes: the unstarted shares run below
    if (pid == 0) {
      int code = 0;
      try {
        run_share(n, processes, p, job);
      } catch (const std::exception& e) {
        std::cerr << "isohypse-demo-world: error: " << e.what() << std::endl;
        code = 1;
      }
      ::_exit(code);  // no atexit handlers, no second flush of the parent's buffers
    }
    children.push_back(pid);
  }

  std::exception_ptr own;
  try {
    run_share(n, processes, 0, job);
    // Shares of processes that could not be forked.
    for (int p = static_cast<int>(children.size()) + 1; p < processes; ++p) run_share(n, processes, p, job);
  } catch (...) {
    own = std::current_exception();
  }
  int failed = 0;
  for (pid_t pid : children) {
    int status = 0;
    while (::waitpid(pid, &status, 0) < 0 && errno == EINTR) {
    }
    if (!WIFEXITED(status) || WEXITSTATUS(status) != 0) ++failed;
  }
  if (own) std::rethrow_exception(own);
  if (failed)
    throw isohypse::DataError(std::to_string(failed) + " of " + std::to_string(children.size()) +
                              " worker processes failed (their messages are above)");
}

}  // namespace demo
