// Progress of long single commands: a bar with an ETA on a terminal, nothing when standard
// error is not a terminal (issue 10, item 8). The terminal is a pseudo-terminal made by
// util-linux `script`; STIPPLE_PROGRESS_DELAY=0 shows the bar from the start of the run.

#include <gtest/gtest.h>

#include <cstdio>
#include <string>

#include "support.hpp"

namespace {

using stipple::test::run_cli;
using stipple::test::TempDir;

std::string sample(const std::string& name) {
  return std::string(STIPPLE_SAMPLE_DIR) + "/" + name;
}

// Runs the command line under a pseudo-terminal; returns what the terminal showed
// (standard output and standard error together).
std::string on_terminal(const std::string& args) {
  const std::string command =
      "STIPPLE_PROGRESS_DELAY=0 script -q -e -c '" + std::string(STIPPLE_CLI) + " " + args + "' /dev/null </dev/null";
  std::string shown;
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return shown;
  char buffer[4096];
  std::size_t n = 0;
  while ((n = fread(buffer, 1, sizeof buffer, pipe)) > 0) shown.append(buffer, n);
  pclose(pipe);
  return shown;
}

std::string randomness_args() {
  return "randomness " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --simulations 39";
}

std::string bootstrap_args() {
  return "transect " + sample("transects.gpkg") + " --lines " + sample("transects.gpkg") +
         " --distance-field distance --size-field size --models half-normal --adjustments none --bootstrap 49";
}

std::string surface_args(const TempDir& out) {
  return "surface " + sample("reserve.gpkg") + " --plots " + sample("reserve.gpkg") + " --out " + out.file("s");
}

std::string batch_args(const TempDir& out) {
  return "batch " + sample("season") + " --analyses density --out " + out.file("b");
}

TEST(ProgressCli, ShownWithAnEtaOnATerminal) {
  TempDir out;
  for (const auto& [args, label] :
       {std::pair{randomness_args(), "stipple randomness"}, std::pair{bootstrap_args(), "stipple transect"},
        std::pair{surface_args(out), "stipple surface"}, std::pair{batch_args(out), "stipple batch: files"}}) {
    const std::string shown = on_terminal(args);
    EXPECT_NE(shown.find(label), std::string::npos) << args << "\n" << shown;
    EXPECT_NE(shown.find("ETA "), std::string::npos) << args << "\n" << shown;
    EXPECT_NE(shown.find('\r'), std::string::npos) << args;  // redrawn in place
  }
}

TEST(ProgressCli, SilentWhenNotATerminal) {
  TempDir out;
  for (const auto& args : {randomness_args(), bootstrap_args(), surface_args(out)}) {
    setenv("STIPPLE_PROGRESS_DELAY", "0", 1);
    const auto r = run_cli(args);
    unsetenv("STIPPLE_PROGRESS_DELAY");
    ASSERT_EQ(r.exit_code, 0) << args << "\n" << r.err;
    EXPECT_EQ(r.err.find("ETA"), std::string::npos) << args << "\n" << r.err;
    EXPECT_EQ(r.err.find('\r'), std::string::npos) << args;
  }
}

}  // namespace
