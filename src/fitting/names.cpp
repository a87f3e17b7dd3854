// The one spelling of each enumerated setting of the fit (names.hpp);
// the machinery is in core/name_table.hpp.
#include "core/name_table.hpp"
#include "sillstone/fit.hpp"

namespace sillstone {
namespace detail {

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

SILLSTONE_NAMED_ENUM(FitWeights)
SILLSTONE_NAMED_ENUM(FitTermination)
SILLSTONE_NAMED_ENUM(SpatialDependence)

}  // namespace sillstone
