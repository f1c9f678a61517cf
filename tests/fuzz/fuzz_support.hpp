#pragma once
// Shared by the fuzz targets: a private temporary file holding the fuzzer's bytes, and the
// errors stipple is allowed to answer with. Anything else escaping a target is a finding.

#include <unistd.h>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

namespace stipple::fuzz {

/// Writes `size` bytes to a fresh file named `*<suffix>` in the temp folder; removed on exit.
class BytesFile {
 public:
  BytesFile(const std::uint8_t* data, std::size_t size, const std::string& suffix) {
    const char* tmp = std::getenv("TMPDIR");
    std::string pattern = std::string(tmp && *tmp ? tmp : "/tmp") + "/stipple-fuzz-XXXXXX" + suffix;
    const int fd = mkstemps(pattern.data(), static_cast<int>(suffix.size()));
    if (fd < 0) std::abort();
    path_ = pattern;
    std::size_t written = 0;
    while (written < size) {
      const ssize_t n = write(fd, data + written, size - written);
      if (n <= 0) std::abort();
      written += static_cast<std::size_t>(n);
    }
    close(fd);
  }
  ~BytesFile() { std::remove(path_.c_str()); }
  BytesFile(const BytesFile&) = delete;
  BytesFile& operator=(const BytesFile&) = delete;
  [[nodiscard]] const std::string& path() const { return path_; }

 private:
  std::string path_;
};

}  // namespace stipple::fuzz
