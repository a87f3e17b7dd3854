// The one spelling of each enumerated setting of kriging (names.hpp);
// the machinery is in core/name_table.hpp.
#include "core/name_table.hpp"
#include "sillstone/kriging.hpp"

namespace sillstone {
namespace detail {

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

}  // namespace detail

SILLSTONE_NAMED_ENUM(KrigingMethod)
SILLSTONE_NAMED_ENUM(Drift)

}  // namespace sillstone
