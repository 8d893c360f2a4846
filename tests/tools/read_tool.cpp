// Test support: reads heights with the isohypse reader and prints them as
// JSON (grid, dates, values in metres with null for missing; with --member
// also each step's hour of the day, the initialisation and the calendar), so that the
// Python reference tests can compare with netCDF4-python.
// usage: read_tool [--domain LAT0,LAT1,LONW,LONE] [--variable NAME]
//                  [--daily-mean] [--member M] FILE...
#include <iostream>
#include <nlohmann/json.hpp>
#include <string>

#include "isohypse/io/dataset.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/io/reader.hpp"

int main(int argc, char** argv) {
  using namespace isohypse;
  ReadOptions opt;
  std::vector<std::string> files;
  long member = -1;
  for (int i = 1; i < argc; ++i) {
    std::string a = argv[i];
    if (a == "--domain" && i + 1 < argc) opt.domain = Domain::parse(argv[++i]);
    else if (a == "--variable" && i + 1 < argc) opt.variable = argv[++i];
    else if (a == "--daily-mean") opt.daily_means = true;
    else if (a == "--member" && i + 1 < argc) member = std::stol(argv[++i]);
    else files.push_back(a);
  }
  try {
    nlohmann::json j;
    Field f;
    if (member >= 0) {  // one ensemble file, one member, all steps
      HeightDataset ds = HeightDataset::open(files.at(0), opt.variable);
      DomainSelection sel = ds.select(opt.domain);
      f.grid = sel.grid;
      f.values = ds.read(sel, 0, ds.info().times.size(), static_cast<std::size_t>(member));
      for (const auto& t : ds.info().times) {
        f.dates.push_back(t.date);
        j["hours"].push_back(t.seconds_of_day / 3600.0);
      }
      if (ds.info().reference_time) j["init"] = to_string(ds.info().reference_time->date);
      j["calendar"] = calendar_name(ds.info().calendar);
    } else {
      ReadReport rep;
      f = read_heights(expand_paths(files), opt, &rep);
      j["missing_days"] = rep.missing_days;
      j["duplicates"] = rep.duplicates.size();
      j["steps_per_day"] = rep.steps_per_day;
    }
    j["lat"] = arma::conv_to<std::vector<double>>::from(f.grid.lat);
    j["lon"] = arma::conv_to<std::vector<double>>::from(f.grid.lon);
    for (const auto& d : f.dates) j["dates"].push_back(to_string(d));
    nlohmann::json vals = nlohmann::json::array();
    for (arma::uword t = 0; t < f.values.n_cols; ++t)
      for (arma::uword p = 0; p < f.values.n_rows; ++p) {
        float v = f.values(p, t);
        if (std::isnan(v)) vals.push_back(nullptr);
        else vals.push_back(static_cast<double>(v));
      }
    j["values"] = vals;  // time-major, then point (lat ascending, lon fastest)
    std::cout << j.dump() << "\n";
  } catch (const Error& e) {
    std::cerr << "error: " << e.what() << "\n";
    return 2;
  }
  return 0;
}
