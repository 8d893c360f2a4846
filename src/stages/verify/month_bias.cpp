#include "stages/verify/month_bias.hpp"

#include <map>

#include "stages/verify/case_scores.hpp"

namespace isohypse::verification {

nlohmann::json frequency_bias_by_month(const Cases& cases, const std::vector<std::string>& states) {
  std::map<int, std::vector<std::size_t>> months;
  for (std::size_t i = 0; i < cases.list.size(); ++i)
    if (cases.list[i].lead >= 1) months[cases.list[i].month].push_back(i);
  nlohmann::json by_month = nlohmann::json::object();
  for (const auto& [month, idx] : months) by_month[std::to_string(month)] = frequency_bias_json(cases, idx, states);
  return by_month;
}

}  // namespace isohypse::verification
