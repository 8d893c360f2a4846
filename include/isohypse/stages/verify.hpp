// The post-mortem: a season of regime guidance against what happened.
//   check the config | load guidance (same regime model) | observed labels
//   (files or the model's record) | build cases (issue date, lead,
//   probabilities, observed) | score by lead | score by window, with
//   intervals from moving blocks of consecutive issue dates | frequency bias by month | score the window
//   products (dominance probability, expected days) | raw against calibrated (the calibrated issues' raw and
//   calibrated probabilities over the same cases) | find episodes (caught, missed) | find false alarms |
//   report JSON [| HTML: render/report_page.hpp]
// Scores follow Wilks (2011), Statistical Methods in the Atmospheric
// Sciences, 3rd ed.; see scores.hpp for each formula's source.
#pragma once

#include <mutex>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/regime_model.hpp"

namespace isohypse {

// Block length of the moving-block bootstrap over consecutive issue dates
// behind every interval (numerics/block_bootstrap.hpp, Kuensch 1989).
struct BlockLength {
  bool automatic = false;  // Wilks (1997) from the lag-1 autocorrelation of each interval's per-issue hit rate
  int days = 0;            // > 0: blocks of this many days; 0 (not automatic): the guidance's lag span + 7 days
  // "N" (a whole number of days >= 1) or "auto". Throws InputError naming
  // --block-days for anything else.
  static BlockLength parse(const std::string& text);
  // "N", "auto" or "lag+7".
  std::string to_string() const;
};

struct VerifyConfig {
  std::vector<std::string> guidance;   // JSON files, folders (every *.json inside) or globs
  std::vector<std::string> observed;   // analysis/reanalysis files; empty: the model's own record
  std::string variable;
  std::optional<Date> from, to;        // valid dates (real calendar)
  std::vector<LeadWindow> windows = default_windows();
  int bootstrap_resamples = 1000;
  double confidence = 0.9;
  BlockLength block_length;            // default: lag span + 7 days
  int min_episode_days = 5;
  // An issue commits to a regime on a day when it is the most likely state,
  // ahead of the second by at least catch_margin and above its
  // climatological frequency by at least catch_excess: the rule for an
  // episode caught and for a false alarm.
  double catch_margin = 0.10;
  double catch_excess = 0.15;
  // Bins of fixed width 1 / reliability_bins over [0, 1] for the Brier
  // decomposition (five terms, Stephenson et al. 2008) and the reliability
  // diagram with its consistency bars (Broecker & Smith 2007).
  int reliability_bins = 10;
  // false: valid dates outside the model's season (RegimeModel::months) are
  // counted, not scored, and every skill score and the catch rule take the
  // season's climatological frequencies as reference. true (--all-months):
  // they are scored too, and every case's reference is the climatological
  // frequency of its valid date's calendar month over the model's whole
  // record; a case in a month the record never covers is an InputError.
  bool all_months = false;
  std::uint64_t seed = kDefaultSeed;

  // Throws InputError naming the setting (and its flag) for no guidance
  // path, from after to, fewer than 10 bootstrap resamples, a negative block
  // length, no windows or a
  // window that is not FIRST-LAST with 0 <= FIRST <= LAST, a confidence
  // outside (0, 1), min_episode_days below 1, catch_margin or catch_excess
  // outside [0, 1], or reliability_bins below 2 (--bins).
  void validate() const;
};

// Validates the config first (VerifyConfig::validate). Throws InputError for
// an empty archive, guidance from another regime model (naming the file and
// both model hashes), a period without observations or, with all_months, a
// valid month without a day in the model's record (naming month and file); DataError naming the
// file for guidance that is not valid JSON, not isohypse guidance, or lacks
// a required key or holds a value of the wrong type; InternalError for a
// broken precondition between its own steps (a bug).
nlohmann::json verify_guidance(const RegimeModel& model, const VerifyConfig& config);

// The same, holding `read_lock` only while the observed files are read (a
// caller that reads netCDF on other threads shares its lock: netCDF-C is not
// thread-safe); loading the guidance (JSON) and the scoring run without it.
nlohmann::json verify_guidance(const RegimeModel& model, const VerifyConfig& config, std::mutex& read_lock);

}  // namespace isohypse
