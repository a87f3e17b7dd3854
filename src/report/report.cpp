// The HTML report: sections in the order a reviewer reads them, every plot
// from plots.hpp, every number from the run's own objects.
#include <gdal_priv.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <memory>
#include <sstream>

#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/plots.hpp"
#include "sillstone/report.hpp"

namespace sillstone {
namespace {

std::string esc(const std::string& s) {
  std::string out;
  for (char c : s) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      default: out += c;
    }
  }
  return out;
}

// Up to 4 significant digits for tables (full precision stays in the files).
std::string num(double v, int digits = 4) { return format_for_people(v, digits); }

std::string area_text(double square_units) {
  std::ostringstream s;
  s << std::fixed << std::setprecision(0) << square_units << " m² (" << std::setprecision(2)
    << square_units / 1e4 << " ha)";
  return s.str();
}

struct Html {
  std::ostringstream out;
  void h2(const std::string& id, const std::string& title) {
    out << "<h2 id=\"" << id << "\">" << esc(title) << "</h2>\n";
  }
  void p(const std::string& html) { out << "<p>" << html << "</p>\n"; }
  void figure(const std::string& svg, const std::string& caption) {
    out << "<figure>" << svg << "<figcaption>" << esc(caption) << "</figcaption></figure>\n";
  }
  void table(const std::vector<std::string>& head,
             const std::vector<std::vector<std::string>>& rows, const std::string& cls = "") {
    out << "<table" << (cls.empty() ? "" : " class=\"" + cls + "\"") << "><thead><tr>";
    for (const auto& hd : head) out << "<th>" << esc(hd) << "</th>";
    out << "</tr></thead><tbody>\n";
    for (const auto& r : rows) {
      out << "<tr>";
      for (const auto& c : r) out << "<td>" << esc(c) << "</td>";
      out << "</tr>\n";
    }
    out << "</tbody></table>\n";
  }
  void list(const std::vector<std::string>& items, const std::string& cls = "") {
    if (items.empty()) return;
    out << "<ul" << (cls.empty() ? "" : " class=\"" + cls + "\"") << ">";
    for (const auto& i : items) out << "<li>" << esc(i) << "</li>";
    out << "</ul>\n";
  }
};

