// The `inspect` screen and its JSON twin. Both show the same numbers; the JSON
// keys are part of the interface (docs/inspect.md).
#include <cmath>
#include <iomanip>
#include <ostream>
#include <sstream>

#include <nlohmann/json.hpp>

#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/summary.hpp"

namespace sillstone {
namespace {

nlohmann::json number(double x) { return std::isfinite(x) ? nlohmann::json(x) : nlohmann::json(); }

// Up to 6 significant digits, without trailing noise.
std::string fmt(double x) { return format_for_people(x, 6); }

// A fixed number of decimals (percentages); undefined as format_for_people says.
std::string fixed(double x, int decimals) {
  if (!std::isfinite(x)) return format_for_people(x);
  std::ostringstream s;
  s << std::fixed << std::setprecision(decimals) << x;
  return s.str();
}

}  // namespace

std::string summary_to_json(const DataSummary& s) {
  using nlohmann::json;
  json j;
  j["source"] = s.source;
  j["layer"] = s.layer;
  j["dimension"] = s.dimension;
  j["samples"] = s.samples;
  j["crs"] =
      s.crs_name.empty() ? json() : json{{"name", s.crs_name}, {"authority", s.crs_authority}};
  json rows = {{"read", s.load.rows_read},
               {"kept", s.load.rows_kept},
               {"dropped_no_coordinate", s.load.dropped_no_coordinate},
               {"dropped_no_value", s.load.dropped_no_value},
               {"duplicate_locations", s.load.duplicate_locations},
               {"duplicate_rows_merged", s.load.duplicate_rows_removed},
               {"duplicates_policy", name_of(s.duplicates)},
               {"below_detection_policy", name_of(s.below_detection)}};
  j["rows"] = rows;
  json extent = {{"xmin", s.extent_min.x},
                 {"ymin", s.extent_min.y},
                 {"xmax", s.extent_max.x},
                 {"ymax", s.extent_max.y}};
  if (s.dimension == 3) {
    extent["zmin"] = s.extent_min.z;
    extent["zmax"] = s.extent_max.z;
  }
  j["extent"] = extent;
  json vars = json::array();
  for (std::size_t v = 0; v < s.names.size(); ++v) {
    const auto& st = s.stats[v];
    const auto& d = s.declustered[v];
    vars.push_back({{"name", s.names[v]},
                    {"count", st.count},
                    {"missing", s.load.missing[v]},
                    {"below_detection", s.load.below_detection[v]},
                    {"mean", number(st.mean)},
                    {"sd", number(st.sd)},
                    {"cv", number(st.cv)},
                    {"min", number(st.min)},
                    {"q1", number(st.q1)},
                    {"median", number(st.median)},
                    {"q3", number(st.q3)},
                    {"max", number(st.max)},
                    {"skewness", number(st.skewness)},
                    {"declustered_mean", number(d.mean)},
                    {"declustering_cell", number(d.cell)},
                    {"declustering_rule", d.rule}});
  }
  j["variables"] = vars;
  j["nearest_neighbour_spacing"] = {{"min", number(s.spacing.min)},
                                    {"median", number(s.spacing.median)},
                                    {"mean", number(s.spacing.mean)},
                                    {"max", number(s.spacing.max)}};
  j["suggested_lags"] = {{"lag", number(s.lags.lag)},
                         {"lags", s.lags.lags},
                         {"max_distance", number(s.lags.max_distance)},
                         {"min_pairs", s.lags.min_pairs},
                         {"pairs_estimated", s.lags.pairs_estimated},
                         {"rule", s.lags.rule}};
  if (s.names.size() > 1) {
    const auto m = s.moments.covariance.rows();
    json cov = json::array(), cor = json::array(), pairs = json::array();
    for (Eigen::Index i = 0; i < m; ++i) {
      json rc = json::array(), rr = json::array(), rp = json::array();
      for (Eigen::Index k = 0; k < m; ++k) {
        rc.push_back(number(s.moments.covariance(i, k)));
        rr.push_back(number(s.moments.correlation(i, k)));
        rp.push_back(s.moments.pairs(i, k));
      }
      cov.push_back(rc);
      cor.push_back(rr);
      pairs.push_back(rp);
    }
    j["covariance_matrix"] = {{"names", s.names}, {"values", cov}, {"pairs", pairs}};
    j["correlation_matrix"] = {{"names", s.names}, {"values", cor}};
  }
  j["warnings"] = s.warnings;
  return j.dump(2);
}

void write_summary_text(std::ostream& out, const DataSummary& s) {
  out << "Samples   " << s.source << (s.layer.empty() ? "" : " (layer " + s.layer + ")") << "\n";
  out << "CRS       "
      << (s.crs_name.empty()
              ? "none (local coordinates)"
              : s.crs_name + (s.crs_authority.empty() ? "" : " [" + s.crs_authority + "]"))
      << "\n";
  out << "Rows      " << s.load.rows_read << " read, " << s.load.rows_kept << " kept";
  if (s.load.dropped_no_coordinate)
    out << ", " << s.load.dropped_no_coordinate << " without coordinates";
  if (s.load.dropped_no_value) out << ", " << s.load.dropped_no_value << " without values";
  out << "\n";
  out << "Locations " << s.samples << " (" << s.load.duplicate_locations
      << " duplicate location(s), " << s.load.duplicate_rows_removed
      << " row(s) merged: --duplicates " << name_of(s.duplicates) << ")\n";
  out << "Extent    x " << fixed(s.extent_min.x, 2) << " .. " << fixed(s.extent_max.x, 2) << ",  y "
      << fixed(s.extent_min.y, 2) << " .. " << fixed(s.extent_max.y, 2);
  if (s.dimension == 3)
    out << ",  z " << fixed(s.extent_min.z, 2) << " .. " << fixed(s.extent_max.z, 2);
  out << "\n\n";

  const int w = 12;
  out << std::left << std::setw(22) << "statistic";
  for (const auto& n : s.names)
    out << std::right << std::setw(std::max<int>(w, static_cast<int>(n.size()) + 2)) << n;
  out << "\n";
  auto row = [&](const std::string& label, auto get) {
    out << std::left << std::setw(22) << label;
    for (std::size_t v = 0; v < s.names.size(); ++v)
      out << std::right << std::setw(std::max<int>(w, static_cast<int>(s.names[v].size()) + 2))
          << get(v);
    out << "\n";
  };
  row("count", [&](std::size_t v) { return std::to_string(s.stats[v].count); });
  row("missing", [&](std::size_t v) { return std::to_string(s.load.missing[v]); });
  row("below detection", [&](std::size_t v) { return std::to_string(s.load.below_detection[v]); });
  row("mean", [&](std::size_t v) { return fmt(s.stats[v].mean); });
  row("standard deviation", [&](std::size_t v) { return fmt(s.stats[v].sd); });
  row("coeff. of variation", [&](std::size_t v) { return fmt(s.stats[v].cv); });
  row("minimum", [&](std::size_t v) { return fmt(s.stats[v].min); });
  row("lower quartile", [&](std::size_t v) { return fmt(s.stats[v].q1); });
  row("median", [&](std::size_t v) { return fmt(s.stats[v].median); });
  row("upper quartile", [&](std::size_t v) { return fmt(s.stats[v].q3); });
  row("maximum", [&](std::size_t v) { return fmt(s.stats[v].max); });
  row("skewness", [&](std::size_t v) { return fmt(s.stats[v].skewness); });
  row("declustered mean", [&](std::size_t v) { return fmt(s.declustered[v].mean); });
  row("  (cell size)", [&](std::size_t v) { return fmt(s.declustered[v].cell); });
  out << "\nBelow-detection values replaced by: --below-detection " << name_of(s.below_detection)
      << "\n";
  if (!s.declustered.empty()) out << "Declustering: " << s.declustered.front().rule << ".\n";

  out << "\nNearest-neighbour spacing  min " << fmt(s.spacing.min) << ", median "
      << fmt(s.spacing.median) << ", mean " << fmt(s.spacing.mean) << ", max " << fmt(s.spacing.max)
      << "\n";
  out << "Suggested variogram lags   --lag " << fmt(s.lags.lag) << " --lags " << s.lags.lags
      << "  (max distance " << fmt(s.lags.max_distance) << ", fewest pairs in a class "
      << (s.lags.pairs_estimated ? "~" : "") << s.lags.min_pairs << ")\n";
  out << "  rule: " << s.lags.rule << "\n";

  if (s.names.size() > 1) {
    auto matrix = [&](const char* title, const Eigen::MatrixXd& m) {
      out << "\n" << title << " (pairwise-complete)\n";
      out << std::left << std::setw(22) << "";
      for (const auto& n : s.names)
        out << std::right << std::setw(std::max<int>(w, static_cast<int>(n.size()) + 2)) << n;
      out << "\n";
      for (Eigen::Index i = 0; i < m.rows(); ++i) {
        out << std::left << std::setw(22) << s.names[static_cast<std::size_t>(i)];
        for (Eigen::Index k = 0; k < m.cols(); ++k)
          out << std::right
              << std::setw(std::max<int>(
                     w, static_cast<int>(s.names[static_cast<std::size_t>(k)].size()) + 2))
              << fmt(m(i, k));
        out << "\n";
      }
    };
    matrix("Covariance matrix", s.moments.covariance);
    matrix("Correlation matrix", s.moments.correlation);
  }
  // Warnings go to stderr ("warning: ..."), not into this report.
}

}  // namespace sillstone
