// sillstone/normal_score.hpp -- the rank-based normal-score transform and its table.
//
// `--transform normal-score` replaces each value by the standard normal
// quantile of its rank (van der Waerden scores): y = Phi^-1((r - 0.5) / n),
// r = 1..n the rank among the n values, tied values sharing their mid-rank.
// The table of (value, score) pairs is kept so that results in score units
// can be taken back to data units later. Details: docs/variogram.md.
//
// Example:
//   sillstone::NormalScores ns = sillstone::normal_scores({3.1, 0.4, 7.9, 0.4});
//   // ns.scores[1] == ns.scores[3] (tied, mid-rank 1.5); ns.table.values == {0.4, 3.1, 7.9}
//
// Thread safety: all functions are re-entrant; they share no state.
#pragma once

#include <vector>

namespace sillstone {

/// The standard normal quantile Phi^-1(p), 0 < p < 1; NaN outside (0, 1).
/// Accurate to a few units in the last place (see docs/variogram.md).
double normal_quantile(double p);

/// The distinct data values, ascending, and the normal score of each.
struct NormalScoreTable {
  std::vector<double> values;  ///< distinct values, strictly ascending
  std::vector<double> scores;  ///< their scores, strictly ascending

  /// The data value of a score: linear interpolation between the table's
  /// points; scores beyond the table's ends give its first or last value
  /// (no tail model). NaN for an empty table.
  double back_transform(double score) const;
};

/// Normal scores of `values` (NaN entries are skipped and stay NaN) and the table.
struct NormalScores {
  std::vector<double> scores;  ///< one per input value
  NormalScoreTable table;
};
NormalScores normal_scores(const std::vector<double>& values);

}  // namespace sillstone
