// sillstone/names.hpp -- enum <-> name conversions: one spelling per value.
//
// Every enumerated setting (below-detection policy, duplicate policy, and the
// settings of later stages) has exactly one spelling, used alike by the
// command line, JSON, study files and reports. The tables live in
// src/<stage>/names.cpp of the stage that defines the enum (samples,
// variogram, models, fitting, kriging); adding an enum means adding one table
// there (see src/core/name_table.hpp).
//
// Example:
//   auto policy = sillstone::parse_name<sillstone::BelowDetection>("half", "--below-detection");
//   std::string_view text = sillstone::name_of(policy);   // "half"
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace sillstone {

/// The one spelling of an enumerated value.
template <class Enum>
std::string_view name_of(Enum value);

/// The value spelled `text`. Throws InputError naming `what` (an option or key)
/// and listing the accepted spellings when `text` is none of them.
template <class Enum>
Enum parse_name(std::string_view text, std::string_view what);

/// All accepted spellings, in their documented order.
template <class Enum>
std::vector<std::string> names_of();

}  // namespace sillstone
