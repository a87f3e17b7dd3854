#include <algorithm>
#include <cmath>
#include <sstream>

#include "sillstone/error.hpp"
#include "sillstone/summary.hpp"

namespace sillstone {

DataSummary summarise(const SampleSet& samples, const SummaryOptions& options) {
  std::string why;
  if (!options.is_valid(&why)) throw InputError("summary", why);
  if (samples.size() == 0) throw InputError("summary", samples.source + ": no samples");
  DataSummary s;
  s.source = samples.source;
  s.layer = samples.layer;
  s.dimension = samples.dimension;
  s.samples = samples.size();
  s.load = samples.summary;
  s.crs_name = samples.crs_name;
  s.crs_authority = samples.crs_authority;
  s.below_detection = samples.below_detection;
  s.duplicates = samples.duplicates;
  s.names = samples.value_names;
  s.warnings = samples.summary.warnings;

  s.extent_min = s.extent_max = samples.points.front();
  for (const auto& p : samples.points) {
    s.extent_min = {std::min(s.extent_min.x, p.x), std::min(s.extent_min.y, p.y),
                    std::min(s.extent_min.z, p.z)};
    s.extent_max = {std::max(s.extent_max.x, p.x), std::max(s.extent_max.y, p.y),
                    std::max(s.extent_max.z, p.z)};
  }

  for (std::size_t v = 0; v < samples.values.size(); ++v) {
    const auto& column = samples.values[v];
    const bool any =
        std::any_of(column.begin(), column.end(), [](double x) { return !std::isnan(x); });
    if (!any)
      throw InputError("summary", samples.source + ": column '" + samples.value_names[v] +
                                      "' has no usable value");
    s.stats.push_back(describe(column));
    if (const std::size_t i = first_extreme_value(samples, v); i < samples.size()) {
      std::ostringstream value;
      value << column[i];
      s.warnings.push_back(samples.source + ", " + samples.ids[i] + ", column '" +
                           samples.value_names[v] + "': " + value.str() +
                           " is beyond +-1e100; variogram, fit, crossval, krige and run refuse "
                           "such values (their squares overflow); the statistics here are "
                           "computed on rescaled values");
    }
    s.declustered.push_back(
        decluster(samples.points, column, samples.dimension, options.declustering));
    const auto& st = s.stats.back();
    if (st.count > 1 && !(st.sd > 0))
      s.warnings.push_back("all values of '" + samples.value_names[v] +
                           "' are equal: there is no spatial variation to model");
    if (st.count < 100)
      s.warnings.push_back("'" + samples.value_names[v] + "' has " + std::to_string(st.count) +
                           " values; fewer than about 100 rarely give a reliable variogram "
                           "(Webster & Oliver 1992, from memory)");
  }

  // Spacing and lag advice use the locations of the first value column.
  std::vector<Point> located;
  std::vector<std::size_t> row_of;  // located index -> sample row
  for (std::size_t i = 0; i < samples.size(); ++i)
    if (!std::isnan(samples.values.front()[i])) {
      located.push_back(samples.points[i]);
      row_of.push_back(i);
    }
  s.spacing = nearest_neighbour_spacing(located, samples.dimension);
  if (s.spacing.near > 0) {
    std::ostringstream w;
    w << s.spacing.near << " sample(s) lie closer to another than 1% of the median "
      << "nearest-neighbour spacing (" << s.spacing.median << "); the closest pair, "
      << samples.ids[row_of[s.spacing.closest_a]] << " and "
      << samples.ids[row_of[s.spacing.closest_b]] << ", is " << s.spacing.closest
      << " apart: check for repeated samples or coordinate typos (kriging treats such pairs as "
         "almost one point)";
    s.warnings.push_back(w.str());
  }
  s.lags = suggest_lags(located, samples.dimension, s.spacing.median);
  if (samples.values.size() > 1) s.moments = pairwise_moments(samples.values);
  return s;
}

}  // namespace sillstone
