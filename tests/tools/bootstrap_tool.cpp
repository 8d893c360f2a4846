// Exposes the moving-block bootstrap interval and the Student t quantile to
// tests/python/test_block_bootstrap.py. Prints one JSON object on stdout;
// exit 2 on bad use or input.
//
//   bootstrap_tool t-quantile LEVEL DF...
//       prints {"quantiles": [t with P(|T| <= t) = LEVEL, one per DF]}.
//   bootstrap_tool intervals SERIES BLOCK_DAYS RESAMPLES LEVEL SEED
//       SERIES: one series per line, whitespace-separated values of
//       consecutive daily issues (value i on day i). For each series, the
//       moving-block bootstrap interval of its mean (seed SEED + line
//       number); prints {"estimate", "lower", "upper": one per series,
//       "blocks": whole blocks of the first series}.
#include <cstdint>
#include <fstream>
#include <iostream>
#include <numeric>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/block_bootstrap.hpp"
#include "isohypse/numerics/student_t.hpp"

namespace {

using isohypse::InputError;
using nlohmann::json;

std::vector<std::vector<double>> read_series(const std::string& path) {
  std::ifstream in(path);
  if (!in) throw InputError("bootstrap_tool: cannot open " + path);
  std::vector<std::vector<double>> rows;
  for (std::string line; std::getline(in, line);) {
    std::istringstream fields(line);
    std::vector<double> row;
    for (double x; fields >> x;) row.push_back(x);
    if (!fields.eof()) throw InputError("bootstrap_tool: a value that is not a number in " + path);
    if (!row.empty()) rows.push_back(std::move(row));
  }
  return rows;
}

json intervals(char** argv) {
  const int block_days = std::stoi(argv[3]), resamples = std::stoi(argv[4]);
  const double level = std::stod(argv[5]);
  const std::uint64_t seed = std::stoull(argv[6]);
  json out{{"estimate", json::array()}, {"lower", json::array()}, {"upper", json::array()}};
  std::uint64_t line = 0;
  for (const std::vector<double>& x : read_series(argv[2])) {
    std::vector<std::int64_t> days(x.size());
    std::iota(days.begin(), days.end(), std::int64_t{0});
    const auto mean = [&x](const std::vector<std::size_t>& cases) {
      double sum = 0;
      for (std::size_t i : cases) sum += x[i];
      return sum / static_cast<double>(cases.size());
    };
    const isohypse::BlockInterval ci =
        isohypse::moving_block_bootstrap(days, block_days, mean, resamples, level, seed + line++);
    out["estimate"].push_back(ci.interval.estimate);
    out["lower"].push_back(ci.interval.lower);
    out["upper"].push_back(ci.interval.upper);
    if (!out.contains("blocks")) out["blocks"] = ci.blocks;
  }
  return out;
}

}  // namespace

int main(int argc, char** argv) {
  try {
    const std::string command = argc > 1 ? argv[1] : "";
    if (command == "t-quantile" && argc > 3) {
      json q = json::array();
      for (int i = 3; i < argc; ++i)
        q.push_back(isohypse::student_t_central_quantile(std::stod(argv[2]), std::stoi(argv[i])));
      std::cout << json{{"quantiles", q}}.dump() << "\n";
      return 0;
    }
    if (command == "intervals" && argc == 7) {
      std::cout << intervals(argv).dump() << "\n";
      return 0;
    }
    std::cerr << "usage: bootstrap_tool t-quantile LEVEL DF... | bootstrap_tool intervals SERIES BLOCK_DAYS RESAMPLES "
                 "LEVEL SEED\n";
    return 2;
  } catch (const std::exception& e) {
    std::cerr << e.what() << "\n";
    return 2;
  }
}
