#include "sillstone/format.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>

namespace sillstone {

std::string format_for_file(double value) {
  if (!std::isfinite(value)) return std::string(kMissingInFiles);
  char buffer[32];  // the longest shortest form, "-2.2250738585072014e-308", has 24
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, value);
  return std::string(buffer, result.ptr);
}

std::string format_for_people(double value, int significant) {
  if (std::isnan(value)) return std::string(kMissingForPeople);
  if (std::isinf(value)) return value > 0 ? "inf" : "-inf";
  char buffer[40];
  // printf's %.*g in the C locale (the text of an ostream with
  // precision(significant)), whatever the program's locale.
  const auto result = std::to_chars(buffer, buffer + sizeof buffer, value,
                                    std::chars_format::general, std::clamp(significant, 1, 17));
  return std::string(buffer, result.ptr);
}

}  // namespace sillstone
