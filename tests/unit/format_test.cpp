// The one number formatter (sillstone/format.hpp).
//
// Sources of the expected values:
// - Round trip: C17 7.22.1.3 (strtod converts a decimal to the nearest
//   double) with std::to_chars' guarantee (C++17 [utility.to.chars]): the
//   shortest text that reads back to the same value. Checked by reading each
//   text back with std::strtod and comparing the bits; "shortest" by checking
//   that one significant digit fewer (printf %.*e, C17 7.21.6.1) does not
//   read back to the same double.
// - %g form: C17 7.21.6.1 (exponent form when the exponent is below -4 or
//   at least the precision; trailing zeros removed); the expected texts are
//   worked by hand from that rule.
// - IEEE 754 binary64 extremes: DBL_MAX, DBL_MIN, the smallest subnormal
//   (std::numeric_limits).
#include <catch2/catch.hpp>

#include <cfloat>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <limits>
#include <random>
#include <string>
#include <vector>

#include "sillstone/format.hpp"

using namespace sillstone;

namespace {

std::uint64_t bits(double x) {
  std::uint64_t b;
  std::memcpy(&b, &x, sizeof b);
  return b;
}

// Significant digits of a to_chars text such as "-1.2345e-07" or "0.00125".
int significant_digits(const std::string& text) {
  std::string digits;
  for (char c : text) {
    if (c == 'e') break;
    if (c >= '0' && c <= '9') digits += c;
  }
  const auto first = digits.find_first_not_of('0');
  if (first == std::string::npos) return 1;
  digits = digits.substr(first);
  // Trailing zeros of an integer ("1000") are not significant.
  while (digits.size() > 1 && digits.back() == '0') digits.pop_back();
  return static_cast<int>(digits.size());
}

// Doubles over the whole range: random bit patterns (every exponent,
// subnormals included; NaN and infinity patterns skipped), fixed seed.
std::vector<double> random_doubles(std::size_t n) {
  std::mt19937_64 rng(20261205);
  std::vector<double> out;
  while (out.size() < n) {
    const std::uint64_t b = rng();
    double x;
    std::memcpy(&x, &b, sizeof x);
    if (std::isfinite(x)) out.push_back(x);
  }
  return out;
}

}  // namespace

TEST_CASE("format_for_file: 10,000 random doubles read back bit-identical, in the fewest digits",
          "[format]") {
  std::vector<double> values = random_doubles(10000);
  const double extremes[] = {0.0,
                             -0.0,
                             DBL_MAX,
                             -DBL_MAX,
                             DBL_MIN,
                             -DBL_MIN,
                             std::numeric_limits<double>::denorm_min(),
                             -std::numeric_limits<double>::denorm_min(),
                             std::nextafter(DBL_MIN, 0.0),  // the largest subnormal
                             1.0,
                             0.1,
                             1.0 / 3.0,
                             5712035.88,
                             9007199254740993.0};  // 2^53 + 1 (rounds to 2^53)
  values.insert(values.end(), std::begin(extremes), std::end(extremes));
  std::size_t subnormals = 0;
  for (double x : values) {
    subnormals += std::fpclassify(x) == FP_SUBNORMAL;
    const std::string text = format_for_file(x);
    INFO("value bits " << bits(x) << " written as '" << text << "'");
    REQUIRE(!text.empty());
    char* end = nullptr;
    const double back = std::strtod(text.c_str(), &end);
    REQUIRE(*end == '\0');
    REQUIRE(bits(back) == bits(x));
    // A whole number written without exponent ("15750957434625492992":
    // to_chars picks the fewer characters, and the fixed form of a large
    // integer is all its digits) is exact, not shortest in digits: skipped.
    const bool plain_integer = text.find_first_of(".e") == std::string::npos;
    const int digits = significant_digits(text);
    if (digits > 1 && !plain_integer) {
      char shorter[64];
      std::snprintf(shorter, sizeof shorter, "%.*e", digits - 2, x);  // digits - 1 significant
      CHECK(bits(std::strtod(shorter, nullptr)) != bits(x));
    }
  }
  CHECK(subnormals >= 2);  // the extremes above; random patterns rarely are
}

TEST_CASE("format_for_file: known shortest forms", "[format]") {
  // Shortest round-trip texts, worked by hand: 0.1 + 0.2 is the double just
  // above 0.3, which needs 17 digits; 2^-1074 is 4.94...e-324, shortest 5e-324.
  CHECK(format_for_file(0.1 + 0.2) == "0.30000000000000004");
  CHECK(format_for_file(450) == "450");
  CHECK(format_for_file(0.2) == "0.2");
  CHECK(format_for_file(1e-5) == "1e-05");
  CHECK(format_for_file(5712035.88) == "5712035.88");
  CHECK(format_for_file(std::numeric_limits<double>::denorm_min()) == "5e-324");
  CHECK(format_for_file(-0.0) == "-0");
}

TEST_CASE("format_for_file: NaN and infinities are an empty cell", "[format]") {
  CHECK(kMissingInFiles.empty());
  CHECK(format_for_file(std::numeric_limits<double>::quiet_NaN()).empty());
  CHECK(format_for_file(-std::numeric_limits<double>::quiet_NaN()).empty());
  CHECK(format_for_file(std::numeric_limits<double>::infinity()).empty());
  CHECK(format_for_file(-std::numeric_limits<double>::infinity()).empty());
}

TEST_CASE("format_for_people: significant digits in the %g form", "[format]") {
  // Rounded by hand to 4 significant digits (the default).
  CHECK(format_for_people(0.6249168393707476) == "0.6249");
  CHECK(format_for_people(125.44980254554625) == "125.4");
  CHECK(format_for_people(125.45) == "125.5");  // 125.45 is stored just above 125.45
  CHECK(format_for_people(1) == "1");           // trailing zeros removed
  CHECK(format_for_people(450) == "450");
  CHECK(format_for_people(1234567) == "1.235e+06");     // exponent 6 >= 4 digits
  CHECK(format_for_people(0.0001234) == "0.0001234");   // exponent -4: plain
  CHECK(format_for_people(0.00001234) == "1.234e-05");  // exponent -5: exponent form
  CHECK(format_for_people(-2.5e-7, 2) == "-2.5e-07");
  CHECK(format_for_people(1234567, 6) == "1.23457e+06");
  CHECK(format_for_people(5712035.88, 12) == "5712035.88");
  // Digits outside 1..17 are clamped: 0 acts as 1 (as printf's %.0g), 40 as 17.
  CHECK(format_for_people(0.6249, 0) == "0.6");
  CHECK(format_for_people(0.1, 40) == "0.10000000000000001");
}

TEST_CASE("format_for_people: one spelling of NaN, inf and -inf", "[format]") {
  CHECK(kMissingForPeople == "nan");
  CHECK(format_for_people(std::numeric_limits<double>::quiet_NaN()) == "nan");
  CHECK(format_for_people(-std::numeric_limits<double>::quiet_NaN(), 6) == "nan");
  CHECK(format_for_people(std::numeric_limits<double>::infinity()) == "inf");
  CHECK(format_for_people(-std::numeric_limits<double>::infinity()) == "-inf");
}
