// Fitting a covariance model to an empirical variogram: the classes used,
// what the directions allow, starting values, the weighted least-squares
// fit (with Cressie's weights re-computed until they settle), the figures of
// merit and the warnings. The method is set out in docs/fitting.md.
#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "fitting/fit_detail.hpp"
#include "models/model_detail.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"

namespace sillstone {
namespace {

using detail::ClassData;
using detail::DataShape;
using detail::DirectionInfo;
using detail::Layout;
using detail::ModelProblem;

constexpr const char* kComponent = "fit";
constexpr double kDegree = 0.017453292519943295;  // pi / 180
constexpr std::size_t kFewSamples = 100;          // Webster & Oliver (1992), from memory
constexpr std::uint64_t kFewPairs = 30;           // common practice
constexpr double kSillMismatch = 0.5;             // common practice
constexpr double kWeightFloor = 1e-6;             // gamma >= 1e-6 V in Cressie's weights
constexpr double kWeightsSettled = 1e-9;          // largest relative change of a weight
constexpr double kPerfectFit = 1e-28;             // objective / S0 of a noise-free fit
constexpr double kAicFloor = 1e-12;               // S' = max(S, 1e-12 S0) in the AIC
constexpr int kFreeAzimuthSteps = 18;  // a class with any azimuth: mean over 0, 10, ..., 170
constexpr double kAtBound = 1e-9;
constexpr double kStartTie = 1e-9;  // relative objective difference that decides between starts //
                                    // relative distance that counts as at a bound

// Short numbers for messages and the table (6 significant digits).
std::string num(double x, int digits = 6) { return format_for_people(x, digits); }

std::string label(std::size_t i, Family f) {
  return "structure " + std::to_string(i + 1) + " (" + std::string(name_of(f)) + ")";
}

// --- The classes -------------------------------------------------------------

// "FILE: " naming the variogram's source in messages, when it is known.
std::string source_of(const EmpiricalVariogram& v) {
  return v.source.empty() ? "" : v.source + ": ";
}

std::vector<ClassData> usable_classes(const EmpiricalVariogram& v) {
  if (v.options.statistic != VariogramStatistic::semivariance)
    throw InputError(kComponent,
                     source_of(v) + "the variogram holds the " +
                         std::string(name_of(v.options.statistic)) +
                         "; fit needs semivariance (variogram --statistic semivariance)");
  std::vector<ClassData> out;
  for (const VariogramRow& r : v.rows) {
    if (r.pairs == 0 || !std::isfinite(r.value)) continue;
    if (r.value < 0)
      throw InputError(kComponent, source_of(v) + "the class (" + num(r.lag_from) + ", " +
                                       num(r.lag_to) + "] has a negative semivariance (" +
                                       num(r.value) + ")");
    ClassData c;
    if (r.azimuth) c.azimuth = *r.azimuth;
    if (r.dip) c.dip = *r.dip;
    c.lag_from = r.lag_from;
    c.lag_to = r.lag_to;
    c.distance = std::isfinite(r.mean_distance) && r.mean_distance > 0
                     ? r.mean_distance
                     : 0.5 * (r.lag_from + r.lag_to);
    c.pairs = static_cast<double>(r.pairs);
    c.value = r.value;
    out.push_back(c);
  }
  if (out.empty())
    throw InputError(kComponent, source_of(v) +
                                     "the variogram has no class with pairs and a value "
                                     "to fit (too few samples, or lags shorter than "
                                     "their spacing)");
  return out;
}

// --- Starting values from the shape of the data ----------------------------

struct Point2 {
  double distance, value;
};

// Where the series (sorted by distance) first reaches `threshold`, after a
// running mean over three classes; beyond the last class by proportion when
// it never does.
double crossing(const std::vector<Point2>& series, double threshold) {
  const std::size_t n = series.size();
  std::vector<double> smooth(n);
  for (std::size_t i = 0; i < n; ++i) {
    const std::size_t a = i == 0 ? 0 : i - 1, b = std::min(n - 1, i + 1);
    double sum = 0;
    for (std::size_t k = a; k <= b; ++k) sum += series[k].value;
    smooth[i] = sum / static_cast<double>(b - a + 1);
  }
  for (std::size_t i = 0; i < n; ++i) {
    if (smooth[i] < threshold) continue;
    if (i == 0) return series[0].distance;
    const double d0 = series[i - 1].distance, d1 = series[i].distance;
    const double s0 = smooth[i - 1], s1 = smooth[i];
    return s1 > s0 ? d0 + (d1 - d0) * (threshold - s0) / (s1 - s0) : d1;
  }
  const double last = std::max(smooth[n - 1], 1e-300);
  return series[n - 1].distance * std::max(1.0, threshold / last);
}

DataShape data_shape(const std::vector<ClassData>& classes, double largest) {
  // Pool the directions class by class, weighting by pairs.
  std::map<std::pair<double, double>, std::array<double, 3>> pooled;  // pairs, sum p d, sum p v
  for (const ClassData& c : classes) {
    auto& p = pooled[{c.lag_from, c.lag_to}];
    p[0] += c.pairs;
    p[1] += c.pairs * c.distance;
    p[2] += c.pairs * c.value;
  }
  std::vector<Point2> series;
  std::vector<double> weight;
  for (const auto& [bounds, p] : pooled) {
    series.push_back({p[1] / p[0], p[2] / p[0]});
    weight.push_back(p[0]);
  }
  DataShape shape;
  // Nugget: the weighted straight line through the first three classes, at 0.
  const std::size_t first = std::min<std::size_t>(3, series.size());
  if (first >= 2) {
    double sw = 0, sd = 0, sv = 0, sdd = 0, sdv = 0;
    for (std::size_t i = 0; i < first; ++i) {
      const double w = weight[i], d = series[i].distance, v = series[i].value;
      sw += w;
      sd += w * d;
      sv += w * v;
      sdd += w * d * d;
      sdv += w * d * v;
    }
    const double det = sw * sdd - sd * sd;
    const double intercept = det > 0 ? (sdd * sv - sd * sdv) / det : series[0].value;
    shape.nugget = std::clamp(intercept, 0.0, series[0].value);
  }
  // Plateau: the classes beyond two thirds of the largest lag.
  double sw = 0, sv = 0;
  for (std::size_t i = 0; i < series.size(); ++i)
    if (series[i].distance >= largest * 2 / 3) {
      sw += weight[i];
      sv += weight[i] * series[i].value;
    }
  shape.plateau = sw > 0 ? sv / sw : series.back().value;
  shape.range = crossing(series, shape.nugget + 0.95 * (shape.plateau - shape.nugget));
  return shape;
}

DirectionInfo analyse_directions(const std::vector<ClassData>& classes, int dimension,
                                 const DataShape& shape) {
  DirectionInfo info;
  info.dimension = dimension;
  std::map<std::pair<double, double>, std::vector<Point2>> directions;  // (azimuth, dip) -> series
  for (const ClassData& c : classes) {
    if (std::isfinite(c.azimuth)) {
      double a = std::fmod(c.azimuth, 180.0);
      if (a < 0) a += 180;
      if (std::none_of(info.azimuths.begin(), info.azimuths.end(),
                       [a](double b) { return std::fabs(a - b) < 1e-9; }))
        info.azimuths.push_back(a);
    }
    if (dimension == 3 && std::isfinite(c.dip) && c.dip > 0) info.vertical = true;
    const double key_azimuth = std::isfinite(c.azimuth) ? c.azimuth : -1;
    const double key_dip = std::isfinite(c.dip) ? c.dip : 0;
    directions[{key_azimuth, key_dip}].push_back({c.distance, c.value});
  }
  info.horizontal = info.azimuths.size() >= 2;
  info.azimuth_free = info.azimuths.size() >= 3;

  const double threshold = shape.nugget + 0.95 * (shape.plateau - shape.nugget);
  double longest = -1, shortest = std::numeric_limits<double>::infinity();
  double steep_sum = 0;
  int steep = 0;
  for (auto& [key, series] : directions) {
    std::sort(series.begin(), series.end(),
              [](const Point2& a, const Point2& b) { return a.distance < b.distance; });
    const double range = crossing(series, threshold);
    if (key.second >= 45) {
      steep_sum += range;
      ++steep;
      continue;
    }
    if (range > longest) {
      longest = range;
      info.longest_azimuth = key.first >= 0 ? key.first : 0;
    }
    shortest = std::min(shortest, range);
  }
  if (longest > 0) info.ratio_guess = shortest / longest;
  if (steep > 0 && longest > 0) info.vertical_ratio_guess = steep_sum / steep / longest;
  return info;
}

// --- Layouts: what is fitted in each structure ------------------------------

bool held(const detail::StructureHolds& h, const char* key) { return h.count(key) > 0; }

std::vector<Layout> make_layouts(const std::vector<Family>& structures,
                                 const std::vector<detail::StructureHolds>& holds,
                                 const DirectionInfo& info, const FitOptions& options,
                                 std::vector<std::string>* notes) {
  std::vector<Layout> out;
  bool noted_two = false;
  for (std::size_t i = 0; i < structures.size(); ++i) {
    const Family f = structures[i];
    const detail::StructureHolds& h = holds[i];
    const std::string who = label(i, f);
    for (const char* key : {"azimuth", "ratio"})
      if (held(h, key) && !info.horizontal)
        throw InputError(kComponent, "--fix " + h.at(key).text() + ": " + who + ": " + key +
                                         " needs a variogram with two or more azimuths");
    for (const char* key : {"dip", "plunge", "ratio2"})
      if (held(h, key) && info.dimension != 3)
        throw InputError(kComponent, "--fix " + h.at(key).text() + ": " + who + ": " + key +
                                         " is a 3D parameter and the variogram is 2D");
    Layout l;
    l.family = f;
    auto free_or_held = [&h, &l](int slot, const char* key, double* value) {
      const auto it = h.find(key);
      if (it == h.end()) {
        l.index[slot] = 0;  // numbered by ModelProblem
      } else {
        *value = it->second.value;
      }
    };
    if (held(h, "sill")) {
      l.sill_free = false;
      l.sill_value = h.at("sill").value;
    }
    if (f == Family::nugget) {
      out.push_back(l);
      continue;
    }
    if (f == Family::matern) {
      l.nu_value = options.matern_nu;
      if (held(h, "nu"))
        l.nu_value = h.at("nu").value;
      else if (options.fit_nu)
        l.index[Layout::nu] = 0;
    }
    if (f == Family::power) free_or_held(Layout::exponent, "exponent", &l.exponent_value);

    const bool shape_held = held(h, "range") || held(h, "ratio") || held(h, "ratio2") ||
                            held(h, "azimuth") || held(h, "dip") || held(h, "plunge");
    const bool horizontal_free = info.horizontal && info.azimuth_free;
    if (detail::takes_range(f) && !shape_held && (!info.horizontal || horizontal_free) &&
        (info.horizontal || info.vertical)) {
      l.axes = true;
      l.index[Layout::along] = 0;
      l.tie_across = !info.horizontal;
      if (info.horizontal) l.index[Layout::across] = 0;
      if (info.horizontal) l.index[Layout::azimuth] = 0;
      l.vertical_axis = info.vertical;
      if (info.vertical) l.index[Layout::vertical] = 0;
      out.push_back(l);
      continue;
    }
    if (detail::takes_range(f)) free_or_held(Layout::range, "range", &l.range_value);
    if (held(h, "dip")) l.dip_value = h.at("dip").value;
    if (held(h, "plunge")) l.plunge_value = h.at("plunge").value;
    if (held(h, "ratio2"))
      l.ratio2_value = h.at("ratio2").value;
    else if (info.vertical)
      l.index[Layout::ratio2] = 0;
    if (info.horizontal) {
      if (held(h, "ratio"))
        l.ratio_value = h.at("ratio").value;
      else
        l.index[Layout::ratio] = 0;
      if (held(h, "azimuth")) {
        const FixedParameter& a = h.at("azimuth");
        l.azimuth_value = a.longest ? info.longest_azimuth : a.value;
      } else if (info.azimuth_free) {
        l.index[Layout::azimuth] = 0;
      } else {
        l.azimuth_value = info.longest_azimuth;
        if (!noted_two)
          notes->push_back(
              "two azimuths cannot fix an ellipse's orientation: the azimuth is held "
              "at " +
              num(info.longest_azimuth) + ", the direction with the longest range");
        noted_two = true;
      }
    }
    out.push_back(l);
  }
  return out;
}

void set_lags(std::vector<ClassData>* classes, bool anisotropic) {
  for (ClassData& c : *classes) {
    c.lags.clear();
    const double dip = std::isfinite(c.dip) ? c.dip : 0;
    const double cd = std::cos(dip * kDegree), sd = std::sin(dip * kDegree);
    auto along = [&c, cd, sd](double azimuth) {
      const double a = azimuth * kDegree;
      return std::array<double, 3>{c.distance * std::sin(a) * cd, c.distance * std::cos(a) * cd,
                                   -c.distance * sd};
    };
    if (std::isfinite(c.azimuth)) {
      c.lags.push_back(along(c.azimuth));
    } else if (dip == 90) {
      c.lags.push_back({0, 0, -c.distance});
    } else if (anisotropic) {
      for (int k = 0; k < kFreeAzimuthSteps; ++k)
        c.lags.push_back(along(180.0 * k / kFreeAzimuthSteps));
    } else {
      c.lags.push_back(along(0));
    }
  }
}

// --- Starts ------------------------------------------------------------------

std::vector<std::vector<double>> range_tuples(std::size_t m, double r0) {
  std::vector<std::vector<double>> f;
  if (m == 0) return {{}};
  if (m == 1) f = {{1}, {0.5}, {2}, {0.25}};
  if (m == 2) f = {{1.0 / 3, 1}, {0.25, 0.5}, {0.5, 2}, {0.125, 1}, {1, 3}, {0.25, 2}};
  if (m >= 3) {
    std::vector<double> a, b;
    for (std::size_t j = 0; j < m; ++j) {
      a.push_back(std::pow(2.0, static_cast<double>(j) - static_cast<double>(m) + 1));
      b.push_back(std::pow(3.0, static_cast<double>(j) - static_cast<double>(m) + 1));
    }
    f = {a, b};
  }
  for (auto& t : f)
    for (double& x : t) x *= r0;
  return f;
}

// Starting points for the solver's parameters (sills are solved at every
// point, so they need none): the ranges where the data reach 95 % of their
// plateau (and of the sample variance, when known) above the extrapolated
// nugget, other multiples of it, the ellipse turned, other power exponents.
std::vector<std::vector<Structure>> make_starts(const std::vector<Layout>& layouts,
                                                const std::vector<ClassData>& classes,
                                                const DataShape& shape, const DirectionInfo& info,
                                                double largest, double variance,
                                                const FitOptions& options) {
  std::size_t ranged = 0;
  for (const Layout& l : layouts) ranged += detail::takes_range(l.family);
  const double ratio0 = std::clamp(info.ratio_guess, 0.2, 0.9);
  const double ratio2_0 = std::clamp(info.vertical_ratio_guess, 0.05, 1.0);

  auto build = [&](const std::vector<double>& ranges, double azimuth, double exponent) {
    std::vector<Structure> out;
    std::size_t j = 0;
    for (const Layout& l : layouts) {
      Structure s;
      s.family = l.family;
      if (l.family == Family::power) s.exponent = exponent;
      if (detail::takes_range(l.family)) s.range = ranges[j++];
      s.nu = l.family == Family::matern ? options.matern_nu : 0;
      s.anisotropy.azimuth = azimuth;
      s.anisotropy.ratio = info.horizontal ? ratio0 : 1;
      s.anisotropy.ratio2 = info.vertical ? ratio2_0 : 1;
      out.push_back(s);
    }
    return out;
  };
  auto clamp_range = [largest](double r) { return std::clamp(r, 0.05 * largest, 2 * largest); };

  std::vector<std::vector<Structure>> starts;
  const double azimuth = info.longest_azimuth;
  const auto tuples = range_tuples(ranged, clamp_range(shape.range));
  starts.push_back(build(tuples[0], azimuth, 1));
  if (std::isfinite(variance) && variance > shape.nugget) {
    std::vector<Point2> series;
    for (const ClassData& c : classes) series.push_back({c.distance, c.value});
    std::sort(series.begin(), series.end(),
              [](const Point2& a, const Point2& b) { return a.distance < b.distance; });
    const double r = crossing(series, shape.nugget + 0.95 * (variance - shape.nugget));
    starts.push_back(build(range_tuples(ranged, clamp_range(r))[0], azimuth, 1));
  }
  for (std::size_t t = 1; t < tuples.size(); ++t) starts.push_back(build(tuples[t], azimuth, 1));
  if (info.horizontal && info.azimuth_free)
    for (double turn : {45.0, -45.0, 90.0}) starts.push_back(build(tuples[0], azimuth + turn, 1));
  bool power = false;
  for (const Layout& l : layouts) power = power || l.family == Family::power;
  if (power)
    for (double exponent : {0.5, 1.5}) starts.push_back(build(tuples[0], azimuth, exponent));
  return starts;
}

// --- Weights -------------------------------------------------------------------

Eigen::VectorXd weights_for(FitWeights kind, const std::vector<ClassData>& classes,
                            const Eigen::VectorXd& gamma, double value_scale) {
  const Eigen::Index n = static_cast<Eigen::Index>(classes.size());
  Eigen::VectorXd w(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const ClassData& c = classes[static_cast<std::size_t>(i)];
    switch (kind) {
      case FitWeights::equal:
        w[i] = 1;
        break;
      case FitWeights::pairs:
        w[i] = c.pairs;
        break;
      case FitWeights::cressie: {
        const double g = std::max(gamma[i], kWeightFloor * value_scale);
        w[i] = c.pairs / (g * g);
        break;
      }
    }
  }
  return w;
}

// --- The result ----------------------------------------------------------------

void add_warnings(FitResult* r, const ModelProblem& problem, const Eigen::VectorXd& x) {
  auto& warnings = r->summary.warnings;
  if (r->samples > 0 && r->samples < kFewSamples)
    warnings.push_back("only " + std::to_string(r->samples) +
                       " samples: fewer than about 100 rarely give a reliable variogram "
                       "(Webster & Oliver 1992, from memory)");
  std::size_t few = 0;
  for (const FitRow& row : r->rows) few += row.pairs < kFewPairs;
  if (few > 0)
    warnings.push_back(std::to_string(few) + " of the " + std::to_string(r->rows.size()) +
                       " classes used have fewer than 30 pairs; their values are noisy "
                       "(common practice)");

  const CovarianceModel& m = r->model;
  const auto& s = m.structures();
  bool spatial = false;
  for (const Structure& st : s) spatial = spatial || (st.family != Family::nugget && st.sill > 0);
  if (!spatial) {
    warnings.push_back(
        "the fitted model is a pure nugget: no spatial dependence shows at these "
        "lags");
  } else {
    for (std::size_t i = 0; i < s.size(); ++i)
      if (s[i].family != Family::nugget && s[i].sill == 0)
        warnings.push_back(label(i, s[i].family) +
                           " has a sill of 0: the model needs fewer structures");
  }
  if (m.has_sill() && std::isfinite(r->sample_variance) && r->sample_variance > 0) {
    const double off = std::fabs(m.total_sill() - r->sample_variance) / r->sample_variance;
    if (off > kSillMismatch)
      warnings.push_back("the fitted total sill " + num(m.total_sill()) + " is " +
                         num(100 * off, 3) + " % away from the sample variance " +
                         num(r->sample_variance) +
                         " (more than 50 %, common practice): the variogram may not level off "
                         "within the lags, or the data may have a trend");
  }
  for (std::size_t i = 0; i < s.size(); ++i)
    if (s[i].range > r->largest_lag && s[i].sill > 0)
      warnings.push_back(label(i, s[i].family) + " has a range of " + num(s[i].range) +
                         ", beyond the largest lag " + num(r->largest_lag) +
                         ": the range is an extrapolation");

  // A range shorter than the second class: only the first class sees the
  // structure, and any range up to the second class fits it as well.
  std::vector<double> distances;
  for (const FitRow& row : r->rows) distances.push_back(row.distance);
  std::sort(distances.begin(), distances.end());
  distances.erase(std::unique(distances.begin(), distances.end()), distances.end());
  if (distances.size() >= 2) {
    for (std::size_t i = 0; i < s.size(); ++i) {
      if (s[i].range <= 0 || s[i].sill <= 0) continue;
      const double shortest = s[i].range * std::min(s[i].anisotropy.ratio, s[i].anisotropy.ratio2);
      if (shortest < distances[1])
        warnings.push_back(label(i, s[i].family) + ": its " +
                           (shortest < s[i].range ? "shortest range " : "range ") + num(shortest) +
                           " is below the second class's distance " + num(distances[1]) +
                           ": only the first class sees it, so the range is poorly determined");
    }
  }

  // Parameters that ended on a bound.
  const Eigen::VectorXd& lo = problem.lower();
  const Eigen::VectorXd& hi = problem.upper();
  const auto& layouts = problem.layouts();
  for (std::size_t k = 0; k < layouts.size(); ++k) {
    for (int slot = 0; slot < Layout::kSlots; ++slot) {
      const int j = layouts[k].index[static_cast<std::size_t>(slot)];
      if (j < 0 || slot == Layout::azimuth) continue;
      const double tol = kAtBound * std::max(1.0, std::fabs(x[j]));
      const bool at_lo = x[j] <= lo[j] + tol, at_hi = x[j] >= hi[j] - tol;
      if (!at_lo && !at_hi) continue;
      const bool ratio = slot == Layout::ratio || slot == Layout::ratio2;
      if (ratio && at_hi) continue;  // isotropic: a legitimate answer
      const char* what = slot == Layout::nu         ? "nu"
                         : slot == Layout::exponent ? "exponent"
                         : ratio                    ? "an anisotropy ratio"
                                                    : "a range";
      warnings.push_back(label(k, layouts[k].family) + ": " + what + " stopped at its " +
                         (at_lo ? "lower" : "upper") + " bound (docs/fitting.md, Bounds)");
    }
  }
  if (!r->summary.converged)
    warnings.push_back("the fit did not converge (" + std::string(name_of(r->summary.termination)) +
                       "); the model is the best point reached");
}

FitResult fit_structures(const EmpiricalVariogram& v, const FitOptions& options,
                         const std::vector<detail::StructureHolds>& holds) {
  FitResult result;
  result.source = v.source;
  result.value = v.value;
  result.transform = transform_of(v);
  result.structures = options.structures;
  result.weights = options.weights;
  result.samples = v.summary.samples;
  result.sample_variance = v.summary.variance;
  for (const FixedParameter& f : options.fixed) {
    std::vector<detail::StructureHolds> one;
    detail::resolve_holds(options.structures, {f}, true, &one, nullptr);
    if (std::any_of(one.begin(), one.end(), [](const auto& h) { return !h.empty(); }))
      result.fixed.push_back(f.text());
  }

  std::vector<ClassData> classes = usable_classes(v);
  double largest = 0, value_scale = 0;
  for (const ClassData& c : classes) {
    largest = std::max(largest, c.distance);
    value_scale = std::max(value_scale, c.value);
  }
  if (!(value_scale > 0))
    throw InputError(kComponent, source_of(v) +
                                     "every class has a semivariance of 0: there is "
                                     "nothing to fit");
  result.largest_lag = largest;
  const DataShape shape = data_shape(classes, largest);
  const DirectionInfo info = analyse_directions(classes, v.dimension, shape);
  if (result.samples == 0)
    result.summary.notes.push_back(
        "the number of samples is not known (a CSV table): the "
        "few-samples check is not made");
  if (!std::isfinite(result.sample_variance))
    result.summary.notes.push_back(
        "the sample variance is not known (a CSV table): the total "
        "sill is not compared with it");
  if (info.azimuths.size() == 1)
    result.summary.notes.push_back(
        "one azimuth cannot show anisotropy: the model is isotropic "
        "horizontally");
  const std::vector<Layout> layouts =
      make_layouts(options.structures, holds, info, options, &result.summary.notes);
  set_lags(&classes, info.horizontal);

  ModelProblem problem(classes, layouts, largest, options.max_range_factor);
  const Eigen::Index n = problem.residual_count();
  result.lags_used = static_cast<std::size_t>(n);
  result.parameters = static_cast<std::size_t>(problem.fitted_count());
  if (problem.fitted_count() > n)
    throw InputError(kComponent,
                     "the variogram has " + std::to_string(n) + " classes to fit, fewer than the " +
                         std::to_string(problem.fitted_count()) + " parameters of the model");

  detail::SolverSettings settings;
  settings.max_iterations = options.max_iterations;
  settings.function_tolerance = options.function_tolerance;
  settings.parameter_tolerance = options.parameter_tolerance;
  settings.gradient_tolerance = options.gradient_tolerance;
  settings.perfect_cost = kPerfectFit;

  // First weights: Cressie's with the empirical values in place of the model.
  Eigen::VectorXd empirical(n);
  for (Eigen::Index i = 0; i < n; ++i) empirical[i] = classes[static_cast<std::size_t>(i)].value;
  problem.set_weights(weights_for(options.weights, classes, empirical, value_scale));

  detail::SolverOutcome best;
  best.cost = std::numeric_limits<double>::infinity();
  const auto starts =
      make_starts(layouts, classes, shape, info, largest, v.summary.variance, options);
  for (const auto& start : starts) {
    const Eigen::VectorXd x0 = problem.internal(start);
    const detail::SolverOutcome out =
        detail::minimise(problem, x0, problem.lower(), problem.upper(), settings);
    ++result.summary.starts;
    // A later start must do clearly better: ties within rounding keep the
    // earlier one, so that the choice does not hang on the last bits.
    if (out.cost < best.cost * (1 - kStartTie)) best = out;
    if (problem.parameter_count() == 0) break;
  }
  Eigen::VectorXd x = best.x;
  result.summary.iterations = best.iterations;
  FitTermination termination = best.termination;

  // Cressie's weights follow the model: re-weight and re-fit until they settle.
  Eigen::VectorXd weights = problem.weights();
  if (options.weights == FitWeights::cressie) {
    for (int round = 0;; ++round) {
      const Eigen::VectorXd next =
          weights_for(FitWeights::cressie, classes, problem.values(x), value_scale);
      const double change =
          ((next - problem.weights()).cwiseAbs().array() / problem.weights().array()).maxCoeff();
      weights = next;
      if (change <= kWeightsSettled) break;
      if (round == options.max_weight_rounds) {
        termination = FitTermination::weights_unsettled;
        break;
      }
      problem.set_weights(next);
      const detail::SolverOutcome out =
          detail::minimise(problem, x, problem.lower(), problem.upper(), settings);
      x = out.x;
      result.summary.iterations += out.iterations;
      result.summary.weight_rounds = round + 1;
      termination = out.termination;
      if (!detail::is_converged(termination)) break;
    }
  }
  if (termination == FitTermination::no_free_parameters && problem.fitted_count() > 0)
    termination = FitTermination::sills_only;
  result.summary.termination = termination;
  result.summary.converged = detail::is_converged(termination);

  try {
    result.model = CovarianceModel(problem.structures(x));
  } catch (const InputError&) {
    throw InputError(kComponent, "the fit gave every sill 0; check the variogram and the holds");
  }
  // Figures of merit from the model as written.
  double objective = 0, zero_model = 0;
  for (Eigen::Index i = 0; i < n; ++i) {
    const ClassData& c = classes[static_cast<std::size_t>(i)];
    double gamma = 0;
    for (const auto& h : c.lags) gamma += result.model.variogram(h[0], h[1], h[2]);
    gamma /= static_cast<double>(c.lags.size());
    FitRow row;
    row.azimuth = c.azimuth;
    row.dip = c.dip;
    row.distance = c.distance;
    row.pairs = static_cast<std::uint64_t>(c.pairs);
    row.empirical = c.value;
    row.model = gamma;
    row.weight = weights[i];
    result.rows.push_back(row);
    objective += row.weight * (gamma - c.value) * (gamma - c.value);
    zero_model += row.weight * c.value * c.value;
  }
  result.objective = objective;
  const double nn = static_cast<double>(n);
  result.aic = nn * std::log(std::max(objective, kAicFloor * zero_model) / nn) +
               2 * static_cast<double>(result.parameters);
  if (result.model.has_sill()) {
    result.nugget_ratio = result.model.nugget() / result.model.total_sill();
    result.dependence = spatial_dependence(result.nugget_ratio);
  }
  add_warnings(&result, problem, x);
  return result;
}

}  // namespace

FitResult fit_model(const EmpiricalVariogram& variogram, const FitOptions& options) {
  std::string why;
  if (!options.is_valid(&why)) throw InputError(kComponent, why);
  std::vector<detail::StructureHolds> holds;
  detail::resolve_holds(options.structures, options.fixed, false, &holds, nullptr);
  return fit_structures(variogram, options, holds);
}

std::vector<FitResult> fit_auto(const EmpiricalVariogram& variogram, const FitOptions& options) {
  for (const FixedParameter& f : options.fixed)
    if (f.structure > 0)
      throw InputError(kComponent, "--fix " + f.text() +
                                       ": with --auto the candidates differ, so holds name no "
                                       "structure number");
  const auto candidates = auto_candidates();
  std::vector<bool> used(options.fixed.size(), false);
  std::vector<FitResult> ranked;
  std::vector<std::string> skipped;
  std::string first_error;
  for (const auto& structures : candidates) {
    FitOptions o = options;
    o.structures = structures;
    std::vector<detail::StructureHolds> holds;
    std::string why;
    if (!detail::resolve_holds(structures, options.fixed, true, &holds, &why))
      throw InputError(kComponent, why);
    for (std::size_t k = 0; k < options.fixed.size(); ++k) {
      std::vector<detail::StructureHolds> one;
      detail::resolve_holds(structures, {options.fixed[k]}, true, &one, nullptr);
      for (const auto& h : one) used[k] = used[k] || !h.empty();
    }
    std::string candidate;
    for (Family f : structures)
      candidate += (candidate.empty() ? "" : "+") + std::string(name_of(f));
    if (!o.is_valid(&why)) {  // e.g. every sill held at 0 in this candidate
      skipped.push_back("candidate " + candidate + " was not fitted: " + why);
      if (first_error.empty()) first_error = why;
      continue;
    }
    try {
      ranked.push_back(fit_structures(variogram, o, holds));
    } catch (const InputError& e) {
      // e.g. more parameters than classes: the other candidates still compete
      const std::string message = std::string(e.what()).substr(std::string(kComponent).size() + 2);
      skipped.push_back("candidate " + candidate + " was not fitted: " + message);
      if (first_error.empty()) first_error = message;
    }
  }
  for (std::size_t k = 0; k < options.fixed.size(); ++k)
    if (!used[k])
      throw InputError(kComponent,
                       "--fix " + options.fixed[k].text() + ": no candidate has this parameter");
  if (ranked.empty()) throw InputError(kComponent, "no candidate could be fitted: " + first_error);
  std::stable_sort(ranked.begin(), ranked.end(), [](const FitResult& a, const FitResult& b) {
    if (a.aic != b.aic) return a.aic < b.aic;
    return a.objective < b.objective;
  });
  auto& notes = ranked.front().summary.notes;
  notes.insert(notes.end(), skipped.begin(), skipped.end());
  return ranked;
}

}  // namespace sillstone
