// The one spelling of each enumerated setting of the covariance families (names.hpp);
// the machinery is in core/name_table.hpp.
#include "core/name_table.hpp"
#include "sillstone/model.hpp"

namespace sillstone {
namespace detail {

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

}  // namespace detail

SILLSTONE_NAMED_ENUM(Family)

}  // namespace sillstone
