// The value transform: applied once by the variogram stage, carried in the
// variogram table and model.json, and undone by kriging.
#include "sillstone/transform.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "sillstone/format.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {

bool ValueTransform::accepts(double value) const {
  if (std::isnan(value)) return false;
  switch (kind) {
    case Transform::log:
      return value + log_offset > 0;
    case Transform::normal_score:
      return !table.values.empty();
    case Transform::none:
      break;
  }
  return std::isfinite(value);
}

double ValueTransform::forward(double value) const {
  if (!accepts(value)) return std::numeric_limits<double>::quiet_NaN();
  switch (kind) {
    case Transform::log:
      return std::log(value + log_offset);
    case Transform::normal_score: {
      // The inverse of NormalScoreTable::back_transform: linear between the
      // table's points, ends held.
      const auto& v = table.values;
      const auto& s = table.scores;
      if (value <= v.front()) return s.front();
      if (value >= v.back()) return s.back();
      const auto hi =
          static_cast<std::size_t>(std::upper_bound(v.begin(), v.end(), value) - v.begin());
      const std::size_t lo = hi - 1;
      const double f = (value - v[lo]) / (v[hi] - v[lo]);
      return s[lo] + f * (s[hi] - s[lo]);
    }
    case Transform::none:
      break;
  }
  return value;
}

std::string ValueTransform::describe() const {
  switch (kind) {
    case Transform::log:
      return log_offset == 0 ? "log(value)" : "log(value + " + format_for_file(log_offset) + ")";
    case Transform::normal_score:
      return "normal-score";
    case Transform::none:
      break;
  }
  return "none";
}

bool ValueTransform::same_as(const ValueTransform& other) const {
  if (kind != other.kind) return false;
  if (kind == Transform::log) return log_offset == other.log_offset;
  if (kind == Transform::normal_score)
    return table.values == other.table.values && table.scores == other.table.scores;
  return true;
}

ValueTransform transform_of(const EmpiricalVariogram& variogram) {
  ValueTransform t;
  t.kind = variogram.options.transform;
  if (t.kind == Transform::log) t.log_offset = variogram.options.log_offset;
  if (t.kind == Transform::normal_score) t.table = variogram.normal_scores;
  return t;
}

}  // namespace sillstone
