// Exposes the GRIB index and decoder (io/grib_index.hpp, io/grib_decode.hpp)
// to tests/python/test_grib_index.py. Prints one JSON object on stdout.
//
//   grib_tool index [--level HPA | --all-levels] FILE...
//       {"grid": {...}, "messages": [{path, offset, ..., "init": "YYYY-MM-DD HH:MM"}, ...]}
//   grib_tool decode [--level HPA | --all-levels] FILE...
//       the index, each message with "values": latitude-major metres, NaN as null
//   grib_tool threads N FILE...
//       decodes every 500 hPa message on N threads and on one:
//       {"messages": n, "identical": true|false}
// Errors: the message on stderr; exit 2 (InputError or bad use), 3 (DataError).
#include <cmath>
#include <cstdio>
#include <iostream>
#include <string>
#include <thread>
#include <vector>

#include <nlohmann/json.hpp>

#include "isohypse/base/error.hpp"
#include "isohypse/io/grib_decode.hpp"
#include "isohypse/io/grib_index.hpp"

namespace {

using nlohmann::json;
using namespace isohypse;

json grid_json(const GribGrid& g) {
  return json{{"type", g.type}, {"ni", g.ni}, {"nj", g.nj}, {"latitudes", g.latitudes},
              {"longitudes", g.longitudes}, {"i_scans_negatively", g.i_scans_negatively},
              {"j_scans_positively", g.j_scans_positively}, {"j_points_consecutive", g.j_points_consecutive}};
}

json message_json(const GribMessage& m) {
  char init[32];
  const int s = static_cast<int>(m.init.seconds_of_day);
  std::snprintf(init, sizeof init, "%s %02d:%02d", to_string(m.init.date).c_str(), s / 3600, s / 60 % 60);
  return json{{"path", m.path}, {"offset", m.offset}, {"length", m.length}, {"edition", m.edition},
              {"short_name", m.short_name}, {"param_id", m.param_id}, {"units", m.units},
              {"to_metres", m.to_metres}, {"type_of_level", m.type_of_level}, {"level_hpa", m.level_hpa},
              {"member", m.member}, {"data_type", m.data_type}, {"init", init}, {"lead_hours", m.lead_hours},
              {"packing", m.packing}, {"bits_per_value", m.bits_per_value}};
}

json values_json(const std::vector<float>& v) {
  json out = json::array();
  for (float x : v) out.push_back(std::isnan(x) ? json(nullptr) : json(static_cast<double>(x)));
  return out;
}

// Parallel decoding against serial decoding of the same messages.
bool threads_agree(const GribIndex& index, int threads) {
  const std::size_t n = index.messages.size();
  std::vector<std::vector<float>> serial(n), parallel(n);
  for (std::size_t k = 0; k < n; ++k) serial[k] = decode_grib_field(index.messages[k], index.grid);
  std::vector<std::thread> pool;
  for (int t = 0; t < threads; ++t)
    pool.emplace_back([&, t] {
      GribDecodeScratch scratch;
      for (std::size_t k = static_cast<std::size_t>(t); k < n; k += static_cast<std::size_t>(threads))
        decode_grib_field(index.messages[k], index.grid, parallel[k], scratch);
    });
  for (auto& th : pool) th.join();
  for (std::size_t k = 0; k < n; ++k)
    for (std::size_t p = 0; p < serial[k].size(); ++p)
      if (!(serial[k][p] == parallel[k][p] || (std::isnan(serial[k][p]) && std::isnan(parallel[k][p]))))
        return false;
  return true;
}

int run(int argc, char** argv) {
  if (argc < 3) throw InputError("usage: grib_tool index|decode [--level HPA|--all-levels] FILE... | threads N FILE...");
  const std::string what = argv[1];
  int a = 2, threads = 0;
  GribScanOptions options;
  if (what == "threads") threads = std::stoi(argv[a++]);
  if (a < argc && std::string(argv[a]) == "--level") {
    options.level_hpa = std::stod(argv[a + 1]);
    a += 2;
  } else if (a < argc && std::string(argv[a]) == "--all-levels") {
    options.level_hpa.reset();
    ++a;
  }
  const std::vector<std::string> paths(argv + a, argv + argc);
  const GribIndex index = scan_grib_heights(paths, options);
  if (what == "threads") {
    std::cout << json{{"messages", index.messages.size()}, {"identical", threads_agree(index, threads)}}.dump() << "\n";
    return 0;
  }
  if (what != "index" && what != "decode") throw InputError("grib_tool: unknown command " + what);
  json out{{"grid", grid_json(index.grid)}, {"messages", json::array()}};
  for (const GribMessage& m : index.messages) {
    json j = message_json(m);
    if (what == "decode") j["values"] = values_json(decode_grib_field(m, index.grid));
    out["messages"].push_back(j);
  }
  std::cout << out.dump() << "\n";
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  try {
    return run(argc, argv);
  } catch (const isohypse::DataError& e) {
    std::cerr << e.what() << "\n";
    return 3;
  } catch (const std::exception& e) {
    std::cerr << e.what() << "\n";
    return 2;
  }
}
