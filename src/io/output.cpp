#include "stipple/io/output.hpp"

#include <filesystem>
#include <fstream>

#include <unistd.h>

#include "stipple/error.hpp"

namespace fs = std::filesystem;

namespace stipple {

namespace {

bool same_file(const fs::path& a, const fs::path& b) {
  std::error_code ec;
  if (fs::exists(a, ec) && fs::exists(b, ec)) return fs::equivalent(a, b, ec);
  return fs::weakly_canonical(a, ec) == fs::weakly_canonical(b, ec);
}

bool is_input(const fs::path& target, const std::vector<std::string>& inputs) {
  std::error_code ec;
  for (const auto& input : inputs) {
    fs::path in(input);
    std::vector<fs::path> guarded{in};
    if (in.extension() == ".shp") {
      // A Shapefile is several files sharing a stem.
      for (const char* ext : {".shx", ".dbf", ".prj", ".cpg", ".qix", ".sbn", ".sbx"})
        guarded.push_back(fs::path(in).replace_extension(ext));
    }
    for (const auto& g : guarded)
      if (same_file(target, g)) return true;
    // A folder source (e.g. of Shapefiles): none of its files may be overwritten.
    if (fs::is_directory(in, ec) && fs::exists(target, ec) &&
        fs::weakly_canonical(target, ec).parent_path() == fs::weakly_canonical(in, ec))
      return true;
  }
  return false;
}

}  // namespace

void write_file_safely(const std::string& path, const std::string& content,
                       const std::vector<std::string>& inputs) {
  const fs::path target(path);
  if (is_input(target, inputs))
    throw InputError(path + ": refusing to write over an input file");
  std::error_code ec;
  if (fs::is_directory(target, ec)) throw InputError(path + ": is a folder, not a file");
  const fs::path folder = target.has_parent_path() ? target.parent_path() : fs::path(".");
  if (!fs::is_directory(folder, ec))
    throw InputError(path + ": folder " + folder.string() + " does not exist");
  const fs::path temporary =
      folder / ("." + target.filename().string() + ".tmp" + std::to_string(::getpid()));
  {
    std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
    if (!out) throw InputError(path + ": cannot write in folder " + folder.string());
    out << content;
    out.flush();
    if (!out) {
      fs::remove(temporary, ec);
      throw InputError(path + ": write failed (disk full?)");
    }
  }
  fs::rename(temporary, target, ec);
  if (ec) {
    fs::remove(temporary, ec);
    throw InputError(path + ": cannot be replaced (" + ec.message() + ")");
  }
}

}  // namespace stipple
