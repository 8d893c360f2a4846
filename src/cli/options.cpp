#include "cli/options.hpp"

#include "isohypse/base/error.hpp"

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

}  // namespace isohypse::cli
