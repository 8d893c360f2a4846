// The guidance archive: a folder of guidance JSON documents, one per issue
// date, ROOT/guidance/YYYY-MM-DD.json. The folder is the truth: the index is
// rebuilt from it when the archive is opened, so a restart loses nothing.
// Each document is written atomically (temporary file, then rename), so a
// reader sees the old or the new file, never a partial one, and a full disk
// or a crash mid-write leaves the previous document in place.
//
// Thread safety: every member function may be called from any thread;
// store() may run while others read.
#pragma once

#include <memory>
#include <mutex>
#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <shared_mutex>
#include <string>
#include <string_view>
#include <vector>

namespace isohypse {

// True for exactly "YYYY-MM-DD" (four-digit year) naming a day that exists
// in the proleptic Gregorian calendar. The only form of date the archive
// accepts in file names and the service in URLs, so no other text can reach
// a path.
bool is_issue_date(std::string_view text);

class GuidanceArchive {
public:
  // Creates ROOT/guidance if needed and indexes the documents in it. Files
  // not named YYYY-MM-DD.json (temporaries of an interrupted write, notes)
  // are ignored; a document that is not JSON or whose issue_date differs
  // from its name is left out of the index with a warning in the log.
  // Throws InputError naming the folder when it cannot be created or read.
  explicit GuidanceArchive(const std::string& root);

  // Writes the document under its "issue_date", replacing an earlier one of
  // that date. Returns the issue date. Throws InputError (no or a malformed
  // issue_date, a write failure such as a full disk); the archive is then as
  // it was.
  std::string store(const nlohmann::json& guidance);

  // Issue dates, ascending; optionally only those in [from, to] (inclusive,
  // YYYY-MM-DD; an empty bound is open).
  std::vector<std::string> dates(const std::string& from = {}, const std::string& to = {}) const;
  std::optional<std::string> latest() const;
  std::size_t size() const;
  // The document's text as stored, shared and immutable; nullptr when the
  // archive has no document of that date (or `date` is not YYYY-MM-DD).
  std::shared_ptr<const std::string> text(const std::string& date) const;
  // ROOT/guidance/DATE.json (whether or not it exists). Throws InputError
  // when `date` is not YYYY-MM-DD.
  std::string path_of(const std::string& date) const;
  const std::string& folder() const { return folder_; }

private:
  std::string folder_;
  mutable std::shared_mutex mutex_;
  // date -> cached text (nullptr until first read).
  mutable std::map<std::string, std::shared_ptr<const std::string>> index_;
};

}  // namespace isohypse
