// A program built against the *installed* sillstone package, through its
// public headers only: samples -> variogram -> fit -> cross-validation ->
// krige -> study file -> report, on small inputs it writes itself into a
// scratch folder. Each step checks something that does not come from the
// step itself (a brute-force count, an identity of the method, the text it
// wrote); any failure prints "consumer: ..." and exits 1.
#include <sillstone/crossval.hpp>
#include <sillstone/fit.hpp>
#include <sillstone/grid.hpp>
#include <sillstone/kriging.hpp>
#include <sillstone/kriging_sink.hpp>
#include <sillstone/model.hpp>
#include <sillstone/report.hpp>
#include <sillstone/samples.hpp>
#include <sillstone/study.hpp>
#include <sillstone/summary.hpp>
#include <sillstone/variogram.hpp>
#include <sillstone/version.hpp>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <random>
#include <sstream>
#include <string>
#include <vector>

namespace fs = std::filesystem;
using namespace sillstone;

namespace {

void require(bool ok, const std::string& what) {
  if (ok) return;
  std::cerr << "consumer: " << what << "\n";
  std::exit(1);
}

void write(const fs::path& path, const std::string& text) {
  std::ofstream f(path, std::ios::binary);
  f << text;
  require(static_cast<bool>(f), "cannot write " + path.string());
}

std::string read(const fs::path& path) {
  std::ifstream f(path, std::ios::binary);
  std::ostringstream s;
  s << f.rdbuf();
  return s.str();
}

// 36 samples on a jittered 6 x 6 grid of 20 m, a smooth field (a trend and a
// wave): enough structure for a fit without a nugget.
std::string samples_csv() {
  std::ostringstream csv;
  csv.precision(17);
  csv << "x,y,value\n";
  for (int i = 0; i < 6; ++i)
    for (int j = 0; j < 6; ++j) {
      const double x = 20.0 * i + 3.0 * ((i * 7 + j * 3) % 5);
      const double y = 20.0 * j + 2.0 * ((i * 2 + j * 5) % 7);
      csv << x << "," << y << "," << 10 + 0.02 * x + std::sin(x / 25.0) * std::cos(y / 30.0)
          << "\n";
    }
  return csv.str();
}

}  // namespace

