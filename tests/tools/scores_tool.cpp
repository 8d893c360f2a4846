// Exposes the verification scores to tests/python/test_scores_sklearn.py.
//   scores_tool brier FILE     FILE: one case per line, "p o"
//   scores_tool roc FILE       same format
//   scores_tool heidke FILE K  FILE: one case per line, "forecast observed"
// Prints the score with 17 significant digits; exit 2 on bad use or input.
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <iostream>
#include <string>
#include <vector>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/scores.hpp"

namespace {

// Reads whitespace-separated pairs; throws InputError on an odd count.
std::vector<double> read_numbers(const std::string& path) {
  std::ifstream in(path);
  if (!in) throw isohypse::InputError("scores_tool: cannot open " + path);
  std::vector<double> numbers;
  double x;
  while (in >> x) numbers.push_back(x);
  if (!in.eof() || numbers.size() % 2 != 0) {
    throw isohypse::InputError("scores_tool: " + path + " must hold pairs of numbers");
  }
  return numbers;
}

}  // namespace

int main(int argc, char** argv) {
  try {
    const std::string command = argc > 2 ? argv[1] : "";
    if (command != "brier" && command != "roc" && command != "heidke") {
      std::cerr << "usage: scores_tool brier|roc FILE | scores_tool heidke FILE K\n";
      return 2;
    }
    const std::vector<double> numbers = read_numbers(argv[2]);
    const std::size_t n = numbers.size() / 2;
    double result;
    if (command == "heidke") {
      if (argc != 4) throw isohypse::InputError("scores_tool heidke: K missing");
      std::vector<int> forecast(n), observed(n);
      for (std::size_t i = 0; i < n; ++i) {
        forecast[i] = static_cast<int>(numbers[2 * i]);
        observed[i] = static_cast<int>(numbers[2 * i + 1]);
      }
      result = isohypse::heidke_skill(isohypse::contingency(forecast, observed, std::atoi(argv[3])));
    } else {
      arma::vec p(n), o(n);
      for (std::size_t i = 0; i < n; ++i) {
        p[i] = numbers[2 * i];
        o[i] = numbers[2 * i + 1];
      }
      result = command == "brier" ? isohypse::brier_score(p, o) : isohypse::roc_area(p, o);
    }
    std::printf("%.17g\n", result);
    return 0;
  } catch (const isohypse::Error& e) {
    std::cerr << e.what() << '\n';
    return 2;
  }
}
