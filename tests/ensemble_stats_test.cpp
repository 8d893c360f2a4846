#include <doctest/doctest.h>

#include <cmath>

#include "isohypse/numerics/ensemble_stats.hpp"
#include "isohypse/base/error.hpp"

using namespace isohypse;

namespace {

MemberTrack track(double weight, int first_offset, std::vector<int> labels, int member = 0) {
  return {"2025-12-01", member, weight, first_offset, std::move(labels)};
}

// One member per label, all valid on day 0.
std::vector<MemberTrack> one_day(const std::vector<int>& labels, double weight) {
  std::vector<MemberTrack> out;
  for (std::size_t m = 0; m < labels.size(); ++m) out.push_back(track(weight, 0, {labels[m]}, static_cast<int>(m)));
  return out;
}

bool same(const arma::mat& a, const arma::mat& b) { return arma::approx_equal(a, b, "absdiff", 1e-12); }

}  // namespace

TEST_CASE("ensemble: lagged-ensemble check of METHODS.md section 4 (Hoffman & Kalnay 1983)") {
  // Hoffman & Kalnay 1983, "Lagged average forecasting", Tellus 35A, 100-118:
  // p_k = sum_m w_m 1[label_m = k] / sum_m w_m; check values from METHODS.md §4.
  const std::vector<int> latest = {0, 0, 1, 0, 2}, older = {1, 1, 0, 1, 3};
  for (const double w_latest : {1.0, 2.0}) {
    std::vector<MemberTrack> tracks = one_day(latest, w_latest);
    for (MemberTrack& t : one_day(older, 1.0)) tracks.push_back(t);
    const auto days = daily_probabilities(tracks, 4, 0, 0);
    REQUIRE(days.size() == 1);
    CHECK(days[0].offset == 0);
    CHECK(days[0].members == 10);
    if (w_latest == 1.0) {
      CHECK(same(days[0].probability, arma::vec{0.4, 0.4, 0.1, 0.1}));
      CHECK(days[0].most_likely == 0);  // tie between 0 and 1: the lowest index
      CHECK(days[0].weight_sum == doctest::Approx(10.0));
    } else {
      CHECK(same(days[0].probability, arma::vec{7, 5, 2, 1} / 15.0));
      CHECK(days[0].most_likely == 0);
      CHECK(days[0].weight_sum == doctest::Approx(15.0));
    }
  }
}

TEST_CASE("ensemble: weighting parse and formulas") {
  CHECK(Weighting::parse("equal").scheme == WeightScheme::Equal);
  CHECK(Weighting::parse("linear").scheme == WeightScheme::Linear);
  const Weighting e = Weighting::parse("exp:2.5");
  CHECK(e.scheme == WeightScheme::Exponential);
  CHECK(e.timescale_days == 2.5);
  CHECK(e.to_string() == "exp:2.5");
  CHECK(Weighting::parse("exp:3").to_string() == "exp:3");
  CHECK(Weighting::parse("linear").to_string() == "linear");
  CHECK(Weighting{}.to_string() == "equal");
  for (const char* bad : {"", "Equal", "exp", "exp:", "exp:0", "exp:-1", "exp:3d", "exp:inf", "exp:nan", "lin"})
    CHECK_THROWS_WITH_AS(Weighting::parse(bad), doctest::Contains("exp:DAYS"), InputError);

  // Worked by hand from the formulas: ages 0, 1, 2 -> linear 1 - age/3 = 1, 2/3, 1/3;
  // exponential with 2 days: exp(0), exp(-1/2), exp(-1) = 1, 0.60653066, 0.36787944.
  const std::vector<int> ages = {0, 1, 2};
  CHECK(initialisation_weights(ages, Weighting::parse("equal")) == std::vector<double>{1, 1, 1});
  const auto lin = initialisation_weights(ages, Weighting::parse("linear"));
  CHECK(lin[0] == doctest::Approx(1.0));
  CHECK(lin[1] == doctest::Approx(2.0 / 3.0));
  CHECK(lin[2] == doctest::Approx(1.0 / 3.0));
  const auto ex = initialisation_weights(ages, Weighting::parse("exp:2"));
  CHECK(ex[0] == doctest::Approx(1.0));
  CHECK(ex[1] == doctest::Approx(0.6065306597));
  CHECK(ex[2] == doctest::Approx(0.3678794412));
  // max_age is the largest age given, whatever the order: ages 3, 0 -> 1/4, 1.
  const auto lin2 = initialisation_weights({3, 0}, Weighting::parse("linear"));
  CHECK(lin2[0] == doctest::Approx(0.25));
  CHECK(lin2[1] == doctest::Approx(1.0));
  CHECK(initialisation_weights({}, Weighting::parse("linear")).empty());
  CHECK_THROWS_AS(initialisation_weights({0, -1}, Weighting{}), InternalError);
  CHECK_THROWS_AS(initialisation_weights({0}, Weighting{WeightScheme::Exponential, 0.0}), InputError);
}

