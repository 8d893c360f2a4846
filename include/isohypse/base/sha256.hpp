// SHA-256 (FIPS 180-4) of a file: the identity a regime model is cited by.
#pragma once

#include <string>

namespace isohypse {

// Lower-case hex digest. Throws InputError naming the path when it cannot be read.
std::string sha256_file(const std::string& path);

}  // namespace isohypse
