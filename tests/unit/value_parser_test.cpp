// parse_value: the narrow rules for reading one cell (docs/inputs.md).
#include <catch2/catch.hpp>

#include "sillstone/samples.hpp"

using sillstone::parse_value;
using Kind = sillstone::ParsedValue::Kind;

TEST_CASE("numbers are read in the C locale with optional blanks and sign", "[value_parser]") {
  CHECK(parse_value("12.5").kind == Kind::number);
  CHECK(parse_value("12.5").value == 12.5);
  CHECK(parse_value("  -3e2 ").value == -300.0);
  CHECK(parse_value("+0.25").value == 0.25);
  CHECK(parse_value(".5").value == 0.5);
  CHECK(parse_value("7\r").value == 7.0);  // Windows line ending left on the last cell
}

TEST_CASE("blanks and missing markers are missing, in any case", "[value_parser]") {
  for (const char* text : {"", "   ", "NA", "na", "N/A", "n/a", "-", "NaN", "null"})
    CHECK(parse_value(text).kind == Kind::missing);
}

TEST_CASE("non-detects carry their detection limit", "[value_parser]") {
  const auto a = parse_value("<0.5");
  CHECK(a.kind == Kind::below_detection);
  CHECK(a.value == 0.5);
  const auto b = parse_value("< 5");
  CHECK(b.kind == Kind::below_detection);
  CHECK(b.value == 5.0);
}

TEST_CASE("anything else is invalid, never guessed", "[value_parser]") {
  for (const char* text : {"abc", "1,5", "12 mg", "inf", "-inf", "Infinity", "1e400", "0x10", "<",
                           "<abc", "<-1", "<0", "--1", "1.2.3", "nan(1)"})
    CHECK(parse_value(text).kind == Kind::invalid);
}
