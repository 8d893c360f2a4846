// Persistence and transitions of a daily regime sequence.
//
// Transition probabilities are the maximum-likelihood estimate of a
// first-order Markov chain (Anderson & Goodman 1957, "Statistical inference
// about Markov chains", Ann. Math. Statist. 28, 89-110): P_ij = n_ij / sum_j
// n_ij, counting only transitions between consecutive days with both labels
// present. The expected residence time in state i is 1 / (1 - P_ii) days.
#pragma once

#include <armadillo>
#include <vector>

namespace isohypse {

// Lengths (days) of the runs of one state. A run ends at a change of state,
// a season break or gap (consecutive[t] == 0) or a missing label. With no
// run, mean and median are 0.
struct RunLengthStats {
  double mean = 0.0, median = 0.0;
  int longest = 0;
  int episodes = 0;        // runs of at least min_episode days
  std::vector<int> runs;   // in time order
};

struct SequenceStats {
  int n_states = 0;              // states 0..n_states-1 (callers map "no regime" to the last)
  arma::vec frequency;           // fraction of labelled days in each state
  arma::umat counts;             // n_states x n_states transition counts, from row to column
  arma::mat transition;          // counts normalised by row; NaN for a row without data
  arma::vec residence_days;      // 1 / (1 - P_ii); inf when P_ii == 1, NaN without data
  std::vector<RunLengthStats> runs;  // per state
};

// labels: one per day, < 0 for missing (which breaks runs and transitions);
// consecutive[t] != 0 when day t immediately follows day t-1. Throws
// InputError when the lengths differ, n_states < 1, min_episode < 1 or a
// label is >= n_states (naming the day and the label).
SequenceStats sequence_stats(const std::vector<int>& labels, const std::vector<char>& consecutive,
                             int n_states, int min_episode = 5);

}  // namespace isohypse