const char* kStyle = R"(
:root { --ink: #1d1f2b; --muted: #5b6070; --rule: #d9dbe3; --accent: #2c4f7c; --warn: #8a4b00; }
* { box-sizing: border-box; }
body { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; color: var(--ink);
       max-width: 1040px; margin: 0 auto; padding: 24px 28px 60px; line-height: 1.45; }
h1 { font-size: 1.7em; margin: 0 0 4px; }
h2 { font-size: 1.25em; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 2px solid var(--rule); }
.sub { color: var(--muted); margin: 0 0 14px; }
.caution { border-left: 5px solid var(--warn); background: #fff7ec; padding: 10px 14px; margin: 14px 0; }
.keys { display: grid; grid-template-columns: repeat(auto-fit, minmax(210px, 1fr)); gap: 10px; margin: 14px 0; }
.key { border: 1px solid var(--rule); border-radius: 6px; padding: 10px 12px; }
.key b { display: block; font-size: 1.15em; color: var(--accent); overflow-wrap: anywhere; }
.key span { color: var(--muted); font-size: 0.9em; }
table { border-collapse: collapse; margin: 8px 0 14px; font-size: 0.92em; }
th, td { border-bottom: 1px solid var(--rule); padding: 4px 10px; text-align: right; }
th:first-child, td:first-child { text-align: left; }
thead th { border-bottom: 2px solid var(--ink); }
table.audit td { font-family: ui-monospace, monospace; font-size: 0.85em; text-align: left; }
figure { margin: 12px 0 18px; }
figure svg { max-width: 100%; height: auto; }
figcaption { color: var(--muted); font-size: 0.9em; margin-top: 4px; }
.grid2 { display: grid; grid-template-columns: repeat(auto-fit, minmax(440px, 1fr)); gap: 12px; }
pre { background: #f5f6f9; padding: 10px; overflow-x: auto; font-size: 0.85em; }
ul.warnings li { color: var(--warn); }
nav { font-size: 0.92em; margin: 8px 0; }
nav a { margin-right: 12px; color: var(--accent); }
@media print { body { max-width: none; padding: 0; } h2 { break-after: avoid; }
               figure, table { break-inside: avoid; } nav { display: none; } }
)";

// Band `band` (1-based) of a raster, read at most `max_px` columns wide
// (GDAL resamples by nearest neighbour when reading into a smaller buffer).
RasterGrid read_band(const std::string& path, int band, std::int64_t max_px) {
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(
      path.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr));
  RasterGrid g;
  if (!ds || band > ds->GetRasterCount()) return g;
  const int nx = ds->GetRasterXSize(), ny = ds->GetRasterYSize();
  const double f = std::max(1.0, static_cast<double>(nx) / static_cast<double>(max_px));
  g.nx = std::max<std::int64_t>(1, static_cast<std::int64_t>(nx / f));
  g.ny = std::max<std::int64_t>(1, static_cast<std::int64_t>(ny / f));
  double gt[6];
  ds->GetGeoTransform(gt);
  g.geotransform = {gt[0], gt[1] * nx / static_cast<double>(g.nx), 0, gt[3], 0,
                    gt[5] * ny / static_cast<double>(g.ny)};
  g.values.resize(static_cast<std::size_t>(g.nx * g.ny));
  GDALRasterBand* b = ds->GetRasterBand(band);
  int has = 0;
  const double nodata = b->GetNoDataValue(&has);
  g.nodata = has ? nodata : std::nan("");
  if (b->RasterIO(GF_Read, 0, 0, nx, ny, g.values.data(), static_cast<int>(g.nx),
                  static_cast<int>(g.ny), GDT_Float64, 0, 0, nullptr) != CE_None)
    return RasterGrid{};
  return g;
}

std::string value_label(const ReportInput& in) {
  const std::string& name = in.samples->value_names.front();
  const std::string& units = in.options.units;
  return units.empty() ? name : name + " (" + units + ")";
}

std::string map_units(const SampleSet& s) { return s.crs_wkt.empty() ? "units" : "m"; }

}  // namespace

std::string caution_text() {
  return "These maps are estimates with stated uncertainty, computed from a statistical model "
         "of the samples; they are not measurements. Whether an action level is exceeded, "
         "whether the sampling is adequate, and how a resource is classified are matters for "
         "the applicable regulations and for qualified, licensed professionals. Check the "
         "data, the variogram model and the cross-validation before relying on any map.";
}

std::vector<ExceedanceArea> exceedance_areas(const std::string& raster, int band,
                                             const std::vector<double>& levels) {
  std::vector<ExceedanceArea> out;
  for (double l : levels) out.push_back({l, 0, 0});
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(
      raster.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr));
  if (!ds || band > ds->GetRasterCount()) return out;
  double gt[6];
  ds->GetGeoTransform(gt);
  const double cell_area = std::abs(gt[1] * gt[5]);
  GDALRasterBand* b = ds->GetRasterBand(band);
  int has = 0;
  const double nodata = b->GetNoDataValue(&has);
  const int nx = ds->GetRasterXSize(), ny = ds->GetRasterYSize();
  std::vector<double> row(static_cast<std::size_t>(nx));
  for (int y = 0; y < ny; ++y) {
    if (b->RasterIO(GF_Read, 0, y, nx, 1, row.data(), nx, 1, GDT_Float64, 0, 0, nullptr) != CE_None)
      break;
    for (double val : row) {
      if ((has && val == nodata) || !std::isfinite(val)) continue;
      for (auto& e : out)
        if (val > e.level) ++e.cells;
    }
  }
  for (auto& e : out) e.area = static_cast<double>(e.cells) * cell_area;
  return out;
}