TEST_CASE("ensemble: three initialisations with linear and exponential weights (worked by hand)") {
  // Worked by hand. Issue-day members valid on day 1, n_states 3 (2 = no regime):
  //   A, age 0: labels 0 and 1;  B, age 1: 0 and 2;  C, age 2: 1 and 1.
  // Linear (1, 2/3, 1/3): weight sum 2 (1 + 2/3 + 1/3) = 4;
  //   p0 = (1 + 2/3)/4 = 5/12, p1 = (1 + 2/3)/4 = 5/12, p2 = (2/3)/4 = 2/12 (tie 0/1 -> 0).
  // Exponential, 2 days (1, a = e^-0.5, b = e^-1): weight sum 2 (1 + a + b) = 3.94882020;
  //   p0 = (1 + a)/3.94882020 = 0.40683814, p1 = (1 + 2b)/.. = 0.43956392, p2 = a/.. = 0.15359794.
  const std::vector<std::vector<int>> labels = {{0, 1}, {0, 2}, {1, 1}};
  const auto build = [&](const std::vector<double>& w) {
    std::vector<MemberTrack> tracks;
    for (std::size_t i = 0; i < labels.size(); ++i)
      for (int m = 0; m < 2; ++m) tracks.push_back(track(w[i], 1, {labels[i][m]}, m));
    return tracks;
  };
  const std::vector<int> ages = {0, 1, 2};

  const auto lin = daily_probabilities(build(initialisation_weights(ages, Weighting::parse("linear"))), 3, 1, 1);
  REQUIRE(lin.size() == 1);
  CHECK(same(lin[0].probability, arma::vec{5, 5, 2} / 12.0));
  CHECK(lin[0].most_likely == 0);
  CHECK(lin[0].weight_sum == doctest::Approx(4.0));

  const auto ex = daily_probabilities(build(initialisation_weights(ages, Weighting::parse("exp:2"))), 3, 1, 1);
  REQUIRE(ex.size() == 1);
  CHECK(arma::approx_equal(ex[0].probability, arma::vec{0.4068381384, 0.4395639188, 0.1535979429}, "absdiff", 1e-9));
  CHECK(ex[0].most_likely == 1);
  CHECK(ex[0].weight_sum == doctest::Approx(3.9488202018));
}

TEST_CASE("ensemble: probabilities sum to 1 every day and uncovered days are left out") {
  // Invented tracks of different starts, lengths and weights.
  std::vector<MemberTrack> tracks;
  for (int m = 0; m < 12; ++m) {
    std::vector<int> labels;
    for (int d = 0; d < 10 + m % 4; ++d) labels.push_back((m * 7 + d * 3 + (d * d) % 5) % 5);
    tracks.push_back(track(0.3 + 0.25 * (m % 3), -(m % 3), labels, m));
  }
  tracks.push_back(track(1.0, 20, {4, 4}));  // covers days 20 and 21 only
  const auto days = daily_probabilities(tracks, 5, -5, 30);
  // Days -2..12 from the 12 members, then 20..21; -5..-3, 13..19 and 22..30 uncovered.
  REQUIRE(days.size() == 17);
  CHECK(days.front().offset == -2);
  CHECK(days[14].offset == 12);
  CHECK(days[15].offset == 20);
  CHECK(days.back().offset == 21);
  for (const DayProbabilities& d : days) {
    CHECK(arma::accu(d.probability) == doctest::Approx(1.0));
    CHECK(d.probability.min() >= 0.0);
    CHECK(d.probability[d.most_likely] == doctest::Approx(d.probability.max()));
  }
  CHECK(days.front().members == 4);  // members 2, 5, 8, 11 start at day -2
  CHECK(days.back().members == 1);
  CHECK(daily_probabilities(tracks, 5, 14, 19).empty());
}

