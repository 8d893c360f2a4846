// The guidance archive: only YYYY-MM-DD names, an index rebuilt from the
// folder (a restart loses nothing), and atomic replacement.
#include <doctest/doctest.h>

#include <filesystem>
#include <fstream>
#include <unistd.h>

#include "isohypse/service/archive.hpp"
#include "isohypse/base/error.hpp"

using namespace isohypse;
namespace fs = std::filesystem;

TEST_CASE("archive: issue dates are exactly YYYY-MM-DD of a real day") {
  CHECK(is_issue_date("2025-12-20"));
  CHECK(is_issue_date("2024-02-29"));
  CHECK_FALSE(is_issue_date("2025-02-29"));
  CHECK_FALSE(is_issue_date("2025-13-01"));
  CHECK_FALSE(is_issue_date("2025-1-01"));
  CHECK_FALSE(is_issue_date("../../etc"));
  CHECK_FALSE(is_issue_date("2025-12-2x"));
  CHECK_FALSE(is_issue_date("2025-12-20/"));
  CHECK_FALSE(is_issue_date("/2025-12-20"));
  CHECK_FALSE(is_issue_date(""));
}

TEST_CASE("archive: store, list, reopen, ignore strangers") {
  const fs::path root = fs::temp_directory_path() / ("isohypse-archive-test-" + std::to_string(::getpid()));
  fs::remove_all(root);
  {
    GuidanceArchive a(root.string());
    CHECK(a.size() == 0);
    CHECK_FALSE(a.latest());
    a.store({{"issue_date", "2025-12-02"}, {"x", 1}});
    a.store({{"issue_date", "2025-12-01"}, {"x", 2}});
    a.store({{"issue_date", "2025-12-02"}, {"x", 3}});  // replaces
    CHECK(a.dates() == std::vector<std::string>{"2025-12-01", "2025-12-02"});
    CHECK(a.dates("2025-12-02", "") == std::vector<std::string>{"2025-12-02"});
    CHECK(a.dates("", "2025-12-01") == std::vector<std::string>{"2025-12-01"});
    CHECK(*a.latest() == "2025-12-02");
    CHECK(nlohmann::json::parse(*a.text("2025-12-02"))["x"] == 3);
    CHECK(a.text("2025-12-03") == nullptr);
    CHECK(a.text("../secret") == nullptr);
    CHECK_THROWS_AS(a.store({{"issue_date", "../../x"}}), InputError);
    CHECK_THROWS_AS(a.store({{"no_date", 1}}), InputError);
    CHECK(a.size() == 2);
  }
  // Strangers: an interrupted write's temporary, a file whose date differs from its name, broken JSON.
  std::ofstream(root / "guidance" / ".2025-12-03.json.tmp.1.0") << "{\"issue_date\": \"2025-12-03\"";
  std::ofstream(root / "guidance" / "2025-12-04.json") << "{\"issue_date\": \"2025-12-05\"}";
  std::ofstream(root / "guidance" / "2025-12-06.json") << "{\"issue_da";
  GuidanceArchive b(root.string());
  CHECK(b.dates() == std::vector<std::string>{"2025-12-01", "2025-12-02"});
  CHECK(nlohmann::json::parse(*b.text("2025-12-01"))["x"] == 2);
  fs::remove_all(root);
}
