#include "io/height_variable.hpp"

#include <algorithm>
#include <cctype>
#include <optional>
#include <set>

#include "io/metadata_text.hpp"
#include "isohypse/base/error.hpp"

namespace isohypse::detail {

namespace {

std::string compact_units(const std::string& units) {
  std::string out;
  for (char c : lower(units))
    if (!std::isspace(static_cast<unsigned char>(c)) && c != '*' && c != '^') out += c;
  return out;
}

bool common_height_name(const std::string& name) {
  static const std::set<std::string> names = {"z", "zg", "hgt", "gh", "geopotential", "height", "phi",
                                              "z500", "hgt500", "gh500", "zg500", "geopotential_height", "h"};
  return names.count(lower(name)) > 0;
}

std::string type_name(nc_type t) {
  switch (t) {
    case NC_BYTE: return "byte";
    case NC_UBYTE: return "ubyte";
    case NC_CHAR: return "char";
    case NC_SHORT: return "short";
    case NC_USHORT: return "ushort";
    case NC_INT: return "int";
    case NC_UINT: return "uint";
    case NC_INT64: return "int64";
    case NC_UINT64: return "uint64";
    case NC_FLOAT: return "float";
    case NC_DOUBLE: return "double";
    default: return "type " + std::to_string(t);
  }
}

// netCDF's default fill value for a type (used when no _FillValue is given).
std::optional<double> default_fill(nc_type t) {
  switch (t) {
    case NC_BYTE: return NC_FILL_BYTE;
    case NC_SHORT: return NC_FILL_SHORT;
    case NC_INT: return NC_FILL_INT;
    case NC_FLOAT: return static_cast<double>(NC_FILL_FLOAT);
    case NC_DOUBLE: return NC_FILL_DOUBLE;
    case NC_USHORT: return NC_FILL_USHORT;
    case NC_UINT: return NC_FILL_UINT;
    default: return std::nullopt;
  }
}

// Scores one variable as a height candidate (HeightCandidate::score).
HeightCandidate score_candidate(const nc::File& f, const nc::Var& v) {
  HeightCandidate c;
  c.name = v.name;
  c.standard_name = f.text_att(v.id, "standard_name").value_or("");
  c.units = f.text_att(v.id, "units").value_or("");
  c.long_name = f.text_att(v.id, "long_name").value_or("");
  for (int d : v.dims) c.dims.push_back(f.dim(d).name);
  bool geo = false;
  double to_m = 1;
  const bool units_ok = height_units(c.units, geo, to_m);
  const std::string sn = lower(c.standard_name);
  if (sn == "geopotential" || sn == "geopotential_height") {
    c.score += 3;
    c.geopotential = sn == "geopotential";
  }
  if (units_ok) {
    c.score += 2;
    c.geopotential = geo;
  }
  if (common_height_name(c.name)) c.score += 1;
  return c;
}

std::vector<std::string> variable_names(const nc::File& f) {
  std::vector<std::string> names;
  for (const auto& x : f.vars()) names.push_back(x.name);
  return names;
}

}  // namespace

bool height_units(const std::string& units, bool& geopotential, double& to_metres) {
  const std::string u = compact_units(units);
  if (u == "m2s-2" || u == "m2/s2" || u == "m2s**-2" || u == "m2/s**2" || u == "m+2s-2") {
    geopotential = true;
    to_metres = 1.0 / kStandardGravity;
    return true;
  }
  if (u == "m" || u == "gpm" || u == "meter" || u == "meters" || u == "metre" || u == "metres" ||
      u == "geopotentialmeters" || u == "geopotential_meters" || u == "gpmeter") {
    geopotential = false;
    to_metres = 1.0;
    return true;
  }
  if (u == "dam" || u == "gpdm" || u == "decameters" || u == "decametres") {
    geopotential = false;
    to_metres = 10.0;
    return true;
  }
  return false;
}

std::vector<HeightCandidate> find_candidates(const nc::File& f) {
  std::vector<HeightCandidate> out;
  for (const nc::Var& v : f.vars()) {
    if (v.dims.size() < 2 || v.type == NC_CHAR || v.type == NC_STRING) continue;
    HeightCandidate c = score_candidate(f, v);
    // A height standard_name qualifies alone; otherwise height units and a
    // common name together. Metres alone (2) is too weak: many variables are
    // in metres.
    if (c.score >= 3) out.push_back(c);
  }
  std::stable_sort(out.begin(), out.end(), [](const auto& a, const auto& b) { return a.score > b.score; });
  return out;
}

nc::Var choose_height_variable(const nc::File& f, const DatasetInfo& info, const std::string& variable) {
  const std::string& path = info.path;
  if (!variable.empty()) {
    auto v = f.find_var(variable);
    if (!v) throw InputError(path + ": no variable '" + variable + "' (the file has: " + join(variable_names(f)) + ")");
    return *v;
  }
  if (info.candidates.empty())
    throw DataError(path + ": no geopotential or geopotential height variable found (looked for standard_name "
                    "geopotential/geopotential_height, units m2 s-2 or m, names like z, zg, hgt, gh; the file "
                    "has: " + join(variable_names(f)) + "); name one with --variable");
  const auto& best = info.candidates.front();
  std::vector<std::string> tied;
  for (const auto& c : info.candidates)
    if (c.score == best.score) tied.push_back(c.name);
  if (tied.size() > 1)
    throw DataError(path + ": more than one variable could be the height (" + join(tied) +
                    "); choose one with --variable");
  return *f.find_var(best.name);
}

void read_height_units(const nc::File& f, const nc::Var& var, DatasetInfo& info) {
  info.variable = var.name;
  info.units = f.text_att(var.id, "units").value_or("");
  if (!height_units(info.units, info.geopotential, info.to_metres)) {
    const std::string sn = lower(f.text_att(var.id, "standard_name").value_or(""));
    throw DataError(info.path + ": variable '" + info.variable + "' has units '" + info.units +
                    "'; expected geopotential in m2 s-2 or geopotential height in m (gpm, dam)" +
                    (sn.empty() ? "" : " (standard_name " + sn + ")"));
  }
}

Packing read_packing(const nc::File& f, const nc::Var& var) {
  const int vid = var.id;
  Packing pk;
  pk.stored_type = type_name(var.type);
  if (auto s = f.num_att(vid, "scale_factor"); s && !s->empty()) {
    pk.scale_factor = (*s)[0];
    pk.packed = true;
  }
  if (auto o = f.num_att(vid, "add_offset"); o && !o->empty()) {
    pk.add_offset = (*o)[0];
    pk.packed = true;
  }
  if (auto fv = f.num_att(vid, "_FillValue"); fv && !fv->empty()) pk.missing.push_back((*fv)[0]);
  else if (auto d = default_fill(var.type)) pk.missing.push_back(*d);
  if (auto mv = f.num_att(vid, "missing_value"))
    for (double x : *mv)
      if (std::find(pk.missing.begin(), pk.missing.end(), x) == pk.missing.end()) pk.missing.push_back(x);
  if (auto vr = f.num_att(vid, "valid_range"); vr && vr->size() == 2) {
    pk.valid_min = (*vr)[0];
    pk.valid_max = (*vr)[1];
  }
  if (auto vmin = f.num_att(vid, "valid_min"); vmin && !vmin->empty()) pk.valid_min = (*vmin)[0];
  if (auto vmax = f.num_att(vid, "valid_max"); vmax && !vmax->empty()) pk.valid_max = (*vmax)[0];
  return pk;
}

}  // namespace isohypse::detail
