// libFuzzer target: the cell reader parse_value (numbers, non-detects,
// missing markers; docs/inputs.md "How each cell is read").
//
// Properties checked on every input:
//  - a number is finite and reads back from its shortest text;
//  - a non-detect's limit is finite and positive, and the text starts '<'
//    after blanks;
//  - the result does not depend on blanks around the text.
// A crash, a sanitizer report or a broken property is a finding.
#include <charconv>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "sillstone/samples.hpp"

namespace {

[[noreturn]] void finding(const char* what, const std::string& input) {
  std::fprintf(stderr, "fuzz_value: %s for input \"%s\"\n", what, input.c_str());
  std::abort();
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using sillstone::ParsedValue;
  const std::string text(reinterpret_cast<const char*>(data), size);
  const ParsedValue v = sillstone::parse_value(text);
  switch (v.kind) {
    case ParsedValue::Kind::number: {
      if (!std::isfinite(v.value)) finding("a number that is not finite", text);
      char buffer[64];
      const auto end = std::to_chars(buffer, buffer + sizeof buffer, v.value).ptr;
      const ParsedValue again = sillstone::parse_value(std::string(buffer, end));
      if (again.kind != ParsedValue::Kind::number || again.value != v.value)
        finding("a number that does not read back", text);
      break;
    }
    case ParsedValue::Kind::below_detection:
      if (!std::isfinite(v.value) || !(v.value > 0))
        finding("a detection limit that is not positive", text);
      if (text.find('<') == std::string::npos) finding("a non-detect without '<'", text);
      break;
    case ParsedValue::Kind::missing:
    case ParsedValue::Kind::invalid:
      break;
  }
  const ParsedValue padded = sillstone::parse_value(" \t" + text + " ");
  if (padded.kind != v.kind || (v.kind != ParsedValue::Kind::missing &&
                                v.kind != ParsedValue::Kind::invalid && padded.value != v.value))
    finding("blanks around the text change the result", text);
  return 0;
}
