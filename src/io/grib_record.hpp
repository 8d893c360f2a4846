// Internal to io/reader: one GRIB file of analyses (or short forecasts) seen
// as the record reader sees a NetCDF file: one member, a time axis of valid
// times (initialisation plus lead, on the proleptic Gregorian calendar, UTC)
// and reads of time steps over the domain.
//
// The file's geopotential or geopotential-height messages at the level asked
// for are indexed by scan_grib_heights (grib_index.hpp, which refuses other
// parameters, missing levels, unsupported or mixed grids, damaged messages
// and two messages of one member, initialisation and lead); the time steps
// are the messages in order of valid time. Two messages of one valid time
// from different initialisations are both kept, and the record reader
// reports the second as a duplicate, as it does for NetCDF. Several members
// in one file are reported by info().members (the reader refuses them).
#pragma once

#include <armadillo>
#include <optional>
#include <string>
#include <vector>

#include "isohypse/io/dataset.hpp"
#include "isohypse/io/grib_index.hpp"

namespace isohypse::detail {

class GribRecordFile {
public:
  // Scans `path` for height messages at `level_hpa`; `variable`, when not
  // empty, keeps only messages of that shortName ("z" or "gh"). Throws
  // InputError (missing file) or DataError naming the file.
  static GribRecordFile open(const std::string& path, const std::string& variable, double level_hpa);

  // times: valid times ascending; calendar proleptic Gregorian; members: the
  // count of distinct perturbation numbers (member_dim "perturbationNumber").
  const DatasetInfo& info() const { return info_; }
  DomainSelection select(const std::optional<Domain>& domain) const { return select_domain(info_, domain); }
  // Heights in metres (n_points x count, field.hpp layout; NaN where the
  // bitmap says missing) of time steps [t0, t0 + count). Throws DataError
  // naming the file when a message cannot be decoded.
  arma::fmat read(const DomainSelection& sel, std::size_t t0, std::size_t count) const;

private:
  GribIndex index_;
  DatasetInfo info_;
  std::vector<std::size_t> by_time_;  // message (into index_.messages) of each time step
};

}  // namespace isohypse::detail
