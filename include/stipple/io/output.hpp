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

}  // namespace stipple
