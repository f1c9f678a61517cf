// Ctrl-C (SIGINT) stops a running command promptly, with exit code 130, and leaves no
// partial outputs: no result file, no temporary file, and a batch removes the figures it
// had already written (issue 11, item 6).

#include <gtest/gtest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>

#include "support.hpp"

namespace {

namespace fs = std::filesystem;
using stipple::test::TempDir;

struct Interrupted {
  int exit_code = -1;
  double seconds_to_stop = -1.0;  // from the signal to the end of the process
  std::string err;
};

// Starts `args` in the background, waits until the process has installed its SIGINT
// handler (bit 2 of SigCgt in /proc/PID/status: a background job of a non-interactive shell
// starts with SIGINT ignored, so a signal sent earlier would be lost) and `ready` (a shell
// test, e.g. `-d DIR`) holds, or 60 s pass; sends SIGINT and waits for the process. A
// process still running 60 s after the signal is killed and reported with exit code -3,
// so a lost signal fails the test instead of hanging it.
Interrupted interrupt(const std::string& args, const std::string& ready, const TempDir& dir) {
  const std::string script = dir.file("run.sh");
  std::FILE* f = std::fopen(script.c_str(), "w");
  std::fprintf(f,
               "%s %s >/dev/null 2>%s &\n"
               "pid=$!\n"
               "caught() { c=$(awk '/^SigCgt/ {print $2}' /proc/$pid/status 2>/dev/null); "
               "[ -n \"$c\" ] && (( (16#$c & 2) != 0 )); }\n"
               "for i in $(seq 600); do caught && [ %s ] && break; sleep 0.1; done\n"
               "sleep 0.3\n"
               "start=$(date +%%s%%N)\n"
               "kill -INT $pid\n"
               "for i in $(seq 600); do kill -0 $pid 2>/dev/null || break; sleep 0.1; done\n"
               "if kill -0 $pid 2>/dev/null; then kill -KILL $pid; wait $pid; echo -3 -1; exit; fi\n"
               "wait $pid\n"
               "code=$?\n"
               "end=$(date +%%s%%N)\n"
               "echo $code $(( (end - start) / 1000000 ))\n",
               STIPPLE_CLI, args.c_str(), dir.file("stderr.txt").c_str(), ready.c_str());
  std::fclose(f);
  Interrupted result;
  FILE* pipe = popen(("bash " + script).c_str(), "r");
  if (pipe == nullptr) return result;
  long milliseconds = -1;
  if (std::fscanf(pipe, "%d %ld", &result.exit_code, &milliseconds) != 2) result.exit_code = -2;
  pclose(pipe);
  result.seconds_to_stop = static_cast<double>(milliseconds) / 1000.0;
  std::ifstream err(dir.file("stderr.txt"));
  result.err.assign(std::istreambuf_iterator<char>(err), std::istreambuf_iterator<char>());
  return result;
}

std::size_t files_in(const fs::path& folder) {
  std::size_t n = 0;
  std::error_code ec;
  if (!fs::exists(folder, ec)) return 0;
  for (const auto& entry : fs::recursive_directory_iterator(folder))
    if (!entry.is_directory()) ++n;
  return n;
}

TEST(Interrupt, RandomnessStopsPromptlyAndWritesNothing) {
  const TempDir dir;
  const fs::path out = fs::path(dir.file("out"));
  fs::create_directories(out);
  const Interrupted r =
      interrupt("randomness " + stipple::test::sample("reserve.gpkg") + " --plots " +
                    stipple::test::sample("reserve.gpkg") + " --simulations 200000 --json " + (out / "r.json").string(),
                "-e /proc/self", dir);  // ready at once: it is still simulating
  EXPECT_EQ(r.exit_code, 130) << r.err;
  // Stopped by stipple itself (a process killed by the signal also exits 130).
  EXPECT_NE(r.err.find("interrupted; no outputs were written"), std::string::npos) << r.err;
  EXPECT_GE(r.seconds_to_stop, 0.0);
  EXPECT_LT(r.seconds_to_stop, 5.0);
  EXPECT_EQ(files_in(out), 0U);  // neither r.json nor a temporary file
}

TEST(Interrupt, BatchRemovesTheFiguresItHadWritten) {
  const TempDir dir;
  const fs::path out = fs::path(dir.file("b"));
  // Interrupted once the first file's figures are on disk.
  const Interrupted r = interrupt("batch " + stipple::test::sample("season") + " --out " + out.string() +
                                      " --threads 1 --simulations 999 --report --quiet",
                                  "-n \"$(find " + out.string() + " -name '*.svg' 2>/dev/null | head -1)\"", dir);
  EXPECT_EQ(r.exit_code, 130) << r.err;
  EXPECT_NE(r.err.find("interrupted; no outputs were written"), std::string::npos) << r.err;
  EXPECT_LT(r.seconds_to_stop, 10.0);
  EXPECT_EQ(files_in(out), 0U);
  EXPECT_FALSE(fs::exists(out));  // the run made the folder, and leaves none behind
}

}  // namespace
