// The one spelling of each enumerated setting of the transform and the empirical
// variogram (names.hpp); the machinery is in core/name_table.hpp.
#include "core/name_table.hpp"
#include "sillstone/transform.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {
namespace detail {

template <>
struct NameTable<Transform> {
  static constexpr std::array<std::pair<Transform, std::string_view>, 3> entries{{
      {Transform::none, "none"},
      {Transform::log, "log"},
      {Transform::normal_score, "normal-score"},
  }};
};

template <>
struct NameTable<VariogramEstimator> {
  static constexpr std::array<std::pair<VariogramEstimator, std::string_view>, 2> entries{{
      {VariogramEstimator::matheron, "matheron"},
      {VariogramEstimator::cressie_hawkins, "cressie-hawkins"},
  }};
};

template <>
struct NameTable<VariogramStatistic> {
  static constexpr std::array<std::pair<VariogramStatistic, std::string_view>, 3> entries{{
      {VariogramStatistic::semivariance, "semivariance"},
      {VariogramStatistic::covariance, "covariance"},
      {VariogramStatistic::correlogram, "correlogram"},
  }};
};

}  // namespace detail

SILLSTONE_NAMED_ENUM(Transform)
SILLSTONE_NAMED_ENUM(VariogramEstimator)
SILLSTONE_NAMED_ENUM(VariogramStatistic)

}  // namespace sillstone
