#include "sillstone/names.hpp"

#include <array>
#include <utility>

#include "sillstone/error.hpp"
#include "sillstone/fit.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/model.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/transform.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {
namespace detail {

template <class Enum>
struct NameTable;  // specialised below, once per enum

template <>
struct NameTable<BelowDetection> {
  static constexpr std::array<std::pair<BelowDetection, std::string_view>, 4> entries{{
      {BelowDetection::half, "half"},
      {BelowDetection::limit, "limit"},
      {BelowDetection::zero, "zero"},
      {BelowDetection::drop, "drop"},
  }};
};

template <>
struct NameTable<DuplicatePolicy> {
  static constexpr std::array<std::pair<DuplicatePolicy, std::string_view>, 3> entries{{
      {DuplicatePolicy::average, "average"},
      {DuplicatePolicy::first, "first"},
      {DuplicatePolicy::error, "error"},
  }};
};

template <>
struct NameTable<Transform> {
  static constexpr std::array<std::pair<Transform, std::string_view>, 3> entries{{
      {Transform::none, "none"},
      {Transform::log, "log"},
      {Transform::normal_score, "normal-score"},
  }};
};

template <>
struct NameTable<Family> {
  static constexpr std::array<std::pair<Family, std::string_view>, 7> entries{{
      {Family::nugget, "nugget"},
      {Family::spherical, "spherical"},
      {Family::exponential, "exponential"},
      {Family::gaussian, "gaussian"},
      {Family::cubic, "cubic"},
      {Family::matern, "matern"},
      {Family::power, "power"},
  }};
};

template <>
struct NameTable<KrigingMethod> {
  static constexpr std::array<std::pair<KrigingMethod, std::string_view>, 3> entries{{
      {KrigingMethod::simple, "simple"},
      {KrigingMethod::ordinary, "ordinary"},
      {KrigingMethod::universal, "universal"},
  }};
};

template <>
struct NameTable<Drift> {
  static constexpr std::array<std::pair<Drift, std::string_view>, 3> entries{{
      {Drift::none, "none"},
      {Drift::linear, "linear"},
      {Drift::quadratic, "quadratic"},
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

template <>
struct NameTable<FitWeights> {
  static constexpr std::array<std::pair<FitWeights, std::string_view>, 3> entries{{
      {FitWeights::cressie, "cressie"},
      {FitWeights::pairs, "pairs"},
      {FitWeights::equal, "equal"},
  }};
};

template <>
struct NameTable<FitTermination> {
  static constexpr std::array<std::pair<FitTermination, std::string_view>, 9> entries{{
      {FitTermination::small_gradient, "small-gradient"},
      {FitTermination::small_step, "small-step"},
      {FitTermination::small_decrease, "small-decrease"},
      {FitTermination::no_decrease, "no-decrease"},
      {FitTermination::perfect_fit, "perfect-fit"},
      {FitTermination::sills_only, "sills-only"},
      {FitTermination::no_free_parameters, "no-free-parameters"},
      {FitTermination::iteration_limit, "iteration-limit"},
      {FitTermination::weights_unsettled, "weights-unsettled"},
  }};
};

template <>
struct NameTable<SpatialDependence> {
  static constexpr std::array<std::pair<SpatialDependence, std::string_view>, 4> entries{{
      {SpatialDependence::strong, "strong"},
      {SpatialDependence::moderate, "moderate"},
      {SpatialDependence::weak, "weak"},
      {SpatialDependence::undefined, "undefined"},
  }};
};

}  // namespace detail

template <class Enum>
std::string_view name_of(Enum value) {
  for (const auto& [e, name] : detail::NameTable<Enum>::entries)
    if (e == value) return name;
  return "?";  // unreachable for a valid enum value
}

template <class Enum>
std::vector<std::string> names_of() {
  std::vector<std::string> out;
  for (const auto& entry : detail::NameTable<Enum>::entries) out.emplace_back(entry.second);
  return out;
}

template <class Enum>
Enum parse_name(std::string_view text, std::string_view what) {
  for (const auto& [e, name] : detail::NameTable<Enum>::entries)
    if (name == text) return e;
  std::string choices;
  for (const auto& name : names_of<Enum>()) choices += (choices.empty() ? "" : ", ") + name;
  throw InputError(std::string(what), "'" + std::string(text) +
                                          "' is not one of the accepted values (" + choices + ")");
}

#define SILLSTONE_NAMED_ENUM(E)                                   \
  template std::string_view name_of<E>(E);                        \
  template std::vector<std::string> names_of<E>();                \
  template E parse_name<E>(std::string_view, std::string_view);

SILLSTONE_NAMED_ENUM(BelowDetection)
SILLSTONE_NAMED_ENUM(DuplicatePolicy)
SILLSTONE_NAMED_ENUM(Transform)
SILLSTONE_NAMED_ENUM(Family)
SILLSTONE_NAMED_ENUM(KrigingMethod)
SILLSTONE_NAMED_ENUM(Drift)
SILLSTONE_NAMED_ENUM(VariogramEstimator)
SILLSTONE_NAMED_ENUM(VariogramStatistic)
SILLSTONE_NAMED_ENUM(FitWeights)
SILLSTONE_NAMED_ENUM(FitTermination)
SILLSTONE_NAMED_ENUM(SpatialDependence)

#undef SILLSTONE_NAMED_ENUM

}  // namespace sillstone