std::vector<GradeTonnageRow> grade_tonnage(const std::vector<double>& grades, double volume,
                                           double density, const std::vector<double>& cutoffs) {
  std::vector<GradeTonnageRow> out;
  for (double c : cutoffs) {
    GradeTonnageRow r;
    r.cutoff = c;
    double total = 0;
    for (double g : grades)
      if (std::isfinite(g) && g >= c) {
        ++r.blocks;
        total += g;
      }
    r.tonnage = static_cast<double>(r.blocks) * volume * density;
    r.mean_grade = r.blocks ? total / static_cast<double>(r.blocks) : std::nan("");
    out.push_back(r);
  }
  return out;
}

namespace {

void data_section(Html& h, const ReportInput& in) {
  const SampleSet& s = *in.samples;
  const DataSummary& sum = *in.summary;
  h.h2("data", "Data");
  h.p("Source <code>" + esc(s.source) + "</code>, CRS " +
      esc(s.crs_name.empty() ? "none (local coordinates)" : s.crs_name + " " + s.crs_authority) +
      ". Non-detects replaced by --below-detection " +
      esc(std::string(name_of(s.below_detection))) + "; samples at one location: " +
      esc(std::string(name_of(s.duplicates))) + ".");
  std::vector<std::vector<std::string>> rows;
  const auto& lw = sum.load;
  rows.push_back({"rows read / kept", std::to_string(lw.rows_read) + " / " + std::to_string(lw.rows_kept)});
  rows.push_back({"dropped: no coordinates / no value",
                  std::to_string(lw.dropped_no_coordinate) + " / " + std::to_string(lw.dropped_no_value)});
  rows.push_back({"duplicate locations (rows merged)", std::to_string(lw.duplicate_locations) +
                                                           " (" + std::to_string(lw.duplicate_rows_removed) + ")"});
  for (std::size_t k = 0; k < sum.names.size(); ++k) {
    const auto& t = sum.stats[k];
    const std::string& n = sum.names[k];
    rows.push_back({n + ": count, missing, below detection",
                    std::to_string(t.count) + ", " + std::to_string(lw.missing[k]) + ", " +
                        std::to_string(lw.below_detection[k])});
    rows.push_back({n + ": mean, sd, CV", num(t.mean) + ", " + num(t.sd) + ", " + num(t.cv, 3)});
    rows.push_back({n + ": min, Q1, median, Q3, max", num(t.min) + ", " + num(t.q1) + ", " +
                                                          num(t.median) + ", " + num(t.q3) + ", " + num(t.max)});
    rows.push_back({n + ": skewness; declustered mean (cell)",
                    num(t.skewness, 3) + "; " + num(sum.declustered[k].mean) + " (" +
                        num(sum.declustered[k].cell) + ")"});
  }
  rows.push_back({"nearest-neighbour spacing: median (min–max)",
                  num(sum.spacing.median) + " (" + num(sum.spacing.min) + "–" + num(sum.spacing.max) + ")"});
  h.table({"summary", "value"}, rows);

  const auto& values = s.values.front();
  HistogramPlot hp;
  hp.title = "Histogram of " + s.value_names.front();
  hp.x_label = value_label(in);
  for (double x : values)
    if (!std::isnan(x)) hp.values.push_back(x);
  const auto& d = sum.declustered.front();
  if (d.weights.size() == hp.values.size()) hp.weights = d.weights;
  hp.log_x = sum.stats.front().skewness > 1 && sum.stats.front().min > 0;
  LocationMapPlot lm;
  lm.title = "Sample locations coloured by " + s.value_names.front();
  lm.value_label = value_label(in);
  lm.map_unit = map_units(s);
  for (std::size_t i = 0; i < s.size(); ++i) {
    lm.x.push_back(s.points[i].x);
    lm.y.push_back(s.points[i].y);
    lm.value.push_back(values[i]);
  }
  h.out << "<div class=\"grid2\">";
  h.figure(histogram_svg(hp), std::string(hp.log_x ? "Logarithmic axis: the data are right-skewed. " : "") +
                                  "Outlined: the declustered histogram.");
  h.figure(location_map_svg(lm), s.dimension == 3 ? "Plan view of the samples (all elevations)."
                                                  : "Classes hold equal numbers of samples.");
  h.out << "</div>\n";
}

void variogram_section(Html& h, const ReportInput& in) {
  const EmpiricalVariogram& v = *in.variogram;
  const std::string units = map_units(*in.samples);
  h.h2("variogram", "Variogram");
  VariogramPlot vp;
  vp.title = "Empirical variogram and fitted model";
  vp.distance_label = "distance (" + units + ")";
  vp.gamma_label = "semivariance" + (v.summary.transform != "none" ? " of " + v.summary.transform : std::string());
  vp.sill = v.summary.variance;
  vp.sill_label = "sample variance";
  const CovarianceModel& m = in.model->model;
  const double hmax = v.options.max_distance;
  auto curve = [&](double az, double dip, VariogramSeries& series) {
    const double t = az * M_PI / 180, d = dip * M_PI / 180;
    series.model_h.clear();
    series.model_gamma.clear();
    for (int i = 0; i <= 100; ++i) {
      const double hh = hmax * i / 100.0;
      series.model_h.push_back(hh);
      series.model_gamma.push_back(
          m.variogram(hh * std::sin(t) * std::cos(d), hh * std::cos(t) * std::cos(d), -hh * std::sin(d)));
    }
  };
  // One series per direction, in the order of the table.
  std::vector<std::pair<std::optional<double>, std::optional<double>>> dirs;
  for (const auto& row : v.rows)
    if (dirs.empty() || dirs.back() != std::make_pair(row.azimuth, row.dip))
      dirs.push_back({row.azimuth, row.dip});
  for (const auto& [az, dip] : dirs) {
    VariogramSeries series;
    series.label = az ? "azimuth " + num(*az) + "°" + (dip ? ", dip " + num(*dip) + "°" : "")
                      : dip ? "dip " + num(*dip) + "°" : "omnidirectional";
    for (const auto& row : v.rows)
      if (row.azimuth == az && row.dip == dip && row.pairs > 0) {
        series.distance.push_back(row.mean_distance);
        series.gamma.push_back(row.value);
        series.pairs.push_back(static_cast<std::int64_t>(row.pairs));
      }
    curve(az.value_or(0.0), dip.value_or(0.0), series);
    vp.series.push_back(series);
  }
  if (dirs.size() == 1 && !dirs.front().first && !m.is_isotropic()) {
    // Omnidirectional points and an anisotropic model: draw the model's two axes.
    const Structure& longest = *std::max_element(
        m.structures().begin(), m.structures().end(),
        [](const Structure& a, const Structure& b) { return a.range < b.range; });
    vp.series.front().label = "omnidirectional, model: major axis";
    curve(longest.anisotropy.azimuth, 0, vp.series.front());
    VariogramSeries minor;
    minor.label = "model: minor axis";
    curve(longest.anisotropy.azimuth + 90, 0, minor);
    vp.series.push_back(minor);
  }
  vp.pair_labels = dirs.size() == 1;
  h.figure(variogram_svg(vp), "Points: empirical semivariance by lag class (marker size grows with "
                              "the number of pairs); lines: the model; dashed: the sample variance.");
  if (v.surface) {
    RasterMapPlot sp;
    sp.title = "Variogram surface";
    sp.value_label = "semivariance";
    sp.grid.nx = sp.grid.ny = 2 * v.surface->half + 1;
    const double c = v.surface->cell;
    const double edge = (v.surface->half + 0.5) * c;
    sp.grid.geotransform = {-edge, c, 0, edge, 0, -c};
    sp.grid.values = v.surface->values;
    sp.x_label = "east–west lag (" + units + ")";
    sp.y_label = "north–south lag (" + units + ")";
    sp.north_arrow = false;
    sp.scale_bar = false;
    h.figure(raster_map_svg(sp), "Semivariance by lag vector: a low-valued centre stretched along "
                                 "one direction points along the longest continuity.");
  }
  std::vector<std::vector<std::string>> rows;
  for (const auto& row : v.rows)
    rows.push_back({row.azimuth ? num(*row.azimuth) : "–", row.dip ? num(*row.dip) : "–",
                    num(row.lag_from) + "–" + num(row.lag_to), num(row.mean_distance),
                    std::to_string(row.pairs), num(row.value)});
  h.table({"azimuth", "dip", "lag class", "mean distance", "pairs", value_column(v.options.statistic)}, rows);
  if (v.summary.sparse_classes > 0)
    h.p(std::to_string(v.summary.sparse_classes) +
        " class(es) hold fewer than 30 pairs (common practice: read them with care).");
}

void model_section(Html& h, const ReportInput& in) {
  h.h2("model", "Covariance model");
  const CovarianceModel& m = in.model->model;
  std::vector<std::vector<std::string>> rows;
  for (const auto& sct : m.structures()) {
    const auto& a = sct.anisotropy;
    rows.push_back({std::string(name_of(sct.family)), num(sct.sill), sct.range > 0 ? num(sct.range) : "–",
                    a.is_isotropic() ? "–" : num(a.azimuth) + "°, ratio " + num(a.ratio)});
  }
  h.table({"structure", "partial sill", "practical range", "anisotropy"}, rows);
  if (m.has_sill()) {
    const double ratio = m.nugget() / m.total_sill();
    const char* cls = ratio < 0.25 ? "strong" : ratio <= 0.75 ? "moderate" : "weak";
    h.p("Nugget-to-sill ratio " + num(100 * ratio, 3) + " %: " + cls +
        " spatial dependence (classes of Cambardella et al. 1994).");
  }
  h.p("SPEC, at 4 significant digits (model.json holds every digit): <code>" +
      esc(to_spec_for_people(m)) + "</code>" +
      (in.model->transform.kind != Transform::none
           ? " (describes " + esc(in.model->transform.describe()) + ")"
           : std::string()));
  if (!in.fit_table.empty()) h.out << "<pre>" << esc(in.fit_table) << "</pre>\n";
}

void crossval_section(Html& h, const ReportInput& in) {
  const auto& cv = *in.crossval;
  const auto& cs = cv.summary;
  h.h2("crossval", "Cross-validation");
  h.p((cs.folds >= 2 ? std::to_string(cs.folds) + "-fold" : std::string("Leave-one-out")) +
      " cross-validation with the kriging settings of the maps, at the samples' own support "
      "(points" +
      (in.kriging->block.empty() ? std::string(")")
                                 : std::string("; the map's blocks are not used here)")) +
      ": " + std::to_string(cs.estimated) + " of " + std::to_string(cs.samples) +
      " samples estimated.");
  h.table({"statistic", "value", "ideal"},
          {{"mean error", num(cs.mean_error), "0"},
           {"mean absolute error", num(cs.mean_absolute_error), "small"},
           {"root mean squared error", num(cs.rmse), "small"},
           {"mean standardised error", num(cs.mean_standardised_error, 3), "0"},
           {"mean squared standardised error", num(cs.mean_squared_standardised_error, 3), "1"},
           {"correlation observed–estimated", num(cs.correlation, 3), "1"}});
  if (!in.alternatives.empty()) {
    std::vector<std::vector<std::string>> rows;
    auto row = [&rows](const std::string& label, const CrossValidationSummary& x) {
      rows.push_back({label, num(x.mean_error), num(x.rmse), num(x.mean_standardised_error, 3),
                      num(x.mean_squared_standardised_error, 3), num(x.correlation, 3),
                      std::to_string(x.estimated) + "/" + std::to_string(x.samples)});
    };
    row("this study's kriging (" + std::string(name_of(in.kriging->method)) + ")", cs);
    for (const auto& [label, x] : in.alternatives) row(label, x);
    h.p("The same cross-validation for other kriging set-ups ([crossval] also), with the same "
        "model and neighbourhood; each starts from the defaults of <code>crossval</code> plus "
        "the keys it names:");
    h.table({"set-up", "ME", "RMSE", "mean std. error", "mean sq. std. error", "correlation", "estimated"}, rows);
  }
  ScatterPlot sc;
  sc.title = "Observed against estimated";
  sc.x_label = "observed " + value_label(in);
  sc.y_label = "estimated " + value_label(in);
  std::vector<double> z;
  for (const auto& r : cv.rows) {
    sc.x.push_back(r.observed);
    sc.y.push_back(r.estimate);
    z.push_back(r.standardised_error);
  }
  sc.one_to_one = true;
  sc.equal_ranges = true;
  PlotFrame zf;
  zf.title = "Standardised errors";
  h.out << "<div class=\"grid2\">";
  h.figure(scatter_svg(sc), "Dashed: the 1:1 line.");
  h.figure(standardised_error_svg(z, zf),
           "Curve: the standard normal density; the errors should spread like it.");
  h.out << "</div>\n";
}

void map_section(Html& h, const ReportInput& in, const std::vector<ExceedanceArea>& areas) {
  const SampleSet& s = *in.samples;
  const KrigingOptions& ko = *in.kriging;
  const bool logged = ko.transform.kind == Transform::log;
  const std::string& units_value = in.options.units;
  h.h2("maps", "Maps");
  const RasterGrid est = read_band(in.map_path, 1, 800);
  RasterGrid sd = read_band(in.map_path, 2, 800);
  for (double& x : sd.values)
    if (x != sd.nodata && std::isfinite(x)) x = std::sqrt(std::max(0.0, x));
  RasterMapPlot e;
  e.title = "Estimate of " + s.value_names.front();
  e.value_label = value_label(in);
  e.grid = est;
  e.map_unit = map_units(s);
  for (const auto& p : s.points) {
    e.sample_x.push_back(p.x);
    e.sample_y.push_back(p.y);
  }
  RasterMapPlot u = e;
  u.title = std::string("Kriging standard deviation") + (logged ? " (log scale)" : "");
  u.value_label = logged ? "standard deviation of ln " + s.value_names.front()
                         : "standard deviation" + (units_value.empty() ? std::string() : " (" + units_value + ")");
  u.grid = sd;
  h.figure(raster_map_svg(e), "Kriged estimate" +
                                  std::string(logged ? ", back-transformed from the log scale" : "") +
                                  "; dots: samples.");
  h.figure(raster_map_svg(u), "Square root of the kriging variance: high where samples are "
                              "sparse, low near them.");
  if (std::isfinite(ko.threshold)) {
    RasterMapPlot pr = e;
    pr.title = "Probability that " + s.value_names.front() + " exceeds " + num(ko.threshold);
    pr.value_label = "probability";
    pr.ramp = ColourRamp::probability;
    pr.grid = read_band(in.map_path, 3, 800);
    h.figure(raster_map_svg(pr),
             "Model-based probability under a Gaussian error on the kriging scale (docs/kriging.md "
             "says when it misleads). Classes break at 0.1, 0.5 and 0.9.");
    std::vector<std::vector<std::string>> rows;
    for (const auto& a : areas)
      rows.push_back({"P > " + num(a.level), std::to_string(a.cells), area_text(a.area)});
    h.table({"probability of exceeding " + num(ko.threshold), "cells", "area"}, rows);
  }
}

void block_section(Html& h, const ReportInput& in) {
  const GridSpec& grid = *in.grid;
  const ReportOptions& ro = in.options;
  const std::string units = map_units(*in.samples);
  h.h2("maps", "Block model");
  std::vector<double> grades;  // the estimate column of blocks.csv
  std::ifstream f(in.map_path);
  std::string line;
  std::getline(f, line);
  while (std::getline(f, line)) {
    std::stringstream ls(line);
    std::string cell;
    for (int c = 0; c < 4 && std::getline(ls, cell, ','); ++c)
      if (c == 3) grades.push_back(cell.empty() ? std::nan("") : std::stod(cell));
  }
  const double volume = grid.dx * grid.dy * grid.dz;
  const double density = ro.density > 0 ? ro.density : 1.0;
  std::vector<double> cutoffs = ro.cutoffs;
  if (cutoffs.empty()) {
    std::vector<double> g;
    for (double x : grades)
      if (std::isfinite(x)) g.push_back(x);
    std::sort(g.begin(), g.end());
    cutoffs = nice_ticks(0, g.empty() ? 1.0 : quantile_sorted(g, 0.95), 10).values;
  }
  const auto gt = grade_tonnage(grades, volume, density, cutoffs);
  h.p("Blocks of " + num(grid.dx) + " × " + num(grid.dy) + " × " + num(grid.dz) + " " + units +
      " (" + num(volume) + " " + units + "³), " + std::to_string(grades.size()) + " in the table" +
      (in.block_list.empty() ? std::string() : " (the block list " + esc(in.block_list) + ")") +
      "; density " +
      (ro.density > 0 ? num(density) + " t/m³ (from [report] density)"
                      : std::string("not given, so tonnage is volume × 1")) +
      ".");
  std::vector<std::vector<std::string>> rows;
  DualAxisPlot dp;
  dp.title = "Grade–tonnage curve";
  dp.x_label = "cut-off " + value_label(in);
  dp.left_label = "tonnage above cut-off (t)";
  dp.right_label = "mean grade above cut-off";
  for (const auto& r : gt) {
    std::ostringstream tonnes;
    tonnes << std::fixed << std::setprecision(0) << r.tonnage;
    rows.push_back({num(r.cutoff), std::to_string(r.blocks), tonnes.str(), num(r.mean_grade)});
    dp.x.push_back(r.cutoff);
    dp.left.push_back(r.tonnage);
    dp.right.push_back(r.mean_grade);
  }
  h.table({"cut-off", "blocks", "tonnage (t)", "mean grade"}, rows);
  h.figure(dual_axis_svg(dp), "Kriged block grades are smoothed: above high cut-offs they tend to "
                              "understate grade and overstate tonnage.");
}

}  // namespace

