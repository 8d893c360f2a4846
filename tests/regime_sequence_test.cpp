#include <doctest/doctest.h>

#include <cmath>

#include "isohypse/base/error.hpp"
#include "isohypse/numerics/regime_sequence.hpp"

using namespace isohypse;

TEST_CASE("Markov estimate of METHODS.md section 5 (Anderson & Goodman 1957)") {
  const std::vector<int> labels = {0, 0, 0, 1, 1, 0, 2, 2, 2, 2, 1, 1, 0, 0};
  std::vector<char> consecutive(labels.size(), 1);
  consecutive[0] = 0;
  const SequenceStats s = sequence_stats(labels, consecutive, 3, 3);
  CHECK(arma::all(arma::vectorise(s.counts == arma::umat{{3, 1, 1}, {2, 2, 0}, {0, 1, 3}})));
  CHECK(arma::approx_equal(s.transition, arma::mat{{0.6, 0.2, 0.2}, {0.5, 0.5, 0}, {0, 0.25, 0.75}},
                           "absdiff", 1e-12));
  CHECK(arma::approx_equal(s.residence_days, arma::vec{2.5, 2, 4}, "absdiff", 1e-12));
  CHECK(s.runs[0].runs == std::vector<int>{3, 1, 2});
  CHECK(s.runs[1].runs == std::vector<int>{2, 2});
  CHECK(s.runs[2].runs == std::vector<int>{4});
  CHECK(s.runs[0].mean == doctest::Approx(2.0));
  CHECK(s.runs[0].median == doctest::Approx(2.0));
  CHECK(s.runs[0].longest == 3);
  CHECK(s.runs[0].episodes == 1);  // runs of >= 3 days
  CHECK(s.runs[1].median == doctest::Approx(2.0));
  CHECK(s.runs[2].episodes == 1);
  CHECK(arma::approx_equal(s.frequency, arma::vec{6, 4, 4} / 14.0, "absdiff", 1e-12));
}

TEST_CASE("season breaks and missing days cut runs and transitions") {
  // Two seasons: 0 0 | 0 0 -1 0 1 1 ; the break and the missing day cut runs.
  const std::vector<int> labels = {0, 0, 0, 0, -1, 0, 1, 1};
  const std::vector<char> consecutive = {0, 1, 0, 1, 1, 1, 1, 1};
  const SequenceStats s = sequence_stats(labels, consecutive, 2);
  CHECK(s.runs[0].runs == std::vector<int>{2, 2, 1});
  CHECK(s.runs[1].runs == std::vector<int>{2});
  CHECK(s.counts(0, 0) == 2);
  CHECK(s.counts(0, 1) == 1);
  CHECK(s.counts(1, 1) == 1);
  CHECK(arma::accu(s.counts) == 4);
  CHECK(s.transition(1, 1) == 1.0);
  CHECK(std::isinf(s.residence_days[1]));
  CHECK(s.frequency[0] == doctest::Approx(5.0 / 7.0));
  CHECK(s.runs[0].episodes == 0);  // default min_episode 5
}

TEST_CASE("a state never left from has NaN transitions and bad labels are refused") {
  const SequenceStats s = sequence_stats({0, 0, 1}, {0, 1, 1}, 3);
  CHECK(std::isnan(s.transition(1, 0)));
  CHECK(std::isnan(s.transition(2, 2)));
  CHECK(std::isnan(s.residence_days[2]));
  CHECK(s.runs[2].runs.empty());
  CHECK(s.runs[2].mean == 0.0);
  CHECK_THROWS_AS(sequence_stats({0, 3}, {0, 1}, 3), InternalError);
  CHECK_THROWS_AS(sequence_stats({0, 1}, {0}, 3), InternalError);
}
