// Output that appears whole or not at all: write to a temporary file beside
// the target, then rename over it. A crash, a full disk or an exception
// leaves the target as it was (and no temporary behind).
#pragma once

#include <string>

namespace isohypse {

// A temporary path beside `target` that an AtomicFile renames into place.
class AtomicFile {
public:
  explicit AtomicFile(std::string target);
  ~AtomicFile();  // removes the temporary if commit() was not called
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  // Where to write (e.g. hand it to a netCDF writer).
  const std::string& temp_path() const { return temp_; }
  const std::string& target() const { return target_; }
  // fsyncs the temporary, renames it over the target. Throws InputError
  // naming the target on failure (the target is then unchanged).
  void commit();

private:
  std::string target_;
  std::string temp_;
  bool committed_ = false;
};

// Writes `content` to `path` atomically (text or binary).
void write_file_atomically(const std::string& path, const std::string& content);
// Reads a whole file; throws InputError naming it when it cannot.
std::string read_file(const std::string& path);

}  // namespace isohypse
