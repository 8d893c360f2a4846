#include "io/grib_forecast.hpp"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <map>
#include <set>

#include "io/metadata_text.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::detail {

bool is_grib_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  char head[4] = {};
  return in.read(head, 4) && std::equal(head, head + 4, "GRIB");
}

DatasetInfo grib_dataset_info(const GribIndex& index) {
  DatasetInfo info;
  const GribGrid& g = index.grid;
  info.path = index.paths.front();
  std::set<long> editions;
  for (const GribMessage& m : index.messages) editions.insert(m.edition);
  info.format = "GRIB edition";
  for (long e : editions) info.format += " " + std::to_string(e);
  info.variable = index.messages.front().short_name;
  info.units = index.messages.front().units;
  info.geopotential = index.messages.front().param_id == 129;
  info.file_lat = arma::vec(g.latitudes);
  std::vector<double> lon = g.longitudes;
  if (g.i_scans_negatively) std::reverse(lon.begin(), lon.end());
  info.file_lon = arma::vec(lon);
  info.calendar = Calendar::Standard;
  info.level_note = "level 500 hPa (isobaric messages)";
  return info;
}

namespace {

std::string files_text(const GribIndex& index) {
  std::string s;
  for (std::size_t i = 0; i < index.paths.size() && i < 3; ++i) s += (i ? ", " : "") + index.paths[i];
  if (index.paths.size() > 3) s += " and " + std::to_string(index.paths.size() - 3) + " more";
  return s;
}

}  // namespace

std::vector<GribInitialisation> grib_initialisations(const GribIndex& index) {
  // (init day, seconds) -> member -> lead hours -> message
  std::map<std::pair<std::int64_t, double>, std::map<long, std::map<double, std::size_t>>> by_init;
  std::map<std::pair<std::int64_t, double>, Instant> instants;
  for (std::size_t i = 0; i < index.messages.size(); ++i) {
    const GribMessage& m = index.messages[i];
    const auto key = std::make_pair(day_number(m.init.date), m.init.seconds_of_day);
    by_init[key][m.member][m.lead_hours] = i;
    instants[key] = m.init;
  }
  std::vector<GribInitialisation> out;
  for (const auto& [key, members] : by_init) {
    GribInitialisation gi;
    gi.init = instants[key];
    std::set<double> leads;
    for (const auto& [member, steps] : members)
      for (const auto& [lead, i] : steps) leads.insert(lead);
    for (const auto& [member, steps] : members) {
      for (double lead : leads)
        if (!steps.count(lead))
          throw DataError(files_text(index) + ": GRIB initialisation " + to_string(gi.init.date) + " " +
                          std::to_string(static_cast<int>(std::lround(gi.init.seconds_of_day / 3600))) +
                          " UTC: member " + std::to_string(member) + " has no message for lead " +
                          number_text(lead) + " h, which other members have");
      gi.members.push_back(member);
      std::vector<std::size_t> idx;
      for (const auto& [lead, i] : steps) idx.push_back(i);
      gi.steps.push_back(std::move(idx));
    }
    for (double lead : leads) gi.valid.push_back(add_duration(gi.init, lead, 3600.0));
    out.push_back(std::move(gi));
  }
  return out;
}

void read_grib_member(const GribIndex& index, const std::vector<std::size_t>& steps, const DomainSelection& sel,
                      RawBlock& raw, GribDecodeScratch& scratch) {
  const GribGrid& g = index.grid;
  const std::size_t ni = static_cast<std::size_t>(g.ni), nj = static_cast<std::size_t>(g.nj);
  raw.path = index.messages.at(steps.front()).path;
  raw.nlat = sel.lat_count;
  raw.nlon_out = sel.grid.lon.n_elem;
  raw.count = steps.size();
  raw.lat_descending = g.latitudes.size() > 1 && g.latitudes.front() > g.latitudes.back();
  raw.packing = Packing{};  // decoded values are metres, NaN where missing
  raw.to_metres = 1.0;
  raw.level_hpa = index.messages.at(steps.front()).level_hpa;
  raw.values.resize(steps.size() * ni * nj);
  std::vector<float> field;
  for (std::size_t t = 0; t < steps.size(); ++t) {
    decode_grib_field(index.messages[steps[t]], g, field, scratch);
    float* dst = raw.values.data() + t * ni * nj;
    for (std::size_t j = 0; j < nj; ++j) {
      const float* row = field.data() + j * ni;
      if (g.i_scans_negatively) std::reverse_copy(row, row + ni, dst + j * ni);
      else std::copy(row, row + ni, dst + j * ni);
    }
  }
  raw.boxes.assign(1, RawBlock::Box{});
  RawBlock::Box& box = raw.boxes.front();
  box.s_time = ni * nj;
  box.s_lat = ni;
  box.s_lon = 1;
  box.lat_skip = sel.lat_start;
  box.runs = sel.lon_runs;
}

}  // namespace isohypse::detail
