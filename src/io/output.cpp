#include "stipple/io/output.hpp"

#include <filesystem>
#include <fstream>

#include <stdlib.h>
#include <sys/stat.h>
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

std::string kind_of(fs::file_type type) {
  switch (type) {
    case fs::file_type::directory: return "a folder";
    case fs::file_type::block:
    case fs::file_type::character: return "a device";
    case fs::file_type::fifo: return "a FIFO (named pipe)";
    case fs::file_type::socket: return "a socket";
    default: return "not a regular file";
  }
}

// The process umask, read from /proc (Linux 4.7+) so that no other thread ever sees a
// temporarily cleared mask; elsewhere umask() is called once and restored at once.
mode_t current_umask() {
  std::ifstream status("/proc/self/status");
  std::string line;
  while (std::getline(status, line)) {
    if (line.rfind("Umask:", 0) == 0) return static_cast<mode_t>(std::stoul(line.substr(6), nullptr, 8));
  }
  static const mode_t fallback = [] {
    const mode_t m = ::umask(0);
    ::umask(m);
    return m;
  }();
  return fallback;
}

}  // namespace

std::string checked_output_path(const std::string& path, const std::vector<std::string>& inputs) {
  if (path.empty()) throw InputError("an output path is empty");
  const fs::path target(path);
  std::error_code ec;
  fs::path final_path = target;
  const fs::file_status link = fs::symlink_status(target, ec);
  if (fs::is_symlink(link)) final_path = fs::weakly_canonical(target, ec);
  const fs::file_status status = fs::status(final_path, ec);
  if (fs::exists(status) && !fs::is_regular_file(status)) {
    throw InputError(path + ": is " + kind_of(status.type()) +
                     (fs::is_symlink(link) ? " (through a symbolic link)" : "") +
                     "; stipple writes only regular files");
  }
  if (is_input(target, inputs) || is_input(final_path, inputs))
    throw InputError(path + ": refusing to write over an input file");
  const fs::path folder = final_path.has_parent_path() ? final_path.parent_path() : fs::path(".");
  if (!fs::is_directory(folder, ec)) throw InputError(path + ": folder " + folder.string() + " does not exist");
  return final_path.string();
}

TemporaryOutput::TemporaryOutput(std::string final_path, bool keep_extension) : final_(std::move(final_path)) {
  const fs::path target(final_);
  const fs::path folder = target.has_parent_path() ? target.parent_path() : fs::path(".");
  const std::string extension = keep_extension ? target.extension().string() : std::string(".tmp");
  std::string pattern = (folder / ("." + target.stem().string() + ".XXXXXX" + extension)).string();
  std::vector<char> name(pattern.begin(), pattern.end());
  name.push_back('\0');
  const int fd = ::mkstemps(name.data(), static_cast<int>(extension.size()));
  if (fd < 0) throw InputError(final_ + ": cannot create a temporary file in folder " + folder.string());
  // mkstemps creates the file readable by its owner only; outputs get the usual 0666 less
  // the process umask, as a plain open would give them.
  (void)::fchmod(fd, static_cast<mode_t>(0666 & ~current_umask()));
  ::close(fd);
  temporary_ = name.data();
  if (keep_extension) {
    std::error_code ec;
    fs::remove(temporary_, ec);
  }
}

TemporaryOutput::~TemporaryOutput() {
  if (committed_) return;
  std::error_code ec;
  fs::remove_all(temporary_, ec);
}

void TemporaryOutput::commit() {
  std::error_code ec;
  fs::rename(temporary_, final_, ec);
  if (ec) throw InputError(final_ + ": cannot be replaced (" + ec.message() + ")");
  committed_ = true;
}

void write_file_safely(const std::string& path, const std::string& content, const std::vector<std::string>& inputs) {
  TemporaryOutput temporary(checked_output_path(path, inputs));
  {
    std::ofstream out(temporary.path(), std::ios::binary | std::ios::trunc);
    if (!out) throw InputError(path + ": cannot write the temporary file " + temporary.path());
    out << content;
    out.flush();
    if (!out) throw InputError(path + ": write failed (disk full?)");
  }
  temporary.commit();
}

StreamedFile::StreamedFile(const std::string& path, const std::vector<std::string>& inputs)
    : path_(path), temporary_(checked_output_path(path, inputs)) {
  file_ = std::fopen(temporary_.path().c_str(), "wb");
  if (file_ == nullptr) throw InputError(path + ": cannot write the temporary file " + temporary_.path());
}

StreamedFile::~StreamedFile() {
  if (file_ != nullptr) std::fclose(file_);
}

void StreamedFile::write(const std::string& text) {
  if (file_ == nullptr) throw InputError(path_ + ": written after it was committed");
  if (std::fwrite(text.data(), 1, text.size(), file_) != text.size())
    throw InputError(path_ + ": write failed (disk full?)");
}

void StreamedFile::commit() {
  if (file_ == nullptr) throw InputError(path_ + ": committed twice");
  const bool ok = std::fflush(file_) == 0 && std::ferror(file_) == 0;
  const bool closed = std::fclose(file_) == 0;
  file_ = nullptr;
  if (!ok || !closed) throw InputError(path_ + ": write failed (disk full?)");
  temporary_.commit();
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
