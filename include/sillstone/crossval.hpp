// sillstone/crossval.hpp -- leave-one-out and k-fold cross-validation.
//
// Each sample is estimated from the others (leave-one-out) or from the other
// folds (k-fold) with the same model, method and neighbourhood as `krige`,
// and compared with what was measured. Summary statistics and their ideal
// values are in docs/crossval.md.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "sillstone/kriging.hpp"

namespace sillstone {

struct CrossValidationOptions {
  int folds = 0;                  ///< 0: leave-one-out; k >= 2: k folds
  std::uint64_t seed = 20261201;  ///< fold assignment (a fixed shuffle), for k-fold
  bool is_valid(std::size_t samples, std::string* why) const;
};

/// One sample's row of the cross-validation table (CSV layout of PRODUCT.md).
struct CrossValidationRow {
  std::string id;  ///< the sample's row: CSV line number or feature id
  Point point;
  double observed = 0;            ///< as measured (after non-detect substitution)
  double estimate = 0;            ///< original scale (back-transformed with --transform log)
  double variance = 0;            ///< kriging variance, kriged scale
  double error = 0;               ///< estimate - observed
  double standardised_error = 0;  ///< (estimate - observed) / sqrt(variance), on the kriged scale
  int neighbours = 0;
  bool ok = false;  ///< false: the sample could not be estimated (see status)
  NodeEstimate::Status status = NodeEstimate::Status::ok;
};

struct CrossValidationSummary {
  std::size_t samples = 0, estimated = 0;
  double mean_error = 0;                       ///< ME, ideally 0
  double mean_absolute_error = 0;              ///< MAE
  double rmse = 0;                             ///< root mean squared error
  double mean_standardised_error = 0;          ///< MSE, ideally 0 (over samples with variance > 0)
  double mean_squared_standardised_error = 0;  ///< MSSE, ideally 1 (likewise)
  double correlation = 0;         ///< Pearson r of observed and estimated (NaN: undefined)
  std::size_t zero_variance = 0;  ///< estimated samples with variance 0: no standardised error
  int folds = 0;                  ///< 0: leave-one-out
  KrigingSummary counts;
};

struct CrossValidationResult {
  std::vector<CrossValidationRow> rows;
  CrossValidationSummary summary;
};

/// Runs the cross-validation on value column `column`. Samples without a
/// value are left out. Deterministic for any thread count.
CrossValidationResult cross_validate(const SampleSet& samples, const CovarianceModel& model,
                                     const KrigingOptions& kriging,
                                     const NeighbourhoodOptions& neighbourhood,
                                     const CrossValidationOptions& options, std::size_t column = 0);

/// The per-sample CSV: id,x,y,z,observed,estimate,variance,error,standardised_error,neighbours.
std::string crossval_csv(const CrossValidationResult& result, int dimension);
/// The summary (and settings) as JSON.
std::string crossval_summary_json(const CrossValidationResult& result);
/// The summary as a short human-readable table.
std::string crossval_summary_text(const CrossValidationResult& result);

}  // namespace sillstone
