// libFuzzer target: the model readers (SPEC syntax and model.json).
//
// Any input either throws sillstone::InputError or gives a model that
//  - writes back (to_spec) to a SPEC that reads to the same model, and to
//    model.json text that reads to the same model;
//  - evaluates to a variogram that is never NaN, at and beyond its ranges.
// Anything else (another exception, a crash, a sanitizer report, a broken
// property) is a finding. Built and run by scripts/fuzz.sh.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "sillstone/error.hpp"
#include "sillstone/model.hpp"

namespace {

[[noreturn]] void finding(const char* what, const std::string& input) {
  std::fprintf(stderr, "fuzz_spec: %s for input \"%s\"\n", what, input.c_str());
  std::abort();
}

void check_model(const sillstone::CovarianceModel& m, const std::string& input) {
  using namespace sillstone;
  if (!(parse_model_spec(to_spec(m)) == m)) finding("to_spec does not read back", input);
  ModelFile file;
  file.model = m;
  if (!(model_from_json(model_to_json(file), "fuzz.json").model == m))
    finding("model_to_json does not read back", input);
  double longest = 1;
  for (const Structure& s : m.structures()) longest = std::fmax(longest, s.range);
  for (double h : {0.0, 1e-9, 0.5 * longest, longest, 3 * longest, 1e6 * longest}) {
    if (std::isnan(m.variogram(h, 0, 0)) || std::isnan(m.variogram(0, h, 0)) ||
        std::isnan(m.variogram(0.6 * h, 0.8 * h, 0.1 * h)))
      finding("the variogram is NaN", input);
    if (m.has_sill() && std::isnan(m.covariance(h, 0, 0))) finding("the covariance is NaN", input);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    check_model(sillstone::parse_model_spec(text), text);
  } catch (const sillstone::InputError&) {
  }
  try {
    check_model(sillstone::model_from_json(text, "fuzz.json").model, text);
  } catch (const sillstone::InputError&) {
  }
  return 0;
}
