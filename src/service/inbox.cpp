#include "isohypse/service/inbox.hpp"
#include "isohypse/base/vocabulary.hpp"

#include <spdlog/spdlog.h>

#include <chrono>
#include <ctime>
#include <filesystem>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/forecast.hpp"

namespace isohypse {

namespace fs = std::filesystem;


namespace {

void make_folder(const std::string& path) {
  std::error_code ec;
  fs::create_directories(path, ec);
  if (!fs::is_directory(path)) throw InputError(path + ": cannot create the folder: " + ec.message());
}

bool is_forecast_name(const std::string& name) {
  return name.size() > 3 && name[0] != '.' && name.compare(name.size() - 3, 3, ".nc") == 0;
}

// Moves `from` into `folder`, adding .1, .2, ... rather than overwriting an earlier file of that name.
std::string move_into(const std::string& from, const std::string& folder) {
  const std::string name = fs::path(from).filename().string();
  fs::path to = fs::path(folder) / name;
  for (int i = 1; fs::exists(to); ++i) to = fs::path(folder) / (name + "." + std::to_string(i));
  fs::rename(from, to);  // same file system: atomic
  return to.string();
}

// A file that fails to open is retried while it changed within this many polls or seconds (a writer that paused),
// and quarantined only once it has stayed the same for both and still cannot be read. The seconds matter when
// polls are quick: a copy that stalls for a few seconds is common practice on a loaded disk or network share.
constexpr int kSettlePolls = 3;
constexpr auto kSettleTime = std::chrono::seconds(5);

using Clock = std::chrono::steady_clock;

// Where a symbolic link in the inbox leads, when that is a regular file inside the inbox folder; else "" and
// `why` says what is wrong. A link out of the inbox would let whoever can write the inbox make the service read
// (and move into processed/ a link to) any file it can read.
std::string link_target_inside(const fs::path& link, const fs::path& inbox, std::string& why) {
  std::error_code ec;
  const fs::path target = fs::canonical(link, ec);
  if (ec) {
    why = "a symbolic link that leads nowhere (" + ec.message() + ")";
    return {};
  }
  const fs::path root = fs::canonical(inbox, ec);
  const auto rel = target.lexically_relative(root);
  if (ec || rel.empty() || *rel.begin() == "..") {
    why = "a symbolic link to " + target.string() + ", outside the inbox " + root.string() + ": refused";
    return {};
  }
  if (!fs::is_regular_file(target, ec)) {
    why = "a symbolic link to " + target.string() + ", which is not a regular file";
    return {};
  }
  return target.string();
}

// The initialisation of one file, metadata only.
Initialisation scan_one(const std::string& path, const std::string& variable, const Domain& domain) {
  std::vector<Initialisation> inits = scan_forecasts({path}, variable, domain);
  if (inits.size() != 1)
    throw DataError(path + ": expected one initialisation per file, found " + std::to_string(inits.size()));
  return std::move(inits.front());
}

}  // namespace

Inbox::Inbox(const std::string& folder, const Domain& domain, std::string variable, int expected_members)
    : folder_(folder),
      processed_dir_((fs::path(folder) / "processed").string()),
      quarantine_dir_((fs::path(folder) / "quarantine").string()),
      domain_(domain),
      variable_(std::move(variable)),
      expected_(expected_members) {
  make_folder(folder_);
  make_folder(processed_dir_);
  make_folder(quarantine_dir_);
  for (const auto& e : fs::directory_iterator(processed_dir_)) {
    const std::string name = e.path().filename().string();
    if (!e.is_regular_file() || !is_forecast_name(name)) continue;
    try {
      processed_[to_string(scan_one(e.path().string(), variable_, domain_).init_real)].push_back(e.path().string());
    } catch (const Error& ex) {
      spdlog::warn("inbox: processed file {} cannot be scanned ({}); not used", e.path().string(), ex.what());
    }
  }
  publish_state();
}

bool Inbox::scan_entry(const std::string& name, Entry& e) {
  const std::string path = (fs::path(folder_) / name).string();
  try {
    Initialisation in = scan_one(path, variable_, domain_);
    e.date = to_string(in.init_real);
    e.members = static_cast<int>(in.members.size());
    e.scanned = true;
    return true;
  } catch (const Error& ex) {
    if (e.settled()) {
      e.retrying = false;
      quarantine(path, ex.what());
      return false;
    }
    // Still settling: a writer that paused leaves a file that cannot be read yet. Tried again next poll.
    if (!e.retrying)
      spdlog::info("inbox: {} cannot be read yet ({}); it changed within the last {} polls or {} s, so it is tried again",
                   path, ex.what(), kSettlePolls, kSettleTime.count());
    e.retrying = true;
    return false;
  }
}

// The inbox's forecast files now, each with its size, time and how many polls it has stayed so; links out of
// the inbox are quarantined on the way.
std::map<std::string, Inbox::Entry> Inbox::listing() {
  std::map<std::string, Entry> now;
  std::error_code ec;
  for (const auto& de : fs::directory_iterator(folder_, ec)) {
    const std::string name = de.path().filename().string();
    std::error_code fec;
    if (!is_forecast_name(name)) continue;
    if (de.is_symlink(fec)) {
      std::string why;
      if (link_target_inside(de.path(), folder_, why).empty()) {
        quarantine(de.path().string(), why);
        continue;
      }
    }
    if (!de.is_regular_file(fec)) continue;
    Entry e;
    e.changed_at = Clock::now();
    e.size = de.file_size(fec);
    e.mtime = de.last_write_time(fec).time_since_epoch().count();
    if (fec) continue;  // vanished between listing and stat
    auto old = files_.find(name);
    if (old != files_.end() && old->second.size == e.size && old->second.mtime == e.mtime) {
      e = old->second;
      ++e.stable_polls;
    }
    now[name] = e;
  }
  if (ec) spdlog::error("inbox: cannot list {}: {}", folder_, ec.message());
  return now;
}

std::vector<InboxGroup> Inbox::poll() {
  files_ = listing();
  std::map<std::string, InboxGroup> by_date;
  bool settled = true;  // no file changed since the previous poll, every file could be read
  for (auto it = files_.begin(); it != files_.end();) {
    Entry& e = it->second;
    if (e.stable_polls >= 1 && !e.scanned && !scan_entry(it->first, e) && !e.retrying) {
      it = files_.erase(it);  // quarantined
      continue;
    }
    if (!e.scanned) settled = false;
    if (e.scanned) {
      InboxGroup& g = by_date[e.date];
      g.date = e.date;
      g.files.push_back((fs::path(folder_) / it->first).string());
      g.members += e.members;
    }
    ++it;
  }
  // A file still arriving may belong to any initialisation (its date is unknown until it can be opened), so
  // nothing is released while one is.
  std::vector<InboxGroup> ready;
  if (settled)
    for (auto& [date, g] : by_date)
      if (g.members >= std::max(expected_, 1)) ready.push_back(g);
  publish_state();
  return ready;
}

std::vector<InboxGroup> Inbox::group(const std::vector<std::string>& names,
                                     std::vector<std::pair<std::string, std::string>>& rejected) {
  std::map<std::string, InboxGroup> by_date;
  for (const auto& name : names) {
    const std::string path = (fs::path(folder_) / name).string();
    if (!is_forecast_name(name) || name.find('/') != std::string::npos || !fs::is_regular_file(path))
      throw InputError("'" + name + "' is not a forecast file (*.nc) in the inbox");
  }
  for (const auto& name : names) {
    const std::string path = (fs::path(folder_) / name).string();
    std::string why;
    if (fs::is_symlink(path) && link_target_inside(path, folder_, why).empty()) {
      quarantine(path, why);
      rejected.emplace_back(name, why);
      continue;
    }
    Entry e;  // a file the poller has not yet seen settle counts as changing
    if (auto known = files_.find(name); known != files_.end()) {
      e.stable_polls = known->second.stable_polls;
      e.changed_at = known->second.changed_at;
    }
    if (!scan_entry(name, e)) {
      rejected.emplace_back(name, e.retrying ? "cannot be read yet and changed within the last " +
                                                   std::to_string(kSettlePolls) + " polls or " +
                                                   std::to_string(kSettleTime.count()) +
                                                   " s (still being written?): left in the inbox"
                                             : "cannot be read (see quarantine/" + name + ".reason.txt)");
      continue;
    }
    InboxGroup& g = by_date[e.date];
    g.date = e.date;
    g.files.push_back((fs::path(folder_) / name).string());
    g.members += e.members;
  }
  std::vector<InboxGroup> out;
  for (auto& [date, g] : by_date) out.push_back(std::move(g));
  return out;
}

std::vector<std::pair<std::string, std::string>> Inbox::check(const InboxGroup& group, const Grid& target,
                                                               std::vector<std::string>& waiting) {
  std::vector<std::pair<std::string, std::string>> bad;
  for (const auto& path : group.files) {
    try {
      Initialisation in = scan_one(path, variable_, domain_);
      read_members(in, Regridder(in.native_grid, target, path), variable_);
    } catch (const Error& ex) {
      const std::string name = fs::path(path).filename().string();
      auto known = files_.find(name);
      if (known == files_.end() || !known->second.settled()) {
        // Its header could be read but not its values: a writer that paused. Scanned again when it settles.
        spdlog::info("inbox: {} cannot be read yet ({}); it changed within the last {} polls or {} s, so it is tried "
                     "again", path, ex.what(), kSettlePolls, kSettleTime.count());
        if (known != files_.end()) known->second.scanned = false;
        waiting.push_back(name);
        continue;
      }
      bad.emplace_back(name, ex.what());
      quarantine(path, ex.what());
    }
  }
  return bad;
}

bool Inbox::Entry::settled() const {
  return stable_polls >= kSettlePolls && Clock::now() - changed_at >= kSettleTime;
}

void Inbox::quarantine(const std::string& path, const std::string& reason) {
  spdlog::warn("inbox: quarantining {}: {}", path, reason);
  try {
    const std::string moved = move_into(path, quarantine_dir_);
    write_file_atomically(moved + ".reason.txt", "quarantined " + utc_timestamp_now() + "\n" + reason + "\n");
  } catch (const std::exception& ex) {
    spdlog::error("inbox: cannot quarantine {}: {}", path, ex.what());
  }
  // files_ is left to the caller (poll() may be iterating over it); the next poll's listing drops the file anyway.
  publish_state();
}

void Inbox::mark_processed(const InboxGroup& group) {
  auto& slot = processed_[group.date];
  if (!slot.empty()) {
    const std::string replaced = (fs::path(processed_dir_) / "replaced").string();
    make_folder(replaced);
    for (const auto& old : slot) {
      std::error_code ec;
      if (fs::exists(old, ec)) move_into(old, replaced);
    }
    slot.clear();
  }
  for (const auto& path : group.files) {
    slot.push_back(move_into(path, processed_dir_));
    files_.erase(fs::path(path).filename().string());
  }
  publish_state();
}

std::vector<std::string> Inbox::processed_before(const std::string& date, int count) const {
  std::vector<std::string> out;
  auto end = processed_.lower_bound(date);
  auto first = processed_.begin();
  if (count > 0 && std::distance(first, end) > count) first = std::prev(end, count);
  for (auto it = first; it != end; ++it) out.insert(out.end(), it->second.begin(), it->second.end());
  return out;
}

void Inbox::publish_state() {
  nlohmann::json waiting = nlohmann::json::array();
  std::map<std::string, nlohmann::json> by_date;
  int changing = 0;
  for (const auto& [name, e] : files_) {
    if (!e.scanned) {
      ++changing;
      continue;
    }
    auto& w = by_date[e.date];
    if (w.is_null()) w = {{"initialisation", e.date}, {"files", 0}, {"members", 0}, {"expected_members", expected_}};
    w["files"] = w["files"].get<int>() + 1;
    w["members"] = w["members"].get<int>() + e.members;
  }
  for (auto& [d, w] : by_date) waiting.push_back(std::move(w));
  int quarantined = 0;
  std::error_code ec;
  for (const auto& de : fs::directory_iterator(quarantine_dir_, ec))
    if (!de.path().filename().string().ends_with(".reason.txt")) ++quarantined;
  nlohmann::json s = {{"waiting", waiting},
                      {"files_not_yet_scanned", changing},
                      {"processed_initialisations", processed_.size()},
                      {"quarantined_files", quarantined}};
  std::lock_guard lock(state_mutex_);
  state_ = std::move(s);
}

nlohmann::json Inbox::state() const {
  std::lock_guard lock(state_mutex_);
  return state_;
}

}  // namespace isohypse