TEST_CASE("ensemble: window expected days dominance and transitions (worked by hand)") {
  // Worked by hand. n_states 3, window days 1..4:
  //   m1 w1, days 0..5: 2 | 0 0 1 1 | 2   window 0 0 1 1 -> dominant tie 0/1, half each
  //   m2 w1, days 1..4:     1 1 1 0       -> dominant 1
  //   m3 w2, days 1..4:     2 2 0 2       -> dominant 2
  //   m4 w1, days 2..4:       0 0 0       -> 3 of 4 days (75 %, under 80 %): no dominance vote
  // Dominance (weight 4): (0.5, 0.5 + 1, 2) / 4 = (0.125, 0.375, 0.5).
  // Daily p: day 1 (1,1,2)/4, day 2 (2,1,2)/5, day 3 (3,2,0)/5, day 4 (2,1,2)/5;
  // expected days (0.25+0.4+0.6+0.4, 0.25+0.2+0.4+0.2, 0.5+0.4+0+0.4) = (1.65, 1.05, 1.3).
  // Transitions inside the window (m1's 2->0 and 1->2 cross its edges):
  //   m1: 00 01 11; m2: 11 11 10; m3 (x2): 22 20 02; m4: 00 00
  //   counts [[3,1,2],[1,3,0],[2,0,2]], rows / 6, 4, 4 (Anderson & Goodman 1957 ML estimate).
  const std::vector<MemberTrack> tracks = {track(1, 0, {2, 0, 0, 1, 1, 2}, 1), track(1, 1, {1, 1, 1, 0}, 2),
                                           track(2, 1, {2, 2, 0, 2}, 3), track(1, 2, {0, 0, 0}, 4)};
  const WindowSummary w = window_summary(tracks, 3, 1, 4);
  CHECK(w.first == 1);
  CHECK(w.last == 4);
  CHECK(w.members == 3);
  CHECK(w.member_weight == doctest::Approx(4.0));
  CHECK(w.initialisations == 1);  // every track() is initialisation 2025-12-01
  CHECK(same(w.dominance, arma::vec{0.125, 0.375, 0.5}));
  CHECK(same(w.expected_days, arma::vec{1.65, 1.05, 1.3}));
  CHECK(same(w.transition_counts, arma::mat{{3, 1, 2}, {1, 3, 0}, {2, 0, 2}}));
  CHECK(same(w.transition, arma::mat{{0.5, 1.0 / 6, 1.0 / 3}, {0.25, 0.75, 0}, {0.5, 0, 0.5}}));

  // A state never visited: zero expected days and dominance, a NaN transition row.
  const WindowSummary w4 = window_summary(tracks, 4, 1, 4);
  CHECK(w4.expected_days[3] == 0.0);
  CHECK(w4.dominance[3] == 0.0);
  CHECK(w4.transition.row(3).is_finite() == false);
  CHECK(same(w4.transition.submat(0, 0, 2, 2), w.transition));

  // Window 0..1: only m1 covers both days (2 then 0); the others have at most 1 of 2 and do not count.
  const WindowSummary early = window_summary(tracks, 3, 0, 1);
  CHECK(early.members == 1);
  CHECK(same(early.dominance, arma::vec{0.5, 0, 0.5}));
  CHECK(same(early.transition_counts, arma::mat{{0, 0, 0}, {0, 0, 0}, {1, 0, 0}}));
  // Day 0 is m1's alone (state 2), day 1 as above: expected (0.25, 0.25, 1.5).
  CHECK(same(early.expected_days, arma::vec{0.25, 0.25, 1.5}));

  // No member covers four fifths of the window (m1 has 2 of 3 days): dominance NaN, members 0.
  const WindowSummary late = window_summary(tracks, 3, 4, 6);
  CHECK(late.members == 0);
  CHECK(late.dominance.has_nan());
  CHECK(arma::accu(late.expected_days) == doctest::Approx(2.0));  // days 4 and 5 covered
}

