// sillstone/transform.hpp -- the transform applied to sample values before analysis.
//
// A variogram, and so a covariance model, describes the values after this
// transform; kriging back-transforms its estimates. The spelling of each value
// ("none", "log", "normal-score") is the one of `--transform` and of the
// "transform" key of model.json (src/variogram/names.cpp).
#pragma once

namespace sillstone {

/// How sample values are transformed before the variogram is computed.
enum class Transform : int {
  none,          ///< the values as read
  log,           ///< natural logarithm (values must be > 0)
  normal_score,  ///< rank-based transform to standard normal scores
};

}  // namespace sillstone
