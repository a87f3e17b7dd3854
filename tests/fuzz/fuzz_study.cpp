// libFuzzer target: the study-file reader (parse_study, the in-memory entry
// point of read_study).
//
// Any input either throws sillstone::InputError (whose message names the
// study file) or gives a Study whose settings serialise to valid JSON. Any
// other exception, a crash or a sanitizer report is a finding. parse_study
// opens no file, so inputs naming paths are harmless.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include <nlohmann/json.hpp>

#include "sillstone/error.hpp"
#include "sillstone/study.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const sillstone::Study st = sillstone::parse_study(text, "fuzz/study.toml");
    const auto settings = nlohmann::json::parse(sillstone::study_settings_json(st));
    if (!settings.is_object()) std::abort();
  } catch (const sillstone::InputError& e) {
    if (std::string(e.what()).find("fuzz/study.toml") == std::string::npos) {
      std::fprintf(stderr, "fuzz_study: an error that does not name the file: %s\n", e.what());
      std::abort();
    }
  }
  return 0;
}
