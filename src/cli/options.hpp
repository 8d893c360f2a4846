// Option builders: the flags several sub-commands share, bound straight to
// the fields of a stage's config (no copying from an argument struct), with
// one help text and one parser each. The config must outlive the parse (keep
// it in a shared_ptr captured by the sub-command's callback).
#pragma once

#include <CLI/CLI.hpp>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/base/calendar.hpp"
#include "isohypse/base/run_outputs.hpp"
#include "isohypse/base/vocabulary.hpp"
#include "isohypse/numerics/ensemble_stats.hpp"

namespace isohypse::cli {

// --windows "1-3,4-7": lead windows (parse_windows).
CLI::Option* add_windows_option(CLI::App* sub, std::vector<LeadWindow>& windows);
// --variable NAME: the height variable (empty: found automatically).
CLI::Option* add_variable_option(CLI::App* sub, std::string& variable, const std::string& of_what = "Height");
// --threads N: 0 is every core; the stage's config validation checks the range.
CLI::Option* add_threads_option(CLI::App* sub, int& threads);
// --weights equal | linear | exp:DAYS (Weighting::parse; its InputError prefixed with the flag).
CLI::Option* add_weights_option(CLI::App* sub, Weighting& weights);
// A date flag, YYYY-MM-DD in the real (proleptic Gregorian) calendar.
CLI::Option* add_date_option(CLI::App* sub, const std::string& flag, std::optional<Date>& date, const std::string& help);

// Declares the files of `patterns` (paths, globs and, with folders = true,
// folders) as inputs of `run`; a pattern that matches nothing is left to the
// stage's reader to report.
void add_inputs(RunOutputs& run, const std::string& flag, const std::vector<std::string>& patterns,
                bool folders = false);

}  // namespace isohypse::cli