int run() {
  const fs::path scratch =
      fs::temp_directory_path() / ("sillstone-consumer-" + std::to_string(std::random_device()()));
  fs::create_directories(scratch);
  struct Cleanup {
    fs::path p;
    ~Cleanup() { fs::remove_all(p); }
  } cleanup{scratch};

  // 1. Samples: every row is read back.
  write(scratch / "samples.csv", samples_csv());
  SampleOptions so;
  so.path = (scratch / "samples.csv").string();
  so.x = "x";
  so.y = "y";
  so.values = {"value"};
  const SampleSet samples = load_samples(so);
  require(samples.size() == 36, "36 samples expected, read " + std::to_string(samples.size()));

  // 2. Variogram: the pairs counted equal a brute-force count of the pairs
  // with 0 < d <= the largest class bound (classes (iW, (i+1)W]).
  VariogramOptions vo;
  vo.lag = 10;
  vo.lags = 8;
  const EmpiricalVariogram variogram = compute_variogram(samples, vo);
  std::uint64_t counted = 0, brute = 0;
  for (const VariogramRow& r : variogram.rows) counted += r.pairs;
  for (std::size_t a = 0; a < samples.size(); ++a)
    for (std::size_t b = a + 1; b < samples.size(); ++b) {
      const double d = std::hypot(samples.points[a].x - samples.points[b].x,
                                  samples.points[a].y - samples.points[b].y);
      brute += d > 0 && d <= 80;
    }
  require(counted == brute, "variogram pairs " + std::to_string(counted) + " != brute force " +
                                std::to_string(brute));

  // 3. Fit a spherical model without nugget: its SPEC reads back to the same
  // model (the documented round trip of to_spec).
  FitOptions fo;
  fo.structures = {Family::spherical};
  const FitResult fit = fit_model(variogram, fo);
  require(fit.model.total_sill() > 0, "the fitted sill is not positive");
  require(parse_model_spec(to_spec(fit.model)) == fit.model, "to_spec does not read back");

  // 4. Leave-one-out cross-validation: one row per sample, and the summary's
  // RMSE is the root mean square of the rows' errors (estimate - observed).
  KrigingOptions ko;
  NeighbourhoodOptions no;
  const CrossValidationResult cv = cross_validate(samples, fit.model, ko, no, {});
  require(cv.rows.size() == samples.size(), "one cross-validation row per sample expected");
  double squares = 0;
  for (const CrossValidationRow& r : cv.rows) {
    require(std::abs(r.error - (r.estimate - r.observed)) <= 1e-12 * (1 + std::abs(r.observed)),
            "error is not estimate - observed");
    squares += r.error * r.error;
  }
  const double rmse = std::sqrt(squares / static_cast<double>(cv.rows.size()));
  require(std::abs(cv.summary.rmse - rmse) <= 1e-12 * (1 + rmse), "RMSE does not match its rows");

  // 5. Kriging: ordinary kriging is an exact interpolator without nugget, so
  // the estimate at a sample location is the sample's value and the kriging
  // variance is 0 (any geostatistics text); then a small raster.
  const KrigingEngine engine(samples, fit.model, ko, no);
  auto ws = engine.make_workspace();
  const NodeEstimate at_sample = engine.estimate(samples.points[14], *ws);
  const double datum = samples.values[0][14];
  require(at_sample.ok() && std::abs(at_sample.estimate - datum) <= 1e-9 * std::abs(datum),
          "the estimate at a sample is not its value");
  require(std::abs(at_sample.variance) <= 1e-9 * fit.model.total_sill(),
          "the kriging variance at a sample is not 0");
  GridOptions go;
  go.cell = {10};
  go.extent = {0, 0, 120, 120};
  const GridSpec grid = make_grid(go, 2, {}, samples.crs_wkt);
  RasterTarget target;
  target.path = (scratch / "estimate.tif").string();
  RasterFileSink file(target, 1);
  MemorySink kept;  // the report takes the kriged grid from memory
  TeeSink both({&file, &kept});
  const KrigingSummary ks = krige_grid(engine, grid, {}, both);
  const KrigedGrid kriged = kept.take();
  require(ks.targets == 144 && ks.estimated == 144, "every one of the 144 nodes is estimated");
  require(fs::exists(target.path), "the raster was not written");

  // 6. A study file: the [report] settings are read as written.
  write(scratch / "study.toml",
        "[samples]\npath = \"samples.csv\"\nx = \"x\"\ny = \"y\"\n"
        "value = \"value\"\n[grid]\ncell = 10\n[report]\ntitle = \"Consumer study\"\n"
        "units = \"mg/kg\"\n");
  const Study study = read_study((scratch / "study.toml").string());
  require(study.report.title == "Consumer study" && study.report.units == "mg/kg",
          "the study's [report] settings were not read");
  require(fs::path(study.samples.path) == scratch / "samples.csv",
          "the samples path is not resolved against the study's folder");

  // 7. The report: written, titled as the study says, and showing the model.
  const DataSummary summary = summarise(samples, {});
  const ModelFile model = fitted_model_file(fit, {});
  ReportInput in;
  in.options = study.report;
  in.study_path = study.path;
  in.samples = &samples;
  in.summary = &summary;
  in.variogram = &variogram;
  in.model = &model;
  in.crossval = &cv;
  in.kriging = &ko;
  in.grid = &grid;
  in.kriging_summary = &ks;
  in.result = &kriged;
  in.version = version();
  write(scratch / "report.html", render_report(in));
  const std::string html = read(scratch / "report.html");
  require(html.find("<title>Consumer study</title>") != std::string::npos,
          "the report does not carry the study's title");
  require(html.find("spherical(range=") != std::string::npos, "the report does not show the model");

  std::cout << "sillstone " << version() << ": " << samples.size() << " samples, "
            << to_spec(fit.model) << ", LOO RMSE " << cv.summary.rmse << ", report " << html.size()
            << " bytes\n";
  return 0;
}

int main() {
  try {
    return run();
  } catch (const std::exception& e) {
    std::cerr << "consumer: " << e.what() << "\n";
    return 1;
  }
}
