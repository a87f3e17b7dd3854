// The HTML report: sections in the order a reviewer reads them, every plot
// from plots.hpp, every number from the run's own objects.
#include <ogr_spatialref.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <memory>
#include <sstream>
#include <stdexcept>

#include "core/capped_list.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/plots.hpp"
#include "sillstone/report.hpp"

namespace sillstone {
namespace {

std::string esc(const std::string& s) {
  std::string out;
  for (char c : s) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

// Up to 4 significant digits for tables (full precision stays in the files).
std::string num(double v, int digits = 4) { return format_for_people(v, digits); }

// An area in the CRS's units, with square metres and hectares when the
// unit's length in metres is known.
std::string area_text(double square_units, const MapUnits& u) {
  if (u.geographic) return "not computed (the CRS is geographic: cells are not of equal area)";
  std::ostringstream s;
  s << std::fixed << std::setprecision(0) << square_units;
  if (u.metres == 1) {
    s << " m² (" << std::setprecision(2) << square_units / 1e4 << " ha)";
  } else if (u.metres > 0) {
    const double m2 = square_units * u.metres * u.metres;
    s << " " << u.symbol << "² (" << m2 << " m², " << std::setprecision(2) << m2 / 1e4 << " ha)";
  } else {
    s << " square " << u.name;
  }
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
    // A long list is cut short; run.json keeps every entry.
    for (const auto& i : detail::capped(items, 20, "(run.json lists them all)"))
      out << "<li>" << esc(i) << "</li>";
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

// One array of the kriged grid (its first layer) as a map, reduced to at
// most `max_px` columns and rows.
RasterGrid band_grid(const KrigedGrid& k, const std::vector<double>& values, std::int64_t max_px) {
  const GridSpec& grid = k.grid();
  if (values.size() != static_cast<std::size_t>(grid.nodes()))
    throw std::invalid_argument("report: the kriged grid holds " + std::to_string(values.size()) +
                                " values for " + std::to_string(grid.nodes()) + " nodes");
  RasterGrid g;
  g.nx = grid.nx;
  g.ny = grid.ny;
  g.geotransform = grid.geotransform();
  g.values.assign(values.begin(), values.begin() + grid.nx * grid.ny);
  return decimate(g, max_px);
}

std::string value_label(const ReportInput& in) {
  const std::string& name = in.samples->value_names.front();
  const std::string& units = in.options.units;
  return units.empty() ? name : name + " (" + units + ")";
}

}  // namespace

MapUnits map_units(const std::string& crs_wkt) {
  MapUnits u;
  if (crs_wkt.empty()) return u;
  OGRSpatialReference srs;
  if (srs.SetFromUserInput(crs_wkt.c_str()) != OGRERR_NONE)
    throw InputError("report", "the CRS cannot be read: " + crs_wkt.substr(0, 60));
  if (srs.IsGeographic()) {
    const char* name = nullptr;
    srs.GetAngularUnits(&name);
    u.name = name && *name ? name : "degree";
    u.symbol = u.name == "degree" ? "°" : u.name;
    u.geographic = true;
    return u;
  }
  const char* name = nullptr;
  u.metres = srs.GetLinearUnits(&name);
  u.name = name && *name ? name : "unknown unit";
  u.symbol = u.name == "metre"            ? "m"
             : u.name == "foot"           ? "ft"
             : u.name == "US survey foot" ? "US ft"
                                          : u.name;
  return u;
}

namespace {

MapUnits units_of(const ReportInput& in) { return map_units(in.samples->crs_wkt); }

}  // namespace

std::string caution_text() {
  return "These maps are estimates with stated uncertainty, computed from a statistical model "
         "of the samples; they are not measurements. Whether an action level is exceeded, "
         "whether the sampling is adequate, and how a resource is classified are matters for "
         "the applicable regulations and for qualified, licensed professionals. Check the "
         "data, the variogram model and the cross-validation before relying on any map.";
}

std::vector<ExceedanceArea> exceedance_areas(const KrigedGrid& k,
                                             const std::vector<double>& levels) {
  const GridSpec& grid = k.grid();
  if (grid.dimension != 2)
    throw std::invalid_argument("exceedance areas: the kriged grid is 3D; areas need a 2D grid");
  if (k.probability.size() != static_cast<std::size_t>(grid.nodes()))
    throw std::invalid_argument(
        "exceedance areas: the kriged grid holds no exceedance probability "
        "(kriging had no threshold)");
  std::vector<ExceedanceArea> out;
  for (double l : levels) out.push_back({l, 0, 0});
  for (double val : k.probability) {
    if (!std::isfinite(val)) continue;
    for (auto& e : out)
      if (val > e.level) ++e.cells;
  }
  for (auto& e : out) e.area = static_cast<double>(e.cells) * grid.dx * grid.dy;
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

std::string grade_tonnage_comparison(const std::vector<GradeTonnageRow>& kriged,
                                     const std::vector<GradeTonnageRow>& reference,
                                     const std::string& unit) {
  if (kriged.size() != reference.size())
    throw std::invalid_argument("grade-tonnage comparison: the curves have different cut-offs");
  // -1: lower than the reference, 0: within 2%, +1: higher.
  std::vector<int> side;
  for (std::size_t i = 0; i < kriged.size(); ++i) {
    if (kriged[i].cutoff != reference[i].cutoff)
      throw std::invalid_argument("grade-tonnage comparison: the curves have different cut-offs");
    const double a = kriged[i].tonnage, b = reference[i].tonnage;
    side.push_back(std::abs(a - b) <= 0.02 * std::max(std::abs(a), std::abs(b)) ? 0
                   : a > b                                                      ? 1
                                                                                : -1);
  }
  if (side.empty()) return "";
  const std::string u = unit.empty() ? "" : " " + unit;
  std::vector<std::string> parts;
  for (std::size_t i = 0; i < side.size();) {
    std::size_t j = i;
    while (j + 1 < side.size() && side[j + 1] == side[i]) ++j;
    const std::string where =
        i == j ? "at cut-off " + num(kriged[i].cutoff) + u
               : "at cut-offs " + num(kriged[i].cutoff) + " to " + num(kriged[j].cutoff) + u;
    parts.push_back((side[i] > 0   ? "more tonnage "
                     : side[i] < 0 ? "less tonnage "
                                   : "about the same tonnage (within 2%) ") +
                    where);
    i = j + 1;
  }
  std::string text = "Compared with the samples, the kriged blocks give ";
  for (std::size_t i = 0; i < parts.size(); ++i)
    text += (i == 0 ? "" : i + 1 == parts.size() ? " and " : ", ") + parts[i];
  return text + ".";
}

namespace {

void data_section(Html& h, const ReportInput& in) {
  const SampleSet& s = *in.samples;
  const DataSummary& sum = *in.summary;
  h.h2("data", "Data");
  h.p("Source <code>" + esc(s.source) + "</code>, CRS " +
      esc(s.crs_name.empty() ? "none (local coordinates)" : s.crs_name + " " + s.crs_authority) +
      "; distances and areas in <b>" + esc(units_of(in).name) + "</b>" +
      (s.crs_wkt.empty() ? " (no CRS: the samples' own coordinates)" : " (from the CRS)") +
      ". Non-detects replaced by --below-detection " +
      esc(std::string(name_of(s.below_detection))) +
      "; samples at one location: " + esc(std::string(name_of(s.duplicates))) + ".");
  std::vector<std::vector<std::string>> rows;
  const auto& lw = sum.load;
  rows.push_back(
      {"rows read / kept", std::to_string(lw.rows_read) + " / " + std::to_string(lw.rows_kept)});
  rows.push_back(
      {"dropped: no coordinates / no value",
       std::to_string(lw.dropped_no_coordinate) + " / " + std::to_string(lw.dropped_no_value)});
  rows.push_back(
      {"duplicate locations (rows merged)", std::to_string(lw.duplicate_locations) + " (" +
                                                std::to_string(lw.duplicate_rows_removed) + ")"});
  for (std::size_t k = 0; k < sum.names.size(); ++k) {
    const auto& t = sum.stats[k];
    const std::string& n = sum.names[k];
    rows.push_back({n + ": count, missing, below detection",
                    std::to_string(t.count) + ", " + std::to_string(lw.missing[k]) + ", " +
                        std::to_string(lw.below_detection[k])});
    rows.push_back({n + ": mean, sd, CV", num(t.mean) + ", " + num(t.sd) + ", " + num(t.cv, 3)});
    rows.push_back({n + ": min, Q1, median, Q3, max", num(t.min) + ", " + num(t.q1) + ", " +
                                                          num(t.median) + ", " + num(t.q3) + ", " +
                                                          num(t.max)});
    rows.push_back({n + ": skewness; declustered mean (cell)",
                    num(t.skewness, 3) + "; " + num(sum.declustered[k].mean) + " (" +
                        num(sum.declustered[k].cell) + ")"});
  }
  rows.push_back(
      {"nearest-neighbour spacing: median (min–max)",
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
  const MapUnits mu = units_of(in);
  lm.map_unit = mu.symbol;
  lm.x_label = "easting (" + mu.symbol + ")";
  lm.y_label = "northing (" + mu.symbol + ")";
  for (std::size_t i = 0; i < s.size(); ++i) {
    lm.x.push_back(s.points[i].x);
    lm.y.push_back(s.points[i].y);
    lm.value.push_back(values[i]);
  }
  h.out << "<div class=\"grid2\">";
  h.figure(histogram_svg(hp),
           std::string(hp.log_x ? "Logarithmic axis: the data are right-skewed. " : "") +
               "Outlined: the declustered histogram.");
  h.figure(location_map_svg(lm), s.dimension == 3 ? "Plan view of the samples (all elevations)."
                                                  : "Classes hold equal numbers of samples.");
  h.out << "</div>\n";
}

void variogram_section(Html& h, const ReportInput& in) {
  const EmpiricalVariogram& v = *in.variogram;
  const std::string units = units_of(in).symbol;
  h.h2("variogram", "Variogram");
  VariogramPlot vp;
  vp.title = "Empirical variogram and fitted model";
  vp.distance_label = "distance (" + units + ")";
  vp.gamma_label = "semivariance" +
                   (v.summary.transform != "none" ? " of " + v.summary.transform : std::string());
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
      series.model_gamma.push_back(m.variogram(hh * std::sin(t) * std::cos(d),
                                               hh * std::cos(t) * std::cos(d), -hh * std::sin(d)));
    }
  };
  // One series per direction, in the order of the table.
  std::vector<std::pair<std::optional<double>, std::optional<double>>> dirs;
  for (const auto& row : v.rows)
    if (dirs.empty() || dirs.back() != std::make_pair(row.azimuth, row.dip))
      dirs.push_back({row.azimuth, row.dip});
  for (const auto& [az, dip] : dirs) {
    VariogramSeries series;
    series.label = az    ? "azimuth " + num(*az) + "°" + (dip ? ", dip " + num(*dip) + "°" : "")
                   : dip ? "dip " + num(*dip) + "°"
                         : "omnidirectional";
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
    const Structure& longest =
        *std::max_element(m.structures().begin(), m.structures().end(),
                          [](const Structure& a, const Structure& b) { return a.range < b.range; });
    vp.series.front().label = "omnidirectional, model: major axis";
    curve(longest.anisotropy.azimuth, 0, vp.series.front());
    VariogramSeries minor;
    minor.label = "model: minor axis";
    curve(longest.anisotropy.azimuth + 90, 0, minor);
    vp.series.push_back(minor);
  }
  vp.pair_labels = dirs.size() == 1;
  h.figure(variogram_svg(vp),
           "Points: empirical semivariance by lag class (marker size grows with "
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
    h.figure(raster_map_svg(sp),
             "Semivariance by lag vector: a low-valued centre stretched along "
             "one direction points along the longest continuity.");
  }
  std::vector<std::vector<std::string>> rows;
  for (const auto& row : v.rows)
    rows.push_back({row.azimuth ? num(*row.azimuth) : "–", row.dip ? num(*row.dip) : "–",
                    num(row.lag_from) + "–" + num(row.lag_to), num(row.mean_distance),
                    std::to_string(row.pairs), num(row.value)});
  h.table(
      {"azimuth", "dip", "lag class", "mean distance", "pairs", value_column(v.options.statistic)},
      rows);
  if (v.summary.sparse_classes > 0)
    h.p(std::to_string(v.summary.sparse_classes) +
        " class(es) hold fewer than 30 pairs (common practice: read them with care).");
}

void model_section(Html& h, const ReportInput& in) {
  h.h2("model", "Covariance model");
  const CovarianceModel& m = in.model->model;
  // Every parameter the model has: shape parameters when a family uses one,
  // the 3D anisotropy angles and ratio when any structure departs from 2D.
  bool shape = false, three_d = false;
  for (const auto& sct : m.structures()) {
    shape = shape || sct.family == Family::matern || sct.family == Family::power;
    const auto& a = sct.anisotropy;
    three_d = three_d || a.dip != 0 || a.plunge != 0 || a.ratio2 != 1;
  }
  three_d = three_d || in.samples->dimension == 3;
  std::vector<std::string> head = {"structure", "partial sill", "practical range"};
  if (shape) head.push_back("shape (nu or exponent)");
  for (const char* c : {"azimuth", "ratio"}) head.push_back(c);
  if (three_d)
    for (const char* c : {"dip", "plunge", "ratio2"}) head.push_back(c);
  std::vector<std::vector<std::string>> rows;
  for (const auto& sct : m.structures()) {
    const auto& a = sct.anisotropy;
    const bool oriented = sct.family != Family::nugget;  // nugget has no direction
    auto angle = [oriented](double v) { return oriented ? num(v) + "°" : std::string("–"); };
    auto ratio = [oriented](double v) { return oriented ? num(v) : std::string("–"); };
    std::vector<std::string> r = {std::string(name_of(sct.family)), num(sct.sill),
                                  sct.range > 0 ? num(sct.range) : "–"};
    if (shape)
      r.push_back(sct.family == Family::matern  ? "nu " + num(sct.nu)
                  : sct.family == Family::power ? "exponent " + num(sct.exponent)
                                                : "–");
    r.push_back(angle(a.azimuth));
    r.push_back(ratio(a.ratio));
    if (three_d) {
      r.push_back(angle(a.dip));
      r.push_back(angle(a.plunge));
      r.push_back(ratio(a.ratio2));
    }
    rows.push_back(r);
  }
  h.table(head, rows);
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
    h.table({"set-up", "ME", "RMSE", "mean std. error", "mean sq. std. error", "correlation",
             "estimated"},
            rows);
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
  const KrigedGrid& k = *in.result;
  const MapUnits mu = units_of(in);
  const bool logged = ko.transform.kind == Transform::log;
  const std::string& units_value = in.options.units;
  h.h2("maps", "Maps");
  std::vector<double> sd(k.variance.size());
  std::transform(k.variance.begin(), k.variance.end(), sd.begin(),
                 [](double v) { return std::isfinite(v) ? std::sqrt(std::max(0.0, v)) : v; });
  RasterMapPlot e;
  e.title = "Estimate of " + s.value_names.front();
  e.value_label = value_label(in);
  e.grid = band_grid(k, k.estimate, 800);
  e.map_unit = mu.symbol;
  e.x_label = "easting (" + mu.symbol + ")";
  e.y_label = "northing (" + mu.symbol + ")";
  for (const auto& p : s.points) {
    e.sample_x.push_back(p.x);
    e.sample_y.push_back(p.y);
  }
  RasterMapPlot u = e;
  u.title = std::string("Kriging standard deviation") + (logged ? " (log scale)" : "");
  u.value_label = logged ? "standard deviation of ln " + s.value_names.front()
                         : "standard deviation" +
                               (units_value.empty() ? std::string() : " (" + units_value + ")");
  u.grid = band_grid(k, sd, 800);
  h.figure(raster_map_svg(e),
           "Kriged estimate" + std::string(logged ? ", back-transformed from the log scale" : "") +
               "; dots: samples.");
  h.figure(raster_map_svg(u),
           "Square root of the kriging variance: high where samples are "
           "sparse, low near them.");
  if (std::isfinite(ko.threshold)) {
    RasterMapPlot pr = e;
    pr.title = "Probability that " + s.value_names.front() + " exceeds " + num(ko.threshold);
    pr.value_label = "probability";
    pr.ramp = ColourRamp::probability;
    pr.grid = band_grid(k, k.probability, 800);
    h.figure(raster_map_svg(pr),
             "Model-based probability under a Gaussian error on the kriging scale (docs/kriging.md "
             "says when it misleads). Classes break at 0.1, 0.5 and 0.9.");
    std::vector<std::vector<std::string>> rows;
    for (const auto& a : areas)
      rows.push_back({"P > " + num(a.level), std::to_string(a.cells), area_text(a.area, mu)});
    h.table({"probability of exceeding " + num(ko.threshold), "cells", "area"}, rows);
  }
}

// The grade-tonnage curve of the declustered samples for the same blocks:
// the estimated blocks' tonnage times the declustered share of samples at or
// above each cut-off, and the samples' declustered mean grade above it.
std::vector<GradeTonnageRow> sample_grade_tonnage(const ReportInput& in, double tonnage,
                                                  std::int64_t blocks,
                                                  const std::vector<double>& cutoffs) {
  std::vector<double> values;
  for (double x : in.samples->values.front())
    if (!std::isnan(x)) values.push_back(x);
  const auto& d = in.summary->declustered.front();
  const bool weighted = d.weights.size() == values.size();
  double total = 0;
  for (std::size_t i = 0; i < values.size(); ++i) total += weighted ? d.weights[i] : 1.0;
  std::vector<GradeTonnageRow> out;
  for (double c : cutoffs) {
    GradeTonnageRow r;
    r.cutoff = c;
    double w = 0, wv = 0;
    for (std::size_t i = 0; i < values.size(); ++i)
      if (values[i] >= c) {
        const double wi = weighted ? d.weights[i] : 1.0;
        w += wi;
        wv += wi * values[i];
      }
    const double share = total > 0 ? w / total : 0;
    r.tonnage = tonnage * share;
    r.blocks = std::llround(share * static_cast<double>(blocks));
    r.mean_grade = w > 0 ? wv / w : std::nan("");
    out.push_back(r);
  }
  return out;
}

void block_section(Html& h, const ReportInput& in) {
  const GridSpec& grid = *in.grid;
  const ReportOptions& ro = in.options;
  const KrigedGrid& k = *in.result;
  const std::string units = units_of(in).symbol;
  h.h2("maps", "Block model");
  std::vector<double> grades;  // the estimates of the blocks in the table
  for (std::size_t i = 0; i < k.estimate.size(); ++i)
    if (k.listed[i]) grades.push_back(k.estimate[i]);
  const double volume = grid.dx * grid.dy * grid.dz;
  const double density = ro.density > 0 ? ro.density : 1.0;
  std::vector<double> cutoffs = ro.cutoffs;
  std::vector<double> g;
  for (double x : grades)
    if (std::isfinite(x)) g.push_back(x);
  if (cutoffs.empty()) {
    std::sort(g.begin(), g.end());
    cutoffs = nice_ticks(0, g.empty() ? 1.0 : quantile_sorted(g, 0.95), 10).values;
  }
  const auto gt = grade_tonnage(grades, volume, density, cutoffs);
  const auto ref = sample_grade_tonnage(in, static_cast<double>(g.size()) * volume * density,
                                        static_cast<std::int64_t>(g.size()), cutoffs);
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
  auto tonnes = [](double t) {
    std::ostringstream s;
    s << std::fixed << std::setprecision(0) << t;
    return s.str();
  };
  for (std::size_t i = 0; i < gt.size(); ++i) {
    const auto& r = gt[i];
    rows.push_back({num(r.cutoff), std::to_string(r.blocks), tonnes(r.tonnage), num(r.mean_grade),
                    tonnes(ref[i].tonnage), num(ref[i].mean_grade)});
    dp.x.push_back(r.cutoff);
    dp.left.push_back(r.tonnage);
    dp.right.push_back(r.mean_grade);
  }
  h.table({"cut-off", "blocks", "tonnage (t)", "mean grade", "tonnage from samples (t)",
           "mean grade of samples"},
          rows);
  h.figure(dual_axis_svg(dp),
           "Kriged block grades are smoothed: they vary less than the true block grades. " +
               grade_tonnage_comparison(gt, ref, in.options.units) +
               " The samples' columns spread the declustered sample grades over the estimated "
               "tonnage; samples are points and vary more than blocks, so they exaggerate the "
               "spread of the true block grades.");
}

}  // namespace

namespace {

// Refuses a report whose inputs are missing or do not belong together.
void check_input(const ReportInput& in) {
  const char* missing = !in.samples           ? "the samples"
                        : !in.summary         ? "the data summary"
                        : !in.variogram       ? "the variogram"
                        : !in.model           ? "the model"
                        : !in.kriging         ? "the kriging options"
                        : !in.grid            ? "the grid"
                        : !in.kriging_summary ? "the kriging summary"
                        : !in.result          ? "the kriged grid"
                                              : nullptr;
  if (missing) throw std::invalid_argument(std::string("report: the input lacks ") + missing);
  if (in.samples->size() == 0 || in.samples->value_names.empty() || in.summary->stats.empty() ||
      in.summary->declustered.empty())
    throw std::invalid_argument("report: the samples hold no values to report");
  const DataSummary& sum = *in.summary;
  const std::size_t columns = sum.names.size();
  if (sum.stats.size() != columns || sum.declustered.size() != columns ||
      sum.load.missing.size() < columns || sum.load.below_detection.size() < columns)
    throw std::invalid_argument("report: the data summary does not cover every value column");
  const GridSpec& g = in.result->grid();
  if (g.nx != in.grid->nx || g.ny != in.grid->ny || g.nz != in.grid->nz ||
      g.dimension != in.samples->dimension)
    throw std::invalid_argument("report: the kriged grid (" + std::to_string(g.nx) + " x " +
                                std::to_string(g.ny) + " x " + std::to_string(g.nz) +
                                ") is not the study's grid");
  const auto n = static_cast<std::size_t>(g.nodes());
  if (in.result->estimate.size() != n || in.result->variance.size() != n ||
      in.result->listed.size() != n)
    throw std::invalid_argument("report: the kriged grid is incomplete");
  if (std::isfinite(in.kriging->threshold) && in.result->probability.size() != n)
    throw std::invalid_argument(
        "report: kriging had a threshold but the kriged grid holds no "
        "exceedance probability");
}

}  // namespace

std::string render_report(const ReportInput& in) {
  check_input(in);
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
        << " of " << esc(s.value_names.front()) << " from " << s.size()
        << " sample locations</p>\n";
  h.out << "<div class=\"caution\"><b>Caution.</b> " << esc(caution_text()) << "</div>\n";
  h.out << "<nav><a href=\"#data\">Data</a><a href=\"#variogram\">Variogram</a><a "
           "href=\"#model\">Model</a>"
        << (in.crossval ? "<a href=\"#crossval\">Cross-validation</a>" : "") << "<a href=\"#maps\">"
        << (three_d ? "Block model" : "Maps") << "</a><a href=\"#settings\">Settings</a></nav>\n";

  // Key results first: what the reader came for.
  std::vector<ExceedanceArea> areas;
  if (!three_d && std::isfinite(ko.threshold)) areas = exceedance_areas(*in.result, {0.5, 0.9});
  h.out << "<div class=\"keys\">";
  auto key = [&h](const std::string& value, const std::string& label) {
    h.out << "<div class=\"key\"><b>" << esc(value) << "</b><span>" << esc(label)
          << "</span></div>";
  };
  key(std::to_string(s.size()),
      "sample locations (" + std::to_string(sum.load.rows_read) + " rows read)");
  key(num(sum.stats.front().mean) + " / " + num(sum.declustered.front().mean),
      "raw / declustered mean");
  key(to_spec_for_people(in.model->model),
      std::string("covariance model") + (logged ? " (log scale)" : ""));
  if (in.crossval)
    key(num(in.crossval->summary.rmse) + " · " +
            num(in.crossval->summary.mean_squared_standardised_error, 3),
        "cross-validation RMSE · mean squared standardised error (ideal 1)");
  for (const auto& a : areas)
    key(area_text(a.area, units_of(in)), "area where P(" + s.value_names.front() + " > " +
                                             num(ko.threshold) + ") exceeds " + num(a.level));
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
  const std::string units = units_of(in).symbol;
  h.table({"setting", "value"},
          {{"samples", s.source},
           {"value", s.value_names.front()},
           {"variogram", "lag " + num(v.options.lag) + " × " + std::to_string(v.options.lags) +
                             ", estimator " + std::string(name_of(v.options.estimator)) +
                             ", transform " + v.summary.transform},
           {"model", to_spec_for_people(in.model->model)},
           {"kriging", std::string(name_of(ko.method)) + ", transform " + ko.transform.describe() +
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

void write_report(const std::string& path, const ReportInput& input, bool overwrite) {
  const std::string html = render_report(input);  // before anything is written
  write_atomically(path, overwrite, [&html](const std::string& temporary) {
    std::ofstream f(temporary, std::ios::binary | std::ios::trunc);
    if (!f) throw std::runtime_error("cannot write " + temporary);
    f << html;
    f.close();
    if (!f) throw std::runtime_error("writing " + temporary + " failed");
  });
}

}  // namespace sillstone
