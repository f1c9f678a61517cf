#include "stipple/io/output.hpp"

#include <fstream>
#include <sstream>

#include <sys/stat.h>

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

// Common practice (POSIX): only regular files are stipple's to replace; rename(2) over a
// device node, FIFO or socket would replace the node itself (as root, even under /dev).
TEST(WriteFileSafely, RefusesEverythingButRegularFiles) {
  test::TempDir dir;
  const std::string fifo = dir.file("pipe");
  ASSERT_EQ(::mkfifo(fifo.c_str(), 0600), 0);
  EXPECT_THROW(write_file_safely(fifo, "x", {}), InputError);
  EXPECT_TRUE(std::filesystem::is_fifo(fifo));
  EXPECT_THROW(write_file_safely(dir.path().string(), "x", {}), InputError);  // a folder
  EXPECT_THROW(write_file_safely("/dev/null", "x", {}), InputError);
  EXPECT_TRUE(std::filesystem::is_character_file("/dev/null"));
  // A symbolic link is judged by its target: to a device or an input, refused; to an
  // ordinary file, written through (the link stays a link).
  const std::string to_device = dir.file("to-null.json");
  std::filesystem::create_symlink("/dev/null", to_device);
  EXPECT_THROW(write_file_safely(to_device, "x", {}), InputError);
  const auto input = dir.write("sightings.csv", "x,y\n");
  const std::string to_input = dir.file("to-input.json");
  std::filesystem::create_symlink(input, to_input);
  EXPECT_THROW(write_file_safely(to_input, "x", {input}), InputError);
  EXPECT_EQ(read(input), "x,y\n");
  const auto plain = dir.write("results.json", "old");
  const std::string to_plain = dir.file("latest.json");
  std::filesystem::create_symlink(plain, to_plain);
  write_file_safely(to_plain, "new", {});
  EXPECT_TRUE(std::filesystem::is_symlink(to_plain));
  EXPECT_EQ(read(plain), "new");
}

TEST(WriteFileSafely, OutputsGetTheUsualPermissions) {
  // Common practice (POSIX open(2)): a new file gets 0666 less the umask, not mkstemp's 0600.
  test::TempDir dir;
  const mode_t mask = ::umask(022);
  write_file_safely(dir.file("shared.csv"), "x", {});
  ::umask(mask);
  struct stat info {};
  ASSERT_EQ(::stat(dir.file("shared.csv").c_str(), &info), 0);
  EXPECT_EQ(info.st_mode & 0777, 0644u);
}

TEST(WriteFileSafely, TemporaryNamesAreUniqueAndCleanedUp) {
  test::TempDir dir;
  {
    TemporaryOutput a(dir.file("out.json"));
    TemporaryOutput b(dir.file("out.json"));
    EXPECT_NE(a.path(), b.path());
    EXPECT_TRUE(std::filesystem::exists(a.path()));
  }  // neither committed: both removed
  std::size_t files = 0;
  for ([[maybe_unused]] const auto& entry : std::filesystem::directory_iterator(dir.path())) ++files;
  EXPECT_EQ(files, 0u);
}

}  // namespace
}  // namespace stipple
