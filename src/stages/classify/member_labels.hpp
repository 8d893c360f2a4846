// Classify, step 3: label the members. Each member of the lagged ensemble is
// read, regridded, turned into anomalies against its initialisation's model
// climate, smoothed with the regime model's running mean, projected onto the
// EOFs and given the nearest regime (or no regime) on every lead day.
#pragma once

#include <nlohmann/json.hpp>
#include <vector>

#include "isohypse/numerics/ensemble_stats.hpp"
#include "isohypse/stages/classify.hpp"
#include "stages/classify/lagged_ensemble.hpp"
#include "stages/classify/model_climate.hpp"

namespace isohypse {

// Seconds of work summed over the threads (see ClassifyTimings).
struct MemberWorkTimes {
  double read_s = 0, unpack_s = 0, label_s = 0;
  int threads = 0;  // threads that labelled members
};

struct MemberLabels {
  // One per member, initialisation by initialisation in the ensemble's
  // order: the member's regime (index into model_states) on each lead day,
  // its initialisation's weight, and lead 0 as an offset from the issue date.
  std::vector<MemberTrack> tracks;
  // Per member, in the order of tracks, when cfg.member_detail (else empty):
  // its labels by state name and its correlation with the nearest centroid.
  std::vector<nlohmann::json> detail;
  MemberWorkTimes times;
};

// Labels every member on cfg.threads threads: each thread takes the next
// member, reads it under a lock (netCDF-C is not thread-safe), then
// unpacks, projects and labels it while another thread reads.
// report("classify", done, members). The result does not depend on the
// threads. Throws the reader's DataError for a member with missing values;
// InternalError when `climate` does not match the ensemble (a bug).
MemberLabels label_members(const RegimeModel& model, const ClassifyConfig& cfg, const LaggedEnsemble& ensemble,
                           const ModelClimate& climate, const ClassifyProgress& report);

}  // namespace isohypse
