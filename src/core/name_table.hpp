// The machinery behind names.hpp. Each stage that defines an enumerated
// setting keeps its spellings in its own src/<stage>/names.cpp: it
// specialises detail::NameTable for the enum and instantiates the three
// functions of names.hpp with SILLSTONE_NAMED_ENUM. The core defines no
// table, so it depends on no stage above it.
#pragma once

#include <array>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "sillstone/error.hpp"
#include "sillstone/names.hpp"

namespace sillstone {
namespace detail {

/// Specialised once per enum, in its stage's names.cpp, with a member
/// `static constexpr std::array<std::pair<Enum, std::string_view>, N> entries`
/// in the documented order.
template <class Enum>
struct NameTable;

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

}  // namespace sillstone

/// Instantiates name_of, names_of and parse_name for `E` (after its table).
#define SILLSTONE_NAMED_ENUM(E)                    \
  template std::string_view name_of<E>(E);         \
  template std::vector<std::string> names_of<E>(); \
  template E parse_name<E>(std::string_view, std::string_view);
