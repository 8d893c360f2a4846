// Exposes the offline numerics (EOFs, k-means, surrogates, classifiability)
// to the Python reference tests. Prints one JSON object on stdout; exit 2 on
// bad use or input.
//
// Matrices: "FILE.txt" is whitespace-separated text, one matrix row per line;
// "FILE.f64@RxC" is raw little-endian float64 in C (row-major) order, as
// numpy's ndarray.tofile writes an R x C array. Flags file: one 0/1 per line.
//
//   numerics_tool eof X [--method auto|exact|randomized] [--count N]
//                 [--fraction F] [--max-count M] [--consecutive FLAGS] [--seed S]
//       X is n_space x n_time (one day per column); prints method, mean,
//       eigenvalues, explained, total_variance, north_error, effective_n,
//       eofs (n_space x n) and pcs (n_time x n), matrices as lists of rows.
//   numerics_tool kmeans POINTS --k K [--restarts R] [--seed S] [--threads T]
//   numerics_tool kmeans-from POINTS INIT [--max-iter N] [--tol T] [--step plain|hamerly]
//       POINTS is n x dims (one point per ROW, as scikit-learn), INIT k x dims;
//       prints labels, centroids (k x dims), inertia, iterations.
//   numerics_tool surrogate PCS FLAGS [--seed S]      prints the surrogate (n x m)
//   numerics_tool ari LABELS_A LABELS_B                prints the adjusted Rand index
//   numerics_tool regime-table PCS FLAGS [--k-min --k-max --runs --surrogates --level --stop-early yes/no --threads]
//   numerics_tool holm ROWS.json [--level L]  (rows: k, index, spread, p_index, p_ratio; the verdicts and the choice of k)
//       prints the table and the wall time (seconds).
//   numerics_tool brier-bins P O [--bins N] [--resamples R] [--level L] [--seed S]
//       P, O one value per line; prints the five-term binned Brier
//       decomposition and the reliability bins with their consistency bars.
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <iostream>
#include <map>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "isohypse/numerics/classifiability.hpp"
#include "isohypse/numerics/regime_model.hpp"
#include "isohypse/numerics/regime_significance.hpp"
#include "isohypse/numerics/eof.hpp"
#include "isohypse/base/error.hpp"
#include "isohypse/numerics/kmeans.hpp"
#include "isohypse/numerics/scores.hpp"
#include "isohypse/base/vocabulary.hpp"