std::string render_report(const ReportInput& in) {
  const SampleSet& s = *in.samples;
  const DataSummary& sum = *in.summary;
  const KrigingOptions& ko = *in.kriging;
  const GridSpec& grid = *in.grid;
  const bool three_d = s.dimension == 3;
  const bool logged = ko.transform.kind == Transform::log;
  const std::string title = in.options.title.empty()
                                ? "Study of " + s.value_names.front() + ": " +
                                      std::filesystem::path(s.source).filename().string()
                                : in.options.title;
  Html h;
  h.out << "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n"
        << "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
        << "<title>" << esc(title) << "</title>\n<style>" << kStyle << "</style></head><body>\n";
  h.out << "<h1>" << esc(title) << "</h1>\n<p class=\"sub\">sillstone " << esc(in.version) << " · "
        << esc(std::string(name_of(ko.method))) << " kriging" << (logged ? " (lognormal)" : "")
        << " of " << esc(s.value_names.front()) << " from " << s.size() << " sample locations</p>\n";
  h.out << "<div class=\"caution\"><b>Caution.</b> " << esc(caution_text()) << "</div>\n";
  h.out << "<nav><a href=\"#data\">Data</a><a href=\"#variogram\">Variogram</a><a href=\"#model\">Model</a>"
        << (in.crossval ? "<a href=\"#crossval\">Cross-validation</a>" : "")
        << "<a href=\"#maps\">" << (three_d ? "Block model" : "Maps")
        << "</a><a href=\"#settings\">Settings</a></nav>\n";

  // Key results first: what the reader came for.
  std::vector<ExceedanceArea> areas;
  if (!three_d && std::isfinite(ko.threshold)) areas = exceedance_areas(in.map_path, 3, {0.5, 0.9});
  h.out << "<div class=\"keys\">";
  auto key = [&h](const std::string& value, const std::string& label) {
    h.out << "<div class=\"key\"><b>" << esc(value) << "</b><span>" << esc(label) << "</span></div>";
  };
  key(std::to_string(s.size()), "sample locations (" + std::to_string(sum.load.rows_read) + " rows read)");
  key(num(sum.stats.front().mean) + " / " + num(sum.declustered.front().mean), "raw / declustered mean");
  key(to_spec_for_people(in.model->model),
      std::string("covariance model") + (logged ? " (log scale)" : ""));
  if (in.crossval)
    key(num(in.crossval->summary.rmse) + " · " +
            num(in.crossval->summary.mean_squared_standardised_error, 3),
        "cross-validation RMSE · mean squared standardised error (ideal 1)");
  for (const auto& a : areas)
    key(area_text(a.area), "area where P(" + s.value_names.front() + " > " + num(ko.threshold) +
                               ") exceeds " + num(a.level));
  h.out << "</div>\n";

  data_section(h, in);
  variogram_section(h, in);
  model_section(h, in);
  if (in.crossval) crossval_section(h, in);
  if (three_d)
    block_section(h, in);
  else
    map_section(h, in, areas);
  const auto& k = *in.kriging_summary;
  h.p(std::to_string(k.estimated) + " of " + std::to_string(k.targets) + " nodes estimated.");
  h.list(describe(k));

  h.h2("settings", "Settings and inputs");
  const EmpiricalVariogram& v = *in.variogram;
  const NeighbourhoodOptions& nb = in.neighbourhood;
  const std::string units = map_units(s);
  h.table({"setting", "value"},
          {{"samples", s.source},
           {"value", s.value_names.front()},
           {"variogram", "lag " + num(v.options.lag) + " × " + std::to_string(v.options.lags) +
                             ", estimator " + std::string(name_of(v.options.estimator)) +
                             ", transform " + v.summary.transform},
           {"model", to_spec_for_people(in.model->model)},
           {"kriging", std::string(name_of(ko.method)) + ", transform " +
                           ko.transform.describe() +
                           (ko.block.empty() ? ", points" : ", blocks")},
           {"neighbourhood", nb.global
                                 ? std::string("global")
                                 : "max " + std::to_string(nb.max_points) + ", min " +
                                       std::to_string(nb.min_points) + ", radius " +
                                       (nb.radius > 0 ? num(nb.radius) : std::string("unlimited"))},
           {"grid", std::to_string(grid.nx) + " × " + std::to_string(grid.ny) +
                        (three_d ? " × " + std::to_string(grid.nz) : std::string()) + " cells of " +
                        num(grid.dx) + " " + units},
           {"study file", in.study_path.empty() ? std::string("none") : in.study_path}});
  std::vector<std::vector<std::string>> inputs;
  for (const auto& [path, sha] : in.inputs) inputs.push_back({path, sha});
  if (!inputs.empty()) h.table({"input", "SHA-256"}, inputs, "audit");
  h.p("run.json in the run folder holds every setting after defaults, the inputs' checksums, the "
      "version and the time of the run.");
  if (!in.warnings.empty()) {
    h.h2("warnings", "Warnings");
    h.list(in.warnings, "warnings");
  }
  if (!in.notes.empty()) {
    h.h2("notes", "Notes");
    h.list(in.notes);
  }
  h.out << "<div class=\"caution\"><b>Caution.</b> " << esc(caution_text()) << "</div>\n";
  h.out << "</body></html>\n";
  return h.out.str();
}

}  // namespace sillstone
