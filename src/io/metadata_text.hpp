// Internal to the readers: the text of file metadata as the readers compare
// it (lower case) and as their messages show it (lists, numbers).
#pragma once

#include <string>
#include <vector>

namespace isohypse::detail {

// ASCII lower case: attribute values are compared case-insensitively.
std::string lower(std::string s);
// The items separated by `sep`: "a, b, c".
std::string join(const std::vector<std::string>& items, const std::string& sep = ", ");
// A coordinate or level value as a message shows it: the shortest form
// (6 significant digits), "500", "2.5", "-180".
std::string number_text(double v);

}  // namespace isohypse::detail
