#include <doctest/doctest.h>

#include <algorithm>
#include <string>
#include <thread>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/classifiability.hpp"
#include "isohypse/numerics/regime_significance.hpp"
#include "planted_pcs.hpp"

using namespace isohypse;
using isohypse::testing::planted_regime_pcs;

namespace {

RegimeCountRow row(int k, double index, double spread, double p_ratio, double p_index = 0.01) {
  RegimeCountRow r;
  r.k = k;
  r.index = index;
  r.index_spread = spread;
  r.p_ratio = p_ratio;
  r.p_index = p_index;
  return r;
}

}  // namespace

TEST_CASE("regime count: planted three regimes pass and the choice is 3") {
  std::vector<char> consecutive;
  const arma::mat pcs = planted_regime_pcs(600, consecutive);
  RegimeCountOptions o;
  o.k_min = 2;
  o.k_max = 5;
  o.runs = 10;
  o.surrogates = 60;  // 4 values of k at level 0.9 need 39
  o.threads = 1;
  const auto caller = std::this_thread::get_id();
  int calls = 0, last_done = 0, last_total = 0;
  bool from_caller = true;
  const auto table = regime_count_table(pcs, consecutive, o, [&](int done, int total) {
    ++calls;
    last_done = done;
    last_total = total;
    from_caller = from_caller && std::this_thread::get_id() == caller;
  });
  REQUIRE(table.size() == 4);
  CHECK(table[1].k == 3);
  CHECK(table[1].index > 0.99);
  CHECK(table[1].significant);
  CHECK(table[1].surrogates() == 60);
  CHECK(table[1].p_index == doctest::Approx(1.0 / 61.0));  // no surrogate comes near
  CHECK(table[1].p_ratio == doctest::Approx(1.0 / 61.0));
  CHECK_FALSE(table[0].significant);  // k = 2 merges a different pair each run
  const RegimeCountChoice choice = choose_regime_count(table);
  CHECK(choice.k == 3);
  CHECK(choice.reason.find("k = 3: highest index among the significant") == 0);
  // Every unit reported once; the total shrinks by the surrogates not drawn.
  int drawn = 0;
  for (const auto& r : table) drawn += r.surrogates() + 1;
  CHECK(calls == drawn);
  CHECK(last_done == drawn);
  CHECK(last_total == drawn);
  CHECK(from_caller);

  // The same table on two threads.
  o.threads = 2;
  const auto table2 = regime_count_table(pcs, consecutive, o, {});
  for (std::size_t i = 0; i < table.size(); ++i) {
    CHECK(table2[i].index == table[i].index);
    CHECK(table2[i].p_index == table[i].p_index);
    CHECK(table2[i].p_ratio == table[i].p_ratio);
    CHECK(table2[i].surrogate_index == table[i].surrogate_index);
    CHECK(table2[i].best_run == table[i].best_run);
  }

  // Stopping early changes no verdict: without it every k gets all the
  // surrogates, the p-values of a stopped k are at least its bounds.
  o.stop_early = false;
  const auto full = regime_count_table(pcs, consecutive, o, {});
  bool any_stopped = false;
  for (std::size_t i = 0; i < table.size(); ++i) {
    CHECK(full[i].surrogates() == 60);
    CHECK(full[i].significant == table[i].significant);
    CHECK(std::max(full[i].p_index, full[i].p_ratio) >= std::max(table[i].p_index, table[i].p_ratio) - 1e-12);
    any_stopped = any_stopped || table[i].stopped_early;
    if (!table[i].stopped_early) CHECK(full[i].p_index == table[i].p_index);
  }
  CHECK(any_stopped);
}

TEST_CASE("regime count: red noise alone passes no k") {
  // Surrogate-only data: a red-noise series with the planted data's spectrum
  // has no regimes; with Holm's correction at 0.9 the chance that some k
  // passes is at most 0.1, and for this seed none does.
  std::vector<char> consecutive;
  const arma::mat noise = red_noise_surrogate(planted_regime_pcs(600, consecutive), consecutive, 99);
  RegimeCountOptions o;
  o.k_min = 2;
  o.k_max = 5;
  o.runs = 10;
  o.surrogates = 60;
  const auto table = regime_count_table(noise, consecutive, o, {});
  for (const auto& r : table) CHECK_FALSE(r.significant);
  const RegimeCountChoice choice = choose_regime_count(table);
  CHECK(choice.k == 0);
  CHECK(choice.reason.find("no regime structure is significant") != std::string::npos);
}

