#include "stipple/io/output.hpp"

#include <fstream>
#include <sstream>

#include <gtest/gtest.h>

#include "stipple/error.hpp"
#include "support.hpp"

namespace stipple {
namespace {

std::string read(const std::string& path) {
  std::ifstream in(path);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

TEST(WriteFileSafely, WritesAndReplaces) {
  test::TempDir dir;
  write_file_safely(dir.file("a.json"), "one", {});
  write_file_safely(dir.file("a.json"), "two", {});
  EXPECT_EQ(read(dir.file("a.json")), "two");
  std::size_t files = 0;
  for ([[maybe_unused]] const auto& entry : std::filesystem::directory_iterator(dir.path())) ++files;
  EXPECT_EQ(files, 1u);  // no temporary left behind
}

TEST(WriteFileSafely, RefusesToOverwriteInputs) {
  test::TempDir dir;
  const auto input = dir.write("plots.shp", "x");
  (void)dir.write("plots.dbf", "x");
  EXPECT_THROW(write_file_safely(input, "y", {input}), InputError);
  EXPECT_THROW(write_file_safely(dir.file("plots.dbf"), "y", {input}), InputError);
  EXPECT_THROW(write_file_safely(dir.file("plots.shp"), "y", {dir.path().string()}), InputError);
  EXPECT_EQ(read(input), "x");
  EXPECT_THROW(write_file_safely(dir.file("missing/out.json"), "y", {}), InputError);
}

}  // namespace
}  // namespace stipple
