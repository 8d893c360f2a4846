// The outputs of one command run, checked before any work and put in place
// together at the end, so that a run never overwrites one of its inputs and
// a failure anywhere leaves none of its outputs.
//
// Before the work (check()):
// - every output is compared with every input and with the other outputs,
//   as files (the same file also through links, hard or symbolic) and as
//   paths; an output inside an input folder is refused too;
// - every output's folder must exist (or, for a folder output, its parent)
//   and be writable, shown by creating and removing a file there; a file
//   output may not be an existing folder, nor a folder output a file;
// - temporary files left beside the outputs by runs that died (the
//   AtomicFile names of a process that no longer exists) are removed.
// After the work: stage() gives each output a temporary path beside it;
// commit() renames them all into place only once every one is written. A
// RunOutputs destroyed before commit() removes its temporaries and a folder
// output it created.
#pragma once

#include <memory>
#include <string>
#include <vector>

namespace isohypse {

class AtomicFile;

class RunOutputs {
public:
  RunOutputs();
  ~RunOutputs();
  RunOutputs(const RunOutputs&) = delete;
  RunOutputs& operator=(const RunOutputs&) = delete;

  // Inputs, each named by the flag that gave it (for the messages). Paths
  // that do not exist are skipped here (their reader reports them).
  void input(const std::string& flag, const std::string& path);
  void inputs(const std::string& flag, const std::vector<std::string>& paths);
  // A folder whose files are inputs: no output may lie inside it.
  void input_folder(const std::string& flag, const std::string& path);
  // An output file; an empty path is no output.
  void output(const std::string& flag, const std::string& path);
  // A folder that receives the files `names` (created by check() when
  // missing; its parent must exist).
  void output_folder(const std::string& flag, const std::string& path, const std::vector<std::string>& names);

  // Throws InputError naming the flags and paths at fault.
  void check();
  // The temporary path to write `path` (an output file, or a folder
  // output's folder / name) to.
  std::string stage(const std::string& path);
  // Renames every staged output into place (in the order staged).
  void commit();

private:
  struct Named {
    std::string flag, path;
  };
  std::vector<Named> inputs_, input_folders_, outputs_, output_folders_;
  std::vector<std::string> created_folders_;
  std::vector<std::unique_ptr<AtomicFile>> staged_;
  bool committed_ = false;
};

}  // namespace isohypse
