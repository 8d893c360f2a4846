// Derive, step "read the record": the configured inputs (globs expanded), the
// domain and level, as one daily field.
#pragma once

#include <string>
#include <vector>

#include "isohypse/base/field.hpp"
#include "isohypse/io/reader.hpp"
#include "isohypse/stages/derive.hpp"

namespace isohypse::derive_steps {

struct Record {
  std::vector<std::string> paths;  // the files read, in the order given
  Field field;                     // heights in metres, NaN where missing
  ReadReport report;               // calendar, duplicates, gaps, missing values
};

// Reads cfg.inputs (read_heights), reporting "read" progress per file; logs
// duplicate dates and gaps. Throws what expand_paths and read_heights throw.
Record read_record(const DeriveConfig& cfg, const DeriveProgress& progress);

}  // namespace isohypse::derive_steps