TEST_CASE("ensemble: window dominance counts members covering at least 80 percent (worked by hand)") {
  // Worked by hand. n_states 3, window days 1..5 (5 days: four fifths is 4 days).
  //   m1 init A w1,   days 0..5:  2 | 0 0 1 1 1      5 of 5 -> dominant 1
  //   m5 init A w1,   days 0..5:  0 | 0 0 0 2 2      5 of 5 -> dominant 0
  //   m2 init B w2,   days -1..4: 0 1 | 2 2 0 0      4 of 5 (80 %) -> tie 0/2, weight 1 each
  //   m3 init C w1,   days -2..3: 1 1 1 | 1 1 1      3 of 5 (60 %) -> no vote
  //   m4 init D w0.5, days 2..5:  2 2 2 1 (day 1 missing) 4 of 5 -> dominant 2
  // Dominance (weight 1 + 1 + 2 + 0.5 = 4.5): (1 + 1, 1, 1 + 0.5) / 4.5 = (4/9, 2/9, 1/3);
  // 4 members from 3 initialisations (A, B, D). Requiring every day (before
  // issue 13) would have counted m1 and m5 alone: (0.5, 0.5, 0).
  // Expected days keep every covering member, m3 too. Daily p:
  //   day 1 (2,1,2)/5, day 2 (2,1,2.5)/5.5, day 3 (3,2,0.5)/5.5, day 4 (2,1,1.5)/4.5, day 5 (0,1.5,1)/2.5
  //   -> (0.4 + 10/11 + 4/9, 0.8 + 6/11 + 2/9, 0.8 + 6/11 + 1/3), summing to the 5 covered days.
  const std::vector<MemberTrack> tracks = {{"A", 1, 1.0, 0, {2, 0, 0, 1, 1, 1}},
                                           {"A", 5, 1.0, 0, {0, 0, 0, 0, 2, 2}},
                                           {"B", 2, 2.0, -1, {0, 1, 2, 2, 0, 0}},
                                           {"C", 3, 1.0, -2, {1, 1, 1, 1, 1, 1}},
                                           {"D", 4, 0.5, 2, {2, 2, 2, 1}}};
  const WindowSummary w = window_summary(tracks, 3, 1, 5);
  CHECK(w.members == 4);
  CHECK(w.member_weight == doctest::Approx(4.5));
  CHECK(w.initialisations == 3);
  CHECK(same(w.dominance, arma::vec{4.0 / 9, 2.0 / 9, 1.0 / 3}));
  const arma::vec expected = {0.4 + 10.0 / 11 + 4.0 / 9, 0.8 + 6.0 / 11 + 2.0 / 9, 0.8 + 6.0 / 11 + 1.0 / 3};
  CHECK(same(w.expected_days, expected));

  // Window 0..18 (19 days; four fifths is 15.2, so 16 days are needed):
  //   X w1, days -3..18: window 10 x state 0 then 9 x state 1   19 of 19 -> dominant 0
  //   Y w1, days -4..11: window 12 days all 2                   12 of 19 (63 %) -> no vote
  //   Y w1, days 0..15:  8 x 1 then 8 x 2                       16 of 19 (84 %) -> tie 1/2
  //   Z w1, days 0..14:  15 x 2                                 15 of 19 (79 %) -> no vote
  // Dominance (weight 2): (1, 0.5, 0.5) / 2 = (0.5, 0.25, 0.25), 2 members of 2 initialisations.
  std::vector<int> x(3, 1), y1(16, 2), y2(8, 1), z(15, 2);
  x.insert(x.end(), 10, 0);
  x.insert(x.end(), 9, 1);
  y2.insert(y2.end(), 8, 2);
  const std::vector<MemberTrack> long_tracks = {
      {"X", 0, 1.0, -3, x}, {"Y", 0, 1.0, -4, y1}, {"Y", 1, 1.0, 0, y2}, {"Z", 0, 1.0, 0, z}};
  const WindowSummary lw = window_summary(long_tracks, 3, 0, 18);
  CHECK(lw.members == 2);
  CHECK(lw.member_weight == doctest::Approx(2.0));
  CHECK(lw.initialisations == 2);
  CHECK(same(lw.dominance, arma::vec{0.5, 0.25, 0.25}));
  CHECK(arma::accu(lw.expected_days) == doctest::Approx(19.0));

  // Exactly four fifths of a 10-day window (8 days) counts; 7 days do not.
  const WindowSummary ten = window_summary({{"P", 0, 1.0, 0, std::vector<int>(8, 1)},
                                            {"Q", 0, 1.0, 0, std::vector<int>(7, 0)}}, 2, 0, 9);
  CHECK(ten.members == 1);
  CHECK(same(ten.dominance, arma::vec{0, 1}));
  // No member reaches four fifths: NaN dominance, zero counts.
  const WindowSummary none = window_summary({{"Q", 0, 1.0, 0, std::vector<int>(7, 0)}}, 2, 0, 9);
  CHECK(none.members == 0);
  CHECK(none.member_weight == 0.0);
  CHECK(none.initialisations == 0);
  CHECK(none.dominance.has_nan());
}

