#include "isohypse/base/atomic_file.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "isohypse/base/error.hpp"

namespace isohypse {

namespace fs = std::filesystem;

static std::string make_temp_name(const std::string& target) {
  static std::atomic<unsigned> counter{0};
  fs::path p(target);
  // Appended piece by piece: GCC 12 flags "." + std::string&& with a false -Wrestrict.
  std::string name = ".";
  name += p.filename().string();
  name += ".tmp.";
  name += std::to_string(::getpid());
  name += ".";
  name += std::to_string(counter++);
  return (p.parent_path() / name).string();
}

AtomicFile::AtomicFile(std::string target) : target_(std::move(target)), temp_(make_temp_name(target_)) {
  fs::path parent = fs::path(target_).parent_path();
  std::error_code ec;
  if (!parent.empty() && !fs::is_directory(parent, ec))
    throw InputError(target_ + ": the folder " + parent.string() + " does not exist");
}

AtomicFile::~AtomicFile() {
  if (!committed_) {
    std::error_code ec;
    fs::remove(temp_, ec);
  }
}

void AtomicFile::commit() {
  int fd = ::open(temp_.c_str(), O_RDONLY);
  if (fd < 0) throw InputError(target_ + ": temporary output " + temp_ + " is missing: " + std::strerror(errno));
  if (::fsync(fd) != 0) {
    int e = errno;
    ::close(fd);
    throw InputError(target_ + ": cannot flush output: " + std::strerror(e));
  }
  ::close(fd);
  if (std::rename(temp_.c_str(), target_.c_str()) != 0)
    throw InputError(target_ + ": cannot move output into place: " + std::strerror(errno));
  committed_ = true;
}

void write_file_atomically(const std::string& path, const std::string& content) {
  AtomicFile out(path);
  {
    std::ofstream f(out.temp_path(), std::ios::binary | std::ios::trunc);
    if (!f) throw InputError(path + ": cannot write: " + std::strerror(errno));
    f.write(content.data(), static_cast<std::streamsize>(content.size()));
    f.flush();
    if (!f) throw InputError(path + ": write failed (disk full?): " + std::strerror(errno));
  }
  out.commit();
}

std::string read_file(const std::string& path) {
  std::ifstream f(path, std::ios::binary);
  if (!f) throw InputError(path + ": cannot read: " + std::strerror(errno));
  std::ostringstream ss;
  ss << f.rdbuf();
  return ss.str();
}

}  // namespace isohypse
