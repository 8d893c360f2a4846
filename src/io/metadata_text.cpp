#include "io/metadata_text.hpp"

#include <algorithm>
#include <cctype>
#include <sstream>

namespace isohypse::detail {

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
  return s;
}

std::string join(const std::vector<std::string>& items, const std::string& sep) {
  std::string out;
  for (std::size_t i = 0; i < items.size(); ++i) out += (i ? sep : "") + items[i];
  return out;
}

std::string number_text(double v) {
  std::ostringstream o;
  o << v;
  return o.str();
}

}  // namespace isohypse::detail
