#include "isohypse/base/run_outputs.hpp"

#include <fcntl.h>
#include <signal.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <map>
#include <set>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

namespace fs = std::filesystem;

namespace {

// The path as it will be reached: symbolic links and ".." resolved as far
// as the path exists.
std::string resolved(const std::string& path) {
  std::error_code ec;
  const fs::path p = fs::weakly_canonical(fs::absolute(path), ec);
  return ec ? fs::absolute(path).lexically_normal().string() : p.string();
}

bool same_file(const std::string& a, const std::string& b) {
  std::error_code ec;
  if (fs::exists(a, ec) && fs::exists(b, ec)) return fs::equivalent(a, b, ec) && !ec;
  return resolved(a) == resolved(b);
}

std::string folder_of(const std::string& path) {
  const fs::path parent = fs::path(path).parent_path();
  return parent.empty() ? "." : parent.string();
}

// Whether a file can be made in `folder` (a probe created and removed: the
// permission bits alone do not tell for root, ACLs or read-only mounts).
bool writable(const std::string& folder) {
  std::string name = ".isohypse-probe.";  // appended piece by piece: GCC 12's false -Wrestrict on "." + std::string&&
  name += std::to_string(::getpid());
  const std::string probe = (fs::path(folder) / name).string();
  const int fd = ::open(probe.c_str(), O_WRONLY | O_CREAT | O_EXCL, 0600);
  if (fd < 0) return false;
  ::close(fd);
  ::unlink(probe.c_str());
  return true;
}

// Removes ".NAME.tmp.PID.N" beside each output (AtomicFile's temporaries)
// whose process no longer runs.
void remove_stale_temporaries(const std::vector<std::string>& targets) {
  std::map<std::string, std::set<std::string>> by_folder;
  for (const std::string& t : targets) {
    std::string prefix = ".";
    prefix += fs::path(t).filename().string();
    prefix += ".tmp.";
    by_folder[folder_of(t)].insert(prefix);
  }
  for (const auto& [folder, prefixes] : by_folder) {
    std::error_code ec;
    for (const auto& entry : fs::directory_iterator(folder, ec)) {
      const std::string name = entry.path().filename().string();
      for (const std::string& prefix : prefixes) {
        if (name.rfind(prefix, 0) != 0) continue;
        const std::string rest = name.substr(prefix.size());
        const long pid = std::strtol(rest.c_str(), nullptr, 10);
        if (pid > 0 && pid != ::getpid() && ::kill(static_cast<pid_t>(pid), 0) != 0 && errno == ESRCH)
          fs::remove(entry.path(), ec);
      }
    }
  }
}

}  // namespace

RunOutputs::RunOutputs() = default;

RunOutputs::~RunOutputs() {
  staged_.clear();  // removes the temporaries not committed
  if (committed_) return;
  std::error_code ec;
  for (auto it = created_folders_.rbegin(); it != created_folders_.rend(); ++it) fs::remove(*it, ec);  // if empty
}

void RunOutputs::input(const std::string& flag, const std::string& path) {
  std::error_code ec;
  if (!path.empty() && fs::exists(path, ec)) inputs_.push_back({flag, path});
}

void RunOutputs::inputs(const std::string& flag, const std::vector<std::string>& paths) {
  for (const std::string& p : paths) input(flag, p);
}

void RunOutputs::input_folder(const std::string& flag, const std::string& path) {
  std::error_code ec;
  if (!path.empty() && fs::is_directory(path, ec)) input_folders_.push_back({flag, path});
}

void RunOutputs::output(const std::string& flag, const std::string& path) {
  if (!path.empty()) outputs_.push_back({flag, path});
}

void RunOutputs::output_folder(const std::string& flag, const std::string& path, const std::vector<std::string>& names) {
  if (path.empty()) return;
  output_folders_.push_back({flag, path});
  for (const std::string& n : names) outputs_.push_back({flag, (fs::path(path) / n).string()});
}

void RunOutputs::check() {
  std::error_code ec;
  for (const Named& f : output_folders_) {
    if (fs::exists(f.path, ec) && !fs::is_directory(f.path, ec))
      throw InputError(f.flag + " " + f.path + ": is a file, not a folder");
    for (const Named& in : inputs_)
      if (same_file(f.path, in.path)) throw InputError(f.flag + " " + f.path + ": is the input " + in.flag + " " + in.path);
    if (!fs::exists(f.path, ec)) {
      const std::string parent = folder_of(f.path);
      if (!fs::is_directory(parent, ec))
        throw InputError(f.flag + " " + f.path + ": the folder " + parent + " does not exist");
      if (!writable(parent)) throw InputError(f.flag + " " + f.path + ": cannot create it: " + parent + " is not writable");
      fs::create_directory(f.path, ec);
      if (ec) throw InputError(f.flag + " " + f.path + ": cannot create the folder: " + ec.message());
      created_folders_.push_back(f.path);
    } else if (!writable(f.path)) {
      throw InputError(f.flag + " " + f.path + ": the folder is not writable");
    }
  }
  for (std::size_t i = 0; i < outputs_.size(); ++i) {
    const Named& o = outputs_[i];
    if (fs::is_directory(o.path, ec)) throw InputError(o.flag + " " + o.path + ": is a folder; give a file name");
    const std::string folder = folder_of(o.path);
    if (!fs::is_directory(folder, ec)) throw InputError(o.flag + " " + o.path + ": the folder " + folder + " does not exist");
    if (!writable(folder)) throw InputError(o.flag + " " + o.path + ": the folder " + folder + " is not writable");
    for (const Named& in : inputs_)
      if (same_file(o.path, in.path))
        throw InputError(o.flag + " " + o.path + ": is the input " + in.flag + " " + in.path +
                         "; writing it would destroy the input: give another output name");
    for (const Named& in : input_folders_) {
      const std::string folder_path = resolved(in.path) + "/";
      if (resolved(o.path).rfind(folder_path, 0) == 0)
        throw InputError(o.flag + " " + o.path + ": lies inside the input folder " + in.flag + " " + in.path +
                         ", whose files are read as inputs: write it elsewhere");
    }
    for (std::size_t j = 0; j < i; ++j)
      if (same_file(o.path, outputs_[j].path))
        throw InputError(o.flag + " " + o.path + " and " + outputs_[j].flag + " " + outputs_[j].path +
                         " name the same file: give each output its own name");
  }
  std::vector<std::string> targets;
  for (const Named& o : outputs_) targets.push_back(o.path);
  remove_stale_temporaries(targets);
}

std::string RunOutputs::stage(const std::string& path) {
  staged_.push_back(std::make_unique<AtomicFile>(path));
  return staged_.back()->temp_path();
}

void RunOutputs::commit() {
  for (auto& f : staged_) f->commit();
  committed_ = true;
}

}  // namespace isohypse
