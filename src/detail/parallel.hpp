#pragma once
// Runs independent tasks over threads (internal). Results must not depend on the thread
// count: each task derives its own seed from its index (see simulate/engine.hpp).

#include <algorithm>
#include <atomic>
#include <cstddef>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace stipple {

namespace detail {

// Starts a thread running `work`; the tests give one that fails, as a system out of
// threads does.
struct StartThread {
  template <typename Work>
  std::thread operator()(Work& work) const {
    return std::thread(std::ref(work));
  }
};

}  // namespace detail

/// Calls task(i) for i in [0, count) on up to `threads` threads (0 = all cores), the
/// caller's thread among them. The first exception thrown by a task is rethrown here, on
/// the caller's thread, once every thread has stopped; the remaining tasks are skipped. A
/// thread that cannot be started (std::system_error, out of memory) only means fewer
/// threads: the tasks still all run.
template <typename Task, typename Start = detail::StartThread>
void parallel_for(std::size_t count, unsigned threads, Task&& task, Start start = {}) {
  if (threads == 0) threads = std::max(1U, std::thread::hardware_concurrency());
  threads = static_cast<unsigned>(std::min<std::size_t>(threads, std::max<std::size_t>(count, 1)));
  if (threads <= 1) {
    for (std::size_t i = 0; i < count; ++i) task(i);
    return;
  }
  std::atomic<std::size_t> next{0};
  std::exception_ptr failure;
  std::mutex failure_mutex;
  auto worker = [&] {
    for (std::size_t i = next++; i < count; i = next++) {
      try {
        task(i);
      } catch (...) {
        const std::lock_guard<std::mutex> lock(failure_mutex);
        if (!failure) failure = std::current_exception();
        next = count;
      }
    }
  };
  std::vector<std::thread> pool;
  try {
    pool.reserve(threads - 1);
    for (unsigned t = 1; t < threads; ++t) pool.push_back(start(worker));
  } catch (...) {
    // Fewer threads than asked: those started and this one share the tasks.
  }
  worker();
  for (auto& thread : pool) thread.join();
  if (failure) std::rethrow_exception(failure);
}

}  // namespace stipple
