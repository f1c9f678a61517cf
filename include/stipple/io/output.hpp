#pragma once
/// Writing result files safely.

#include <string>
#include <vector>

namespace stipple {

/// Writes `content` to `path` through a temporary file in the same folder that is renamed
/// into place, so a reader never sees a half-written file. Refuses (InputError) to write
/// over any of `inputs` (compared as files, including a Shapefile's sidecar files).
void write_file_safely(const std::string& path, const std::string& content,
                       const std::vector<std::string>& inputs);

/// SHA-256 of a file's bytes, as 64 hexadecimal digits (OpenSSL). Throws InputError when
/// the file cannot be read.
[[nodiscard]] std::string sha256_file(const std::string& path);

/// Makes a folder (and its parents); throws InputError naming it on failure.
void make_folder(const std::string& path);

}  // namespace stipple
