// The inbox: a folder the service polls for forecast files (*.nc).
//
//   INBOX/*.nc            waiting files (hidden files, other names and
//                         sub-folders are ignored)
//   INBOX/processed/      inputs of initialisations already classified; they
//                         form the lagged ensemble of later runs
//   INBOX/quarantine/     files that could not be read, each with
//                         FILE.reason.txt saying why
//
// An initialisation is ready when the files of its date hold at least the
// expected number of members (scan_forecasts counts them; 0 expected: any
// number) and no inbox file changed size or modification time since the
// previous poll (a file still arriving may belong to any initialisation).
// A file is only opened once it has been stable for one poll. One that then
// cannot be read is tried again at each poll while it changed within the
// last 3 polls or 5 seconds (a writer that paused mid-copy), and quarantined
// only once it has stayed the same for both and still cannot be read; until
// then no initialisation is released (the file may belong to any).
//
// Symbolic links: a link named like a forecast is followed only when it
// resolves to a regular file inside the inbox folder; any other link is
// moved (the link itself, never its target) to INBOX/quarantine/ with the
// reason, and logged.
//
// Thread safety: poll(), check(), quarantine() and mark_processed() read
// netCDF files or move files and must be called from one thread (the
// service's worker); state() may be called from any thread.
#pragma once

#include <chrono>
#include <cstdint>
#include <map>
#include <mutex>
#include <nlohmann/json.hpp>
#include <string>
#include <utility>
#include <vector>

#include "isohypse/base/field.hpp"

namespace isohypse {

// The files of one initialisation.
struct InboxGroup {
  std::string date;                // initialisation, real calendar, YYYY-MM-DD
  std::vector<std::string> files;  // full paths
  int members = 0;
};

class Inbox {
public:
  // Creates the folders if needed and indexes INBOX/processed (a processed
  // file that cannot be scanned is left out with a warning). domain and
  // variable are those of the regime model (see scan_forecasts). Throws
  // InputError naming a folder that cannot be created.
  Inbox(const std::string& folder, const Domain& domain, std::string variable, int expected_members);

  // One poll: the initialisations that became ready (oldest first).
  // Unreadable stable files are quarantined on the way.
  std::vector<InboxGroup> poll();

  // The named inbox files (plain file names) grouped by initialisation,
  // whatever their member count or age: for a run asked for by hand.
  // Throws InputError naming a file that is not in the inbox; a file that
  // cannot be scanned is quarantined (or left in the inbox while it is still
  // changing, see above) and listed in `rejected` (name, reason); so is a
  // symbolic link out of the inbox.
  std::vector<InboxGroup> group(const std::vector<std::string>& names,
                                std::vector<std::pair<std::string, std::string>>& rejected);

  // Reads every member of every file of the group onto `target` (the regime
  // grid): the full check that a file can be classified. Quarantines each
  // file that fails and returns them with their reasons (empty: all good);
  // a failing file that changed within the last polls (or that the poller
  // has not seen settle) is not quarantined but named in `waiting`, to be
  // scanned and tried again.
  std::vector<std::pair<std::string, std::string>> check(const InboxGroup& group, const Grid& target,
                                                         std::vector<std::string>& waiting);

  // Moves `path` to INBOX/quarantine/ and writes NAME.reason.txt beside it.
  void quarantine(const std::string& path, const std::string& reason);

  // Moves the group's files into INBOX/processed/; processed files of the
  // same initialisation date that it replaces move to processed/replaced/.
  void mark_processed(const InboxGroup& group);

  // Processed files of the latest `count` initialisations strictly before
  // `date` (all of them when count <= 0), for the lagged ensemble.
  std::vector<std::string> processed_before(const std::string& date, int count) const;

  // For /health: waiting initialisations (date, files, members, expected),
  // files still changing, processed initialisations, quarantined
  // files.
  nlohmann::json state() const;

  const std::string& folder() const { return folder_; }

private:
  struct Entry {
    std::uintmax_t size = 0;
    std::int64_t mtime = 0;
    int stable_polls = 0;  // polls in a row that found the same size and time
    std::chrono::steady_clock::time_point changed_at;  // when a poll last found it new or changed
    bool scanned = false;
    bool retrying = false; // could not be read while it was still changing
    std::string date;      // when scanned
    int members = 0;
    bool settled() const;  // unchanged for long enough that a failure to read is the file's
  };
  bool scan_entry(const std::string& name, Entry& e);  // false: quarantined, or e.retrying
  std::map<std::string, Entry> listing();
  void publish_state();

  std::string folder_, processed_dir_, quarantine_dir_;
  Domain domain_;
  std::string variable_;
  int expected_;
  std::map<std::string, Entry> files_;                        // inbox file name -> entry (worker only)
  std::map<std::string, std::vector<std::string>> processed_; // date -> paths
  mutable std::mutex state_mutex_;
  nlohmann::json state_;
};

}  // namespace isohypse