namespace {

using isohypse::InputError;
using nlohmann::json;

arma::mat read_matrix(const std::string& spec) {
  const auto at = spec.rfind(".f64@");
  if (at != std::string::npos) {
    const std::string path = spec.substr(0, at + 4), shape = spec.substr(at + 5);
    const auto x = shape.find('x');
    if (x == std::string::npos) throw InputError("numerics_tool: shape must be RxC in " + spec);
    const arma::uword rows = std::stoul(shape.substr(0, x)), cols = std::stoul(shape.substr(x + 1));
    arma::mat m(cols, rows);  // C order read column-major is the transpose
    std::ifstream in(path, std::ios::binary);
    if (!in.read(reinterpret_cast<char*>(m.memptr()), static_cast<std::streamsize>(m.n_elem * 8)))
      throw InputError("numerics_tool: cannot read " + std::to_string(rows * cols) +
                       " float64 values from " + path);
    return m.t();
  }
  arma::mat m;
  if (!m.load(spec, arma::raw_ascii)) throw InputError("numerics_tool: cannot read " + spec);
  return m;
}

std::vector<char> read_flags(const std::string& path) {
  const arma::vec v = arma::vectorise(read_matrix(path));
  std::vector<char> flags(v.n_elem);
  for (arma::uword i = 0; i < v.n_elem; ++i) flags[i] = v[i] != 0.0;
  return flags;
}

std::vector<int> read_labels(const std::string& path) {
  const arma::vec v = arma::vectorise(read_matrix(path));
  return std::vector<int>(v.begin(), v.end());
}

json rows_of(const arma::mat& m) {
  json out = json::array();
  for (arma::uword r = 0; r < m.n_rows; ++r)
    out.push_back(arma::conv_to<std::vector<double>>::from(m.row(r)));
  return out;
}

json values_of(const arma::vec& v) { return arma::conv_to<std::vector<double>>::from(v); }

// Positional arguments and --key value options.
struct Args {
  std::vector<std::string> positional;
  std::map<std::string, std::string> options;
  std::string get(const std::string& key, const std::string& fallback) const {
    const auto it = options.find(key);
    return it == options.end() ? fallback : it->second;
  }
};

Args parse(int argc, char** argv) {
  Args a;
  for (int i = 2; i < argc; ++i) {
    const std::string s = argv[i];
    if (s.rfind("--", 0) == 0) {
      if (i + 1 >= argc) throw InputError("numerics_tool: " + s + " needs a value");
      a.options[s.substr(2)] = argv[++i];
    } else {
      a.positional.push_back(s);
    }
  }
  return a;
}

void need(const Args& a, std::size_t n, const char* usage) {
  if (a.positional.size() != n) throw InputError(std::string("usage: numerics_tool ") + usage);
}

json kmeans_json(const isohypse::KMeansResult& r) {
  return {{"labels", r.labels},
          {"centroids", rows_of(r.centroids.t())},
          {"inertia", r.inertia},
          {"iterations", r.iterations},
          {"best_restart", r.best_restart}};
}

// The five-term binned Brier decomposition and the reliability diagram with
// consistency bars of the cases in two text files (one value per line).
json brier_bins_json(const Args& a) {
  need(a, 2, "brier-bins P O [--bins N] [--resamples R] [--level L] [--seed S]");
  const arma::vec p = arma::vectorise(read_matrix(a.positional[0]));
  const arma::vec o = arma::vectorise(read_matrix(a.positional[1]));
  const int bins = std::stoi(a.get("bins", "10"));
  const isohypse::BrierParts b = isohypse::binned_brier_decomposition(p, o, bins);
  json diagram = json::array();
  for (const auto& r : isohypse::reliability_diagram_with_bars(p, o, bins, std::stoi(a.get("resamples", "1000")),
                                                              std::stod(a.get("level", "0.9")),
                                                              std::stoull(a.get("seed", "20261202"))))
    diagram.push_back({{"lower", r.lower}, {"upper", r.upper}, {"count", r.count},
                       {"mean_forecast", isohypse::number_or_null(r.mean_forecast)},
                       {"observed_frequency", isohypse::number_or_null(r.observed_frequency)},
                       {"consistency_lower", isohypse::number_or_null(r.bar_lower)},
                       {"consistency_upper", isohypse::number_or_null(r.bar_upper)}});
  return {{"brier", b.brier}, {"reliability", b.reliability}, {"resolution", b.resolution},
          {"uncertainty", b.uncertainty}, {"within_bin_variance", b.within_bin_variance},
          {"within_bin_covariance", b.within_bin_covariance}, {"bins", diagram}};
}

json run(const std::string& command, const Args& a) {
  if (command == "eof") {
    need(a, 1, "eof X [options]");
    const arma::fmat X = arma::conv_to<arma::fmat>::from(read_matrix(a.positional[0]));
    std::vector<char> consecutive(X.n_cols, 1);
    if (!consecutive.empty()) consecutive[0] = 0;
    if (a.options.count("consecutive")) consecutive = read_flags(a.options.at("consecutive"));
    isohypse::EofOptions o;
    o.count = std::stoi(a.get("count", "0"));
    o.variance_fraction = std::stod(a.get("fraction", "0.8"));
    o.max_count = std::stoi(a.get("max-count", "60"));
    o.seed = std::stoull(a.get("seed", "20261202"));
    const std::string method = a.get("method", "auto");
    using M = isohypse::EofOptions::Method;
    if (method == "exact") o.method = M::Exact;
    else if (method == "randomized") o.method = M::Randomized;
    else if (method != "auto") throw InputError("numerics_tool eof: --method auto|exact|randomized");
    const auto t0 = std::chrono::steady_clock::now();
    const isohypse::EofResult r = isohypse::compute_eofs(X, consecutive, o);
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    return {{"method", r.method},          {"mean", values_of(r.mean)},
            {"eigenvalues", values_of(r.eigenvalues)}, {"explained", values_of(r.explained)},
            {"total_variance", r.total_variance}, {"north_error", values_of(r.north_error)},
            {"effective_n", values_of(r.effective_n)}, {"eofs", rows_of(r.eofs)},
            {"pcs", rows_of(r.pcs)},         {"seconds", seconds}};
  }
  if (command == "kmeans") {
    need(a, 1, "kmeans POINTS --k K [options]");
    isohypse::KMeansOptions o;
    o.k = std::stoi(a.get("k", "4"));
    o.restarts = std::stoi(a.get("restarts", "100"));
    o.seed = std::stoull(a.get("seed", "20261202"));
    o.threads = std::stoi(a.get("threads", "0"));
    return kmeans_json(isohypse::kmeans(read_matrix(a.positional[0]).t(), o));
  }
  if (command == "kmeans-from") {
    need(a, 2, "kmeans-from POINTS INIT [options]");
    const std::string step = a.get("step", "plain");
    if (step != "plain" && step != "hamerly")
      throw InputError("numerics_tool kmeans-from: --step plain|hamerly");
    return kmeans_json(isohypse::kmeans_from(
        read_matrix(a.positional[0]).t(), read_matrix(a.positional[1]).t(),
        std::stoi(a.get("max-iter", "300")), std::stod(a.get("tol", "1e-4")),
        step == "plain" ? isohypse::LloydStep::Plain : isohypse::LloydStep::Hamerly));
  }
  if (command == "surrogate") {
    need(a, 2, "surrogate PCS FLAGS [--seed S]");
    return {{"surrogate", rows_of(isohypse::red_noise_surrogate(
                              read_matrix(a.positional[0]), read_flags(a.positional[1]),
                              std::stoull(a.get("seed", "20261202"))))}};
  }
  if (command == "ari") {
    need(a, 2, "ari LABELS_A LABELS_B");
    return {{"ari", isohypse::adjusted_rand_index(read_labels(a.positional[0]),
                                                  read_labels(a.positional[1]))}};
  }
  if (command == "regime-table") {
    need(a, 2, "regime-table PCS FLAGS [options]");
    isohypse::RegimeCountOptions o;
    o.k_min = std::stoi(a.get("k-min", "2"));
    o.k_max = std::stoi(a.get("k-max", "8"));
    o.runs = std::stoi(a.get("runs", "30"));
    o.surrogates = std::stoi(a.get("surrogates", "30"));
    o.level = std::stod(a.get("level", "0.9"));
    o.stop_early = a.get("stop-early", "yes") == "yes";
    o.threads = std::stoi(a.get("threads", "0"));
    const arma::mat pcs = read_matrix(a.positional[0]);
    const auto flags = read_flags(a.positional[1]);
    const auto t0 = std::chrono::steady_clock::now();
    const auto table = isohypse::regime_count_table(pcs, flags, o, {});
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    json rows = isohypse::k_table_json(table);
    const auto choice = isohypse::choose_regime_count(table);
    return {{"table", rows}, {"seconds", seconds}, {"k", choice.k}, {"reason", choice.reason}};
  }
  if (command == "holm") {  // p-values in, Holm's verdict and the choice out
    need(a, 1, "holm ROWS.json [--level L]: rows of k, index, spread, p_index, p_ratio");
    std::ifstream in(a.positional[0]);
    const json rows_in = json::parse(in);
    std::vector<isohypse::RegimeCountRow> table;
    for (const auto& r : rows_in) {
      isohypse::RegimeCountRow row;
      row.k = r.at("k");
      row.index = r.at("index");
      row.index_spread = r.at("spread");
      row.p_index = r.at("p_index");
      row.p_ratio = r.at("p_ratio");
      table.push_back(row);
    }
    isohypse::apply_holm(table, std::stod(a.get("level", "0.9")));
    json out = json::array();
    for (const auto& r : table) out.push_back({{"k", r.k}, {"holm_level", r.holm_level}, {"significant", r.significant}});
    const auto choice = isohypse::choose_regime_count(table);
    return {{"rows", out}, {"k", choice.k}, {"reason", choice.reason}};
  }
  if (command == "brier-bins") return brier_bins_json(a);
  throw InputError("numerics_tool: unknown command '" + command +
                   "' (eof, kmeans, kmeans-from, surrogate, ari, regime-table, holm, brier-bins)");
}

}  // namespace

int main(int argc, char** argv) {
  try {
    if (argc < 2) throw InputError("usage: numerics_tool COMMAND ... (see the source's header)");
    std::cout << run(argv[1], parse(argc, argv)).dump() << "\n";
    return 0;
  } catch (const std::exception& e) {
    std::cerr << "numerics_tool: " << e.what() << "\n";
    return 2;
  }
}
