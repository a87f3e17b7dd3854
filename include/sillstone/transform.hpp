// sillstone/transform.hpp -- the transform applied to sample values before analysis.
//
// A variogram, and so a covariance model, describes the values after this
// transform; kriging back-transforms its estimates. The variogram stage makes
// one ValueTransform; the variogram table (CSV and JSON) records it, `fit`
// copies it into model.json, and kriging, cross-validation and the report use
// the model's. The spelling of each kind ("none", "log", "normal-score") is
// the one of `--transform` and of the "transform" object of model.json
// (src/variogram/names.cpp).
//
// Example:
//   sillstone::ValueTransform t = sillstone::ValueTransform::logarithm(0.5);
//   t.forward(1.5);   // log(2.0)
//   t.describe();     // "log(value + 0.5)"
//
// Thread safety: a ValueTransform is a value; const use is re-entrant.
#pragma once

#include <string>

#include "sillstone/normal_score.hpp"

namespace sillstone {

/// How sample values are transformed before the variogram is computed.
enum class Transform : int {
  none,          ///< the values as read
  log,           ///< natural logarithm of value + offset (value + offset must be > 0)
  normal_score,  ///< rank-based transform to standard normal scores
};

/// One transform with everything needed to apply it and to undo it.
struct ValueTransform {
  Transform kind = Transform::none;
  double log_offset = 0;   ///< C in log(value + C); 0 unless kind == log
  NormalScoreTable table;  ///< kind == normal_score: the (value, score) table

  static ValueTransform identity() { return {}; }
  static ValueTransform logarithm(double offset) { return {Transform::log, offset, {}}; }

  /// The transformed value; NaN for NaN and for values outside the domain
  /// (log: value + C <= 0; normal-score: values are mapped through the table
  /// by linear interpolation of its points, ends held).
  double forward(double value) const;
  /// True when `value` can be transformed (log: value + C > 0).
  bool accepts(double value) const;
  /// "none", "log(value)", "log(value + 0.5)", "normal-score".
  std::string describe() const;
  /// Same kind and offset (and the same table for normal scores).
  bool same_as(const ValueTransform& other) const;
};

}  // namespace sillstone
