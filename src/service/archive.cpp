#include "isohypse/service/archive.hpp"

#include <spdlog/spdlog.h>

#include <cctype>
#include <filesystem>

#include "isohypse/base/atomic_file.hpp"
#include "isohypse/base/calendar.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse {

namespace fs = std::filesystem;

bool is_issue_date(std::string_view t) {
  if (t.size() != 10 || t[4] != '-' || t[7] != '-') return false;
  for (std::size_t i : {0, 1, 2, 3, 5, 6, 8, 9})
    if (!std::isdigit(static_cast<unsigned char>(t[i]))) return false;
  auto num = [&](std::size_t a, std::size_t n) { return std::stoi(std::string(t.substr(a, n))); };
  return is_valid_date(num(0, 4), num(5, 2), num(8, 2), Calendar::ProlepticGregorian);
}

GuidanceArchive::GuidanceArchive(const std::string& root) : folder_((fs::path(root) / "guidance").string()) {
  std::error_code ec;
  fs::create_directories(folder_, ec);
  if (!fs::is_directory(folder_)) throw InputError(folder_ + ": cannot create the archive folder: " + ec.message());
  for (const auto& e : fs::directory_iterator(folder_, ec)) {
    const std::string name = e.path().filename().string();
    if (!e.is_regular_file() || name.size() != 15 || e.path().extension() != ".json") continue;
    const std::string date = name.substr(0, 10);
    if (!is_issue_date(date)) continue;
    // Parse once at start-up, so that the API never serves a foreign or broken document.
    try {
      auto content = std::make_shared<const std::string>(read_file(e.path().string()));
      nlohmann::json g = nlohmann::json::parse(*content);
      if (g.value("issue_date", "") != date) {
        spdlog::warn("archive: {} holds issue_date {}; left out", e.path().string(), g.value("issue_date", "(none)"));
        continue;
      }
      index_[date] = nullptr;  // read again on first request: keeps start-up memory small
    } catch (const std::exception& ex) {
      spdlog::warn("archive: {} is not readable guidance ({}); left out", e.path().string(), ex.what());
    }
  }
  if (ec) throw InputError(folder_ + ": cannot list the archive: " + ec.message());
}

std::string GuidanceArchive::path_of(const std::string& date) const {
  if (!is_issue_date(date)) throw InputError("issue date '" + date + "' is not YYYY-MM-DD");
  return (fs::path(folder_) / (date + ".json")).string();
}

std::string GuidanceArchive::store(const nlohmann::json& guidance) {
  const std::string date = guidance.is_object() ? guidance.value("issue_date", "") : "";
  const std::string path = path_of(date);
  auto content = std::make_shared<const std::string>(guidance.dump(1) + "\n");
  write_file_atomically(path, *content);
  std::unique_lock lock(mutex_);
  index_[date] = content;
  return date;
}

std::vector<std::string> GuidanceArchive::dates(const std::string& from, const std::string& to) const {
  std::shared_lock lock(mutex_);
  std::vector<std::string> out;
  // YYYY-MM-DD with four-digit years sorts as text in date order.
  for (auto it = from.empty() ? index_.begin() : index_.lower_bound(from); it != index_.end(); ++it) {
    if (!to.empty() && it->first > to) break;
    out.push_back(it->first);
  }
  return out;
}

std::optional<std::string> GuidanceArchive::latest() const {
  std::shared_lock lock(mutex_);
  if (index_.empty()) return std::nullopt;
  return index_.rbegin()->first;
}

std::size_t GuidanceArchive::size() const {
  std::shared_lock lock(mutex_);
  return index_.size();
}

std::shared_ptr<const std::string> GuidanceArchive::text(const std::string& date) const {
  {
    std::shared_lock lock(mutex_);
    auto it = index_.find(date);
    if (it == index_.end()) return nullptr;
    if (it->second) return it->second;
  }
  // First request since start-up: read outside the lock, then publish.
  auto content = std::make_shared<const std::string>(read_file(path_of(date)));
  std::unique_lock lock(mutex_);
  auto& slot = index_[date];
  if (!slot) slot = content;  // a concurrent store() wins: its text is newer
  return slot;
}

}  // namespace isohypse