TEST_CASE("Holm's step-down procedure on a worked example and the index filter") {
  // Holm (1979, Scand. J. Statist. 6, 65-70): sorted p-values p_(i) pass
  // while p_(i) <= alpha / (m - i + 1). alpha = 0.05, m = 4:
  // 0.005 <= 0.0125, 0.01 <= 0.01667, 0.03 > 0.025 stops; 0.04 fails too
  // although 0.04 <= 0.05. (Bonferroni would pass only p <= 0.0125.)
  std::vector<RegimeCountRow> t = {row(2, 0.9, 0, 0.01), row(3, 0.9, 0, 0.04), row(4, 0.9, 0, 0.03),
                                   row(5, 0.9, 0, 0.005)};
  apply_holm(t, 0.95);
  CHECK(t[3].significant);
  CHECK(t[3].holm_level == doctest::Approx(0.0125));
  CHECK(t[0].significant);
  CHECK(t[0].holm_level == doctest::Approx(0.05 / 3));
  CHECK_FALSE(t[2].significant);
  CHECK(t[2].holm_level == doctest::Approx(0.025));
  CHECK_FALSE(t[1].significant);
  CHECK(t[1].holm_level == doctest::Approx(0.05));
  // The index must also beat red noise at alpha itself, uncorrected.
  t[0].p_index = 0.06;
  apply_holm(t, 0.95);
  CHECK_FALSE(t[0].significant);
  CHECK(t[3].significant);
}

TEST_CASE("choosing k: the highest index, ties broken by the gap, its ties to the smaller k") {
  auto with_gap = [](RegimeCountRow r, double gap, double spread) {
    r.gap = gap;
    r.gap_spread = spread;
    return r;
  };
  // k = 2 has the highest index but does not pass; k = 4 is the highest of
  // the passing, alone at the top.
  std::vector<RegimeCountRow> t = {row(2, 1.0, 0.0, 0.01, 0.5), row(3, 0.95, 0.0, 0.01), row(4, 0.999, 0.0, 0.01),
                                   row(5, 0.90, 0.001, 0.01)};
  apply_holm(t, 0.9);
  CHECK_FALSE(t[0].significant);
  RegimeCountChoice c = choose_regime_count(t);
  CHECK(c.k == 4);
  CHECK(c.reason == "k = 4: highest index among the significant, 0.999; also significant, with lower indices: "
                    "k = 3 (0.950), 5 (0.900)");

  // A five-regime world: k = 3 and k = 5 both reproducible (indices within
  // 0.001), the gap of k = 5 far larger: 5 is chosen.
  t = {with_gap(row(3, 0.99997, 1e-5, 0.01), 0.051, 0.013), with_gap(row(4, 0.83, 0.07, 0.01, 0.3), 0.109, 0.013),
       with_gap(row(5, 0.99992, 7e-5, 0.01), 0.163, 0.014), with_gap(row(6, 0.83, 0.03, 0.01), 0.155, 0.014)};
  apply_holm(t, 0.9);
  c = choose_regime_count(t);
  CHECK(c.k == 5);
  CHECK(c.reason.find("k = 5: the significant k = 3, 5 have indices within 0.001 of the highest (1.000), too "
                      "close to rank; the gap over red noise decides (3: 0.051, 5: 0.163)") == 0);
  CHECK(c.reason.find("also significant, with lower indices: k = 6 (0.830)") != std::string::npos);

  // Gaps within the spread of the largest: the smaller k is kept.
  t[0].gap = 0.150;
  c = choose_regime_count(t);
  CHECK(c.k == 3);
  CHECK(c.reason.find("and k = 3 is within the spread (0.014) of the largest, so the smaller k is kept") !=
        std::string::npos);

  // A wide spread of the top index ties more k.
  t = {row(3, 0.95, 0.0, 0.01), row(4, 0.999, 0.05, 0.01)};
  apply_holm(t, 0.9);
  CHECK(choose_regime_count(t).k == 3);  // equal gaps (0): the smaller k
}

TEST_CASE("the surrogates a test needs") {
  CHECK(minimum_surrogates(7, 0.9) == 69);  // 1/70 <= 0.1/7
  CHECK(minimum_surrogates(4, 0.9) == 39);
  CHECK(minimum_surrogates(1, 0.95) == 19);
  std::vector<char> consecutive;
  const arma::mat pcs = planted_regime_pcs(200, consecutive);
  RegimeCountOptions o;
  o.runs = 2;
  CHECK_THROWS_AS(regime_count_table(pcs, consecutive, o, {}), InputError);
}
