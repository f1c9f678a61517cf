#include "stipple/io/output.hpp"

#include <filesystem>
#include <fstream>

#include <unistd.h>

#include <openssl/evp.h>

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

std::string sha256_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path + ": cannot be read for its checksum");
  EVP_MD_CTX* context = EVP_MD_CTX_new();
  EVP_DigestInit_ex(context, EVP_sha256(), nullptr);
  char buffer[65536];
  while (in) {
    in.read(buffer, sizeof buffer);
    if (in.gcount() > 0) EVP_DigestUpdate(context, buffer, static_cast<std::size_t>(in.gcount()));
  }
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  EVP_DigestFinal_ex(context, digest, &length);
  EVP_MD_CTX_free(context);
  static const char* hex = "0123456789abcdef";
  std::string out;
  for (unsigned int i = 0; i < length; ++i) {
    out += hex[digest[i] >> 4];
    out += hex[digest[i] & 15];
  }
  return out;
}

void make_folder(const std::string& path) {
  std::error_code ec;
  fs::create_directories(path, ec);
  if (ec || !fs::is_directory(path, ec)) throw InputError(path + ": cannot create folder");
}

}  // namespace stipple
