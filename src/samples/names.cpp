// The one spelling of each enumerated setting of the sample reader's policies (names.hpp);
// the machinery is in core/name_table.hpp.
#include "core/name_table.hpp"
#include "sillstone/samples.hpp"

namespace sillstone {
namespace detail {

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

}  // namespace detail

SILLSTONE_NAMED_ENUM(BelowDetection)
SILLSTONE_NAMED_ENUM(DuplicatePolicy)

}  // namespace sillstone
