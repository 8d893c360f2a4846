#include "cli/options.hpp"

#include <filesystem>

#include "isohypse/base/error.hpp"
#include "isohypse/io/reader.hpp"

namespace isohypse::cli {

CLI::Option* add_windows_option(CLI::App* sub, std::vector<LeadWindow>& windows) {
  return sub->add_option_function<std::string>(
      "--windows", [&windows](const std::string& text) { windows = parse_windows(text); },
      "Lead-day windows (default 1-3,4-7,8-14,15-28,29-45)");
}

CLI::Option* add_variable_option(CLI::App* sub, std::string& variable, const std::string& of_what) {
  return sub->add_option("--variable", variable, of_what + " variable name (default: found automatically)");
}

CLI::Option* add_threads_option(CLI::App* sub, int& threads) {
  return sub->add_option("--threads", threads, "Threads (default: every core)");
}

CLI::Option* add_weights_option(CLI::App* sub, Weighting& weights) {
  return sub->add_option_function<std::string>(
      "--weights",
      [&weights](const std::string& text) {
        try {
          weights = Weighting::parse(text);
        } catch (const InputError& e) {  // the parser does not know which flag it reads
          throw InputError(std::string("--weights: ") + e.what());
        }
      },
      "equal | linear | exp:DAYS (decay with the age of the initialisation; default equal)");
}

CLI::Option* add_date_option(CLI::App* sub, const std::string& flag, std::optional<Date>& date,
                             const std::string& help) {
  return sub->add_option_function<std::string>(
      flag, [&date, flag](const std::string& text) { date = parse_date(text, Calendar::ProlepticGregorian, flag); },
      help);
}

void add_inputs(RunOutputs& run, const std::string& flag, const std::vector<std::string>& patterns, bool folders) {
  for (const std::string& pattern : patterns) {
    std::error_code ec;
    if (folders && std::filesystem::is_directory(pattern, ec)) {
      run.input_folder(flag, pattern);
      continue;
    }
    try {
      run.inputs(flag, expand_paths({pattern}));
    } catch (const InputError&) {
      // Nothing matches: the stage's reader says so, by name, in its own words.
    }
  }
}

}  // namespace isohypse::cli
