// Numbers in text outputs: the shortest decimal that reads back to the same
// double (std::to_chars), so CSV and JSON lose nothing and carry no noise
// such as 5712035.8799999999.
#pragma once

#include <charconv>
#include <cmath>
#include <string>

namespace sillstone::detail {

/// Shortest round-trip text of `v`; empty for NaN and infinities (a blank cell).
inline std::string shortest(double v) {
  if (!std::isfinite(v)) return "";
  char buf[32];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, r.ptr);
}

}  // namespace sillstone::detail
