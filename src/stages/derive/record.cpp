#include "stages/derive/record.hpp"

#include <malloc.h>
#include <spdlog/spdlog.h>

namespace isohypse::derive_steps {

Record read_record(const DeriveConfig& cfg, const DeriveProgress& progress) {
  Record rec;
  rec.paths = expand_paths(cfg.inputs);
  ReadOptions ro;
  ro.variable = cfg.variable;
  ro.level_hpa = cfg.level_hpa;
  ro.domain = cfg.domain;
  ro.daily_means = cfg.daily_mean;
  rec.field = read_heights(rec.paths, ro, &rec.report, [&](std::size_t done, std::size_t total) {
    if (progress) progress("read", static_cast<int>(done), static_cast<int>(total));
  });
  const ReadReport& rep = rec.report;
  if (!rep.duplicates.empty())
    spdlog::warn("{} duplicate dates in the inputs (first kept), e.g. {}", rep.duplicates.size(),
                 to_string(rep.duplicates.front()));
  if (rep.missing_days) spdlog::info("{} days missing from the record in {} gaps", rep.missing_days, rep.gaps.size());
  malloc_trim(0);  // the read buffers go back to the system (glibc keeps freed memory otherwise): a lower peak
  return rec;
}

}  // namespace isohypse::derive_steps