TEST_CASE("ensemble: current age of the state at each offset (worked by hand)") {
  // Worked by hand. a (w1), days -1..4: 0 0 1 1 1 0 -> ages 1 2 1 2 3 1;
  //                 b (w3), days  1..4: 1 1 1 1     -> ages 1 2 3 4 (4 falls in the last bin).
  // max_age 3. Day 0: a alone, age 2. Day 1: both 1. Day 2: both 2. Day 3: both 3.
  // Day 4: a 1 (w1), b 4 (w3) -> (0.25, 0, 0.75), mean (1 + 12)/4 = 3.25. Day 5: uncovered.
  const std::vector<MemberTrack> tracks = {track(1, -1, {0, 0, 1, 1, 1, 0}), track(3, 1, {1, 1, 1, 1})};
  const auto ages = current_age(tracks, 2, 0, 5, 3);
  REQUIRE(ages.size() == 5);
  const std::vector<arma::vec> expected = {{0, 1, 0}, {1, 0, 0}, {0, 1, 0}, {0, 0, 1}, {0.25, 0, 0.75}};
  const std::vector<double> mean = {2, 1, 2, 3, 3.25};
  for (std::size_t d = 0; d < ages.size(); ++d) {
    CAPTURE(d);
    CHECK(ages[d].offset == static_cast<int>(d));
    CHECK(same(ages[d].probability, expected[d]));
    CHECK(ages[d].mean_age == doctest::Approx(mean[d]));
  }
  // The run counts back to the track's first day only: a's day -1 has age 1.
  const auto first_day = current_age(tracks, 2, -1, -1, 3);
  REQUIRE(first_day.size() == 1);
  CHECK(same(first_day[0].probability, arma::vec{1, 0, 0}));
  CHECK_THROWS_AS(current_age(tracks, 2, 0, 5, 0), InternalError);
}

