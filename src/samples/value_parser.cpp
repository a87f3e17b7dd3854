// Reading one cell of a value or coordinate column.
//
// Laboratory tables mix numbers with missing markers and non-detects. The
// rules (docs/inputs.md) are deliberately narrow: anything not recognised is
// invalid, and the loader turns that into an error naming row and column
// rather than guessing.
#include <algorithm>
#include <array>
#include <cctype>
#include <charconv>
#include <cmath>
#include <string_view>

#include "sillstone/samples.hpp"

namespace sillstone {
namespace {

std::string_view trim(std::string_view s) {
  auto blank = [](char c) { return c == ' ' || c == '\t' || c == '\r' || c == '\n'; };
  while (!s.empty() && blank(s.front())) s.remove_prefix(1);
  while (!s.empty() && blank(s.back())) s.remove_suffix(1);
  return s;
}

bool equals_ignoring_case(std::string_view a, std::string_view b) {
  return a.size() == b.size() && std::equal(a.begin(), a.end(), b.begin(), [](char x, char y) {
           return std::tolower(static_cast<unsigned char>(x)) ==
                  std::tolower(static_cast<unsigned char>(y));
         });
}

// A finite decimal number in the C locale: optional sign, digits, optional
// fraction and exponent. No hex, no "inf", no thousands separators.
bool parse_number(std::string_view s, double* out) {
  if (!s.empty() && s.front() == '+') s.remove_prefix(1);
  if (s.empty()) return false;
  const char c0 = s.front() == '-' && s.size() > 1 ? s[1] : s.front();
  if (!std::isdigit(static_cast<unsigned char>(c0)) && c0 != '.') return false;
  double v = 0;
  auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
  if (ec != std::errc() || end != s.data() + s.size() || !std::isfinite(v)) return false;
  *out = v;
  return true;
}

}  // namespace

ParsedValue parse_value(const std::string& text) {
  static constexpr std::array<std::string_view, 5> kMissing{"NA", "N/A", "NaN", "-", "null"};
  ParsedValue out;
  const std::string_view s = trim(text);
  if (s.empty()) {
    out.kind = ParsedValue::Kind::missing;
    return out;
  }
  for (auto marker : kMissing)
    if (equals_ignoring_case(s, marker)) {
      out.kind = ParsedValue::Kind::missing;
      return out;
    }
  if (s.front() == '<') {
    double limit = 0;
    if (parse_number(trim(s.substr(1)), &limit) && limit > 0) {
      out.kind = ParsedValue::Kind::below_detection;
      out.value = limit;
    }
    return out;  // "<", "<abc" and "<-1" stay invalid
  }
  if (parse_number(s, &out.value)) out.kind = ParsedValue::Kind::number;
  return out;
}

}  // namespace sillstone
