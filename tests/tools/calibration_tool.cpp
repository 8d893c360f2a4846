// Exposes the calibration numerics (numerics/calibration.hpp) to
// tests/python/test_calibration_numerics.py. Reads one JSON object from the
// file given and prints one JSON object on stdout; exit 2 on bad use.
//
//   calibration_tool blend CASES.json
//       CASES: {"p": [[...], ...], "c": [[...], ...], "observed": [...]}
//       prints {"a": the clipped closed-form coefficient, "blended": c + a (p - c)}.
//   calibration_tool logistic CASES.json
//       CASES: {"p", "c", "members": [...], "observed", "C": inverse penalty}
//       prints {"features": the feature matrix, "weights", "intercepts",
//       "probabilities": the fitted model's on the cases, "iterations"}.
#include <fstream>
#include <iostream>
#include <string>

#include <nlohmann/json.hpp>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/calibration.hpp"

namespace {

using nlohmann::json;

arma::mat matrix(const json& rows) {
  arma::mat m(rows.size(), rows.empty() ? 0 : rows[0].size());
  for (std::size_t i = 0; i < rows.size(); ++i)
    for (std::size_t j = 0; j < rows[i].size(); ++j) m(i, j) = rows[i][j].get<double>();
  return m;
}

json rows(const arma::mat& m) {
  json out = json::array();
  for (arma::uword i = 0; i < m.n_rows; ++i) {
    json r = json::array();
    for (arma::uword j = 0; j < m.n_cols; ++j) r.push_back(m(i, j));
    out.push_back(r);
  }
  return out;
}

}  // namespace

int main(int argc, char** argv) {
  try {
    if (argc != 3) throw isohypse::InputError("usage: calibration_tool blend|logistic CASES.json");
    std::ifstream in(argv[2]);
    if (!in) throw isohypse::InputError(std::string("calibration_tool: cannot open ") + argv[2]);
    const json j = json::parse(in);
    const arma::mat p = matrix(j.at("p")), c = matrix(j.at("c"));
    const std::vector<int> observed = j.at("observed").get<std::vector<int>>();
    const std::string what = argv[1];
    if (what == "blend") {
      const double a = isohypse::blend_coefficient(p, c, observed);
      std::cout << json{{"a", a}, {"blended", rows(isohypse::blend_probabilities(p, c, a))}}.dump() << "\n";
      return 0;
    }
    if (what == "logistic") {
      const arma::vec members(j.at("members").get<std::vector<double>>());
      const arma::mat X = isohypse::logistic_features(p, members, c);
      const isohypse::LogisticModel m =
          isohypse::fit_multinomial_logistic(X, observed, static_cast<int>(p.n_cols), j.at("C").get<double>());
      std::cout << json{{"features", rows(X)},
                        {"weights", rows(m.weights)},
                        {"intercepts", std::vector<double>(m.intercepts.begin(), m.intercepts.end())},
                        {"probabilities", rows(isohypse::logistic_probabilities(m, X))},
                        {"iterations", m.iterations}}
                       .dump()
                << "\n";
      return 0;
    }
    throw isohypse::InputError("calibration_tool: unknown command " + what);
  } catch (const std::exception& e) {
    std::cerr << e.what() << "\n";
    return 2;
  }
}