TEST_CASE("ensemble: lasting of the spell under way at the issue date (worked by hand)") {
  // Worked by hand. Day 0 is the issue date; horizons 1, 2, 3, 4.
  // t1 (w1, from day -1): 1 0 0 0 1 -> in 0 on day 0; holds 1 and 2 days, not 3; no day 4.
  // t2 (w2, from day 0):  0 0 1     -> in 0; holds 1 day, not 2; no day 3.
  // t3 (w1, from day 0):  1 1 1 1 1 1 -> in 1; holds 1..4 days.
  // t4 (w3, from day 1) and t5 (w1, days -5..-4) miss day 0 and do not count,
  // although pooling their leads would.
  // State 0: n = 1: (1 + 2) / 3 = 1, 2 members; n = 2: 1/3, 2; n = 3: 0/1, 1; n = 4: NaN, 0.
  // State 1: 1 for every horizon, 1 member.
  const std::vector<MemberTrack> tracks = {track(1, -1, {1, 0, 0, 0, 1}), track(2, 0, {0, 0, 1}),
                                           track(1, 0, {1, 1, 1, 1, 1, 1}), track(3, 1, {0, 0}),
                                           track(1, -5, {0, 0})};
  const LastingProbability l = lasting_probability(tracks, 2, {1, 2, 3, 4});
  CHECK(l.horizons == std::vector<int>{1, 2, 3, 4});
  CHECK(l.probability(0, 0) == doctest::Approx(1.0));
  CHECK(l.probability(0, 1) == doctest::Approx(1.0 / 3.0));
  CHECK(l.probability(0, 2) == 0.0);
  CHECK(std::isnan(l.probability(0, 3)));
  CHECK(same(l.probability.row(1), arma::rowvec{1, 1, 1, 1}));
  CHECK(same(l.cases, arma::mat{{2, 2, 1, 0}, {1, 1, 1, 1}}));
  // Default horizons 3, 5, 7: a 10-day run from day 0 lasts for each.
  const LastingProbability d = lasting_probability({track(1, 0, std::vector<int>(10, 0))}, 2);
  CHECK(d.horizons == std::vector<int>{3, 5, 7});
  CHECK(same(d.cases.row(0), arma::rowvec{1, 1, 1}));
  CHECK(same(d.probability.row(0), arma::rowvec{1, 1, 1}));
  CHECK_THROWS_AS(lasting_probability(tracks, 2, {}), InternalError);
  CHECK_THROWS_AS(lasting_probability(tracks, 2, {3, 0}), InternalError);
}

TEST_CASE("ensemble: current run length of an observed sequence") {
  CHECK(current_run_length({0, 0, 1, 1, 1}, {0, 1, 1, 1, 1}) == 3);
  CHECK(current_run_length({0, 0, 1, 1, 1}, {0, 1, 1, 0, 1}) == 2);  // gap before day 3
  CHECK(current_run_length({1, -1, 1, 1}, {0, 1, 1, 1}) == 2);        // unknown day breaks the run
  CHECK(current_run_length({0, 1, -1}, {0, 1, 1}) == 0);              // last day unknown
  CHECK(current_run_length({2}, {0}) == 1);
  CHECK(current_run_length({3, 3, 3}, {1, 1, 1}) == 3);  // the first flag does not matter
  CHECK(current_run_length({}, {}) == 0);
  CHECK_THROWS_AS(current_run_length({0, 1}, {0}), InternalError);
  CHECK_THROWS_AS(current_run_length({0, -2}, {0, 1}), InternalError);
}

TEST_CASE("ensemble: bad inputs are refused naming the function and values") {
  const std::vector<MemberTrack> ok = {track(1, 0, {0, 1})};
  CHECK_THROWS_WITH_AS(daily_probabilities(ok, 1, 0, 1), doctest::Contains("daily_probabilities: n_states"),
                       InternalError);
  CHECK_THROWS_WITH_AS(window_summary(ok, 2, 2, 1), doctest::Contains("window_summary: first day offset 2"),
                       InternalError);
  CHECK_THROWS_WITH_AS(daily_probabilities({track(1, -3, {0, 2})}, 2, 0, 1),
                       doctest::Contains("has label 2 at day offset -2; expected 0..1"), InternalError);
  CHECK_THROWS_AS(current_age({track(1, 0, {-1})}, 2, 0, 1), InternalError);
  CHECK_THROWS_WITH_AS(lasting_probability({track(0, 0, {0})}, 2), doctest::Contains("lasting_probability"),
                       InternalError);
  CHECK_THROWS_AS(window_summary({track(-1, 0, {0})}, 2, 0, 0), InternalError);
  CHECK_THROWS_AS(window_summary({track(std::nan(""), 0, {0})}, 2, 0, 0), InternalError);
  CHECK_THROWS_AS(current_age(ok, 2, 3, 2), InternalError);
}
