// The study file reader: keys of every section, paths relative to the file,
// and errors that name the line and the key.
#include <catch2/catch.hpp>

#include "sillstone/error.hpp"
#include "sillstone/study.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace {
std::string error_of(const std::string& path) {
  try {
    read_study(path);
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}
}  // namespace

TEST_CASE("a complete study file is read, paths resolve against its folder", "[study]") {
  test::ScratchDir dir;
  const auto path = dir.write("site.toml", R"([samples]
path = "data/samples.csv"
value = ["lead", "zinc"]
x = "e"
y = "n"
crs = "EPSG:32630"
below_detection = "limit"

[variogram]
lag = 50
lags = 12
azimuths = [0, 45, 90, 135]
estimator = "cressie-hawkins"
transform = "log"

[model]
fit = { structures = ["nugget", "spherical"], weights = "pairs", fix = ["range=300"] }

[crossval]
folds = 5

[neighbourhood]
max_points = 16
sectors = 4
max_per_sector = 4

[grid]
cell = 10
mask = "site.gpkg"

[kriging]
method = "ordinary"
transform = "log"
threshold = 450

[output]
dir = "out"

[report]
units = "mg/kg"
)");
  const Study s = read_study(path);
  CHECK(s.samples.path == dir.path("data/samples.csv"));
  CHECK(s.samples.values == std::vector<std::string>{"lead", "zinc"});
  CHECK(s.samples.below_detection == BelowDetection::limit);
  CHECK(s.variogram.lag == 50);
  CHECK(s.variogram.azimuths.size() == 4);
  CHECK(s.variogram.estimator == VariogramEstimator::cressie_hawkins);
  CHECK(s.model.kind == ModelChoice::Kind::fit);
  CHECK(s.model.structures == std::vector<std::string>{"nugget", "spherical"});
  CHECK(s.model.fix == std::vector<std::string>{"range=300"});
  CHECK(s.crossval.folds == 5);
  CHECK(s.neighbourhood.max_points == 16);
  CHECK(s.grid.cell == std::vector<double>{10});
  CHECK(s.mask == dir.path("site.gpkg"));
  CHECK(s.kriging_transform == Transform::log);
  CHECK(s.kriging.threshold == 450);
  CHECK(s.output_dir == dir.path("out"));
  CHECK(s.report.units == "mg/kg");
}

TEST_CASE("study file errors name the line and the key", "[study]") {
  test::ScratchDir dir;
  const std::string head = "[samples]\npath = \"s.csv\"\nvalue = \"v\"\n[grid]\ncell = 5\n";
  CHECK_THAT(error_of(dir.write("a.toml", head + "[kriging]\nmetod = \"simple\"\n")),
             Catch::Contains("line 7, key 'kriging.metod': unknown key (keys of [kriging]:"));
  CHECK_THAT(error_of(dir.write("b.toml", head + "[kriging]\nthreshold = \"high\"\n")),
             Catch::Contains("line 7, key 'kriging.threshold': expected a number"));
  CHECK_THAT(error_of(dir.write("c.toml", head + "[krige]\nmethod = \"simple\"\n")),
             Catch::Contains("line 6, key 'krige': unknown section"));
  CHECK_THAT(error_of(dir.write("d.toml", head + "[kriging\nmethod = 1\n")),
             Catch::Contains("line 6"));
  CHECK_THAT(error_of(dir.write("d.toml", head + "[kriging\nmethod = 1\n")),
             Catch::Contains("not valid TOML"));
  CHECK_THAT(error_of(dir.write("e.toml", head + "[kriging]\nmethod = \"magic\"\n")),
             Catch::Contains("'magic' is not one of simple, ordinary, universal"));
  CHECK_THAT(error_of(dir.write("f.toml", "[grid]\ncell = 5\n")), Catch::Contains("needs path"));
  CHECK_THAT(error_of(dir.write("g.toml", head + "[model]\nspec = \"1 nugget\"\nauto = true\n")),
             Catch::Contains("takes one of spec, fit or auto"));
  CHECK_THAT(error_of(dir.path("missing.toml")), Catch::Contains("no such file"));
}

TEST_CASE("a study is read from its text as from its file", "[study]") {
  test::ScratchDir dir;
  const std::string text =
      "[samples]\npath = \"data/s.csv\"\nvalue = \"v\"\n[grid]\ncell = [5, 10]\n[kriging]\nthreads "
      "= 2\n";
  const Study from_file = read_study(dir.write("site.toml", text));
  const Study from_text = parse_study(text, dir.path("site.toml"));
  CHECK(from_text.samples.path == from_file.samples.path);
  CHECK(from_text.grid.cell == std::vector<double>{5, 10});
  CHECK(from_text.kriging.threads == 2);
  CHECK(study_settings_json(from_text) == study_settings_json(from_file));
  // Errors name the given path and the line, as for a file.
  try {
    parse_study(text + "[grid]\n", "virtual.toml");
    FAIL("a repeated section was accepted");
  } catch (const InputError& e) {
    CHECK_THAT(e.what(), Catch::StartsWith("study: virtual.toml, line 8: not valid TOML"));
  }
}

TEST_CASE("whole numbers: floats without fraction pass, others and huge ones are refused",
          "[study]") {
  // Found by fuzz_study: a float beyond int64's range given for a whole
  // number was converted by the TOML library, which is undefined behaviour.
  const std::string head = "[samples]\npath = \"s.csv\"\nvalue = \"v\"\n[grid]\ncell = 5\n";
  CHECK(parse_study(head + "[kriging]\nthreads = 2.0\n", "a.toml").kriging.threads == 2);
  CHECK(parse_study(head + "[kriging]\ndiscretise = [3, 3]\n", "a.toml").kriging.discretise ==
        std::vector<int>{3, 3});
  auto error_of_text = [&](const std::string& text) -> std::string {
    try {
      parse_study(head + text, "a.toml");
    } catch (const InputError& e) {
      return e.what();
    }
    return "(no error)";
  };
  CHECK_THAT(error_of_text("[kriging]\ndiscretise = [3, 3.5e122]\n"),
             Catch::Contains("line 7, key 'kriging.discretise': expected a whole number between"));
  CHECK_THAT(error_of_text("[kriging]\nthreads = 2.5\n"),
             Catch::Contains("key 'kriging.threads': expected a whole number"));
  CHECK_THAT(error_of_text("[neighbourhood]\nmax_points = 99999999999\n"),
             Catch::Contains("key 'neighbourhood.max_points': expected a whole number between"));
  CHECK_THAT(error_of_text("[variogram]\nlags = nan\n"),
             Catch::Contains("expected a whole number"));
}
