#pragma once
/// Writing result files safely.

#include <cstdio>
#include <string>
#include <vector>

namespace stipple {

/// The file an output to `path` really lands in, after checking that stipple may write it:
/// only a regular file (new or existing) in an existing folder. Refuses (InputError naming
/// the path) a folder, device node, FIFO, socket or other special file, a symlink whose
/// target is any of those, and any of `inputs` (compared as files, with a Shapefile's
/// sidecars and the files of a folder source). A symlink to an allowed regular file is
/// followed: the result is its target.
[[nodiscard]] std::string checked_output_path(const std::string& path, const std::vector<std::string>& inputs);

/// A temporary file beside an output, created with a unique name (mkstemp) and removed by
/// the destructor unless commit() renamed it over the output.
class TemporaryOutput {
 public:
  /// Reserves `.NAME.XXXXXX.tmp` beside `final_path` (which checked_output_path returned).
  /// With `keep_extension`, the name ends with the output's extension instead (for writers
  /// that choose their format by extension), and the reserved file is removed again so the
  /// writer can create it.
  explicit TemporaryOutput(std::string final_path, bool keep_extension = false);
  ~TemporaryOutput();
  TemporaryOutput(const TemporaryOutput&) = delete;
  TemporaryOutput& operator=(const TemporaryOutput&) = delete;
  [[nodiscard]] const std::string& path() const { return temporary_; }
  /// Renames the temporary file over the output; throws InputError naming it on failure.
  void commit();

 private:
  std::string final_;
  std::string temporary_;
  bool committed_ = false;
};

/// Writes `content` to `path` through a TemporaryOutput renamed into place, so a reader never
/// sees a half-written file; the target is checked by checked_output_path.
void write_file_safely(const std::string& path, const std::string& content, const std::vector<std::string>& inputs);

/// An output written piece by piece (a table that grows as batch files finish) through a
/// TemporaryOutput: nothing appears at `path` until commit(), and a failure leaves nothing.
class StreamedFile {
 public:
  StreamedFile(const std::string& path, const std::vector<std::string>& inputs);
  ~StreamedFile();
  StreamedFile(const StreamedFile&) = delete;
  StreamedFile& operator=(const StreamedFile&) = delete;
  void write(const std::string& text);
  /// Flushes, checks the write and renames into place; throws InputError naming the path.
  void commit();

 private:
  std::string path_;
  TemporaryOutput temporary_;
  std::FILE* file_ = nullptr;
};

/// SHA-256 of a file's bytes, as 64 hexadecimal digits (OpenSSL). Throws InputError when
/// the file cannot be read.
[[nodiscard]] std::string sha256_file(const std::string& path);

/// Makes a folder (and its parents); throws InputError naming it on failure.
void make_folder(const std::string& path);

}  // namespace stipple
