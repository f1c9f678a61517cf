// parallel_for (internal): every task runs once, the first failure reaches the caller, and
// a thread that cannot be started leaves fewer threads, not a terminated process.

#include "detail/parallel.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <stdexcept>
#include <system_error>
#include <vector>

namespace stipple {
namespace {

TEST(ParallelFor, RunsEveryTaskOnceForAnyThreadCount) {
  for (const unsigned threads : {0U, 1U, 2U, 7U, 64U}) {
    std::vector<std::atomic<int>> runs(100);
    parallel_for(runs.size(), threads, [&](std::size_t i) { ++runs[i]; });
    for (const auto& r : runs) EXPECT_EQ(r.load(), 1) << threads << " threads";
  }
  parallel_for(0, 4, [](std::size_t) { FAIL() << "no task to run"; });
}

TEST(ParallelFor, RethrowsTheFirstFailureOnTheCallersThreadAfterAllThreadsStop) {
  std::atomic<int> running{0};
  try {
    parallel_for(1000, 4, [&](std::size_t i) {
      ++running;
      if (i == 10) {
        --running;
        throw std::runtime_error("task 10 failed");
      }
      --running;
    });
    FAIL() << "the failure was swallowed";
  } catch (const std::runtime_error& e) {
    EXPECT_STREQ(e.what(), "task 10 failed");
  }
  EXPECT_EQ(running.load(), 0);  // joined: nothing runs after the rethrow
}

// Starts the first `allowed` threads, then fails as a system out of threads does.
struct FailingStart {
  int* started;
  int allowed;
  template <typename Work>
  std::thread operator()(Work& work) const {
    if (*started >= allowed) throw std::system_error(std::make_error_code(std::errc::resource_unavailable_try_again));
    ++*started;
    return std::thread(std::ref(work));
  }
};

TEST(ParallelFor, AThreadThatCannotStartMeansFewerThreadsNotATerminatedProcess) {
  for (const int allowed : {0, 1, 2}) {
    int started = 0;
    std::vector<std::atomic<int>> runs(200);
    parallel_for(
        runs.size(), 8, [&](std::size_t i) { ++runs[i]; }, FailingStart{&started, allowed});
    EXPECT_EQ(started, allowed);
    for (const auto& r : runs) EXPECT_EQ(r.load(), 1) << allowed << " threads started";
  }
}

}  // namespace
}  // namespace stipple
