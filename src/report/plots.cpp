// The report's figures. Each function lays out its plotting area from the
// size of its labels, draws axes, marks and a legend, and returns the SVG.
// Shared pieces (text builder, axes, markers, map furniture, PNG) are in
// svg.hpp; colour ramps in colour.cpp; ticks and bin counts in axes.cpp.
#include <algorithm>
#include <cmath>
#include <numeric>

#include "sillstone/error.hpp"
#include "sillstone/plots.hpp"
#include "sillstone/summary.hpp"  // quantile_sorted for quantile colour classes
#include "svg.hpp"

namespace sillstone {

using detail::Area;
using detail::Axis;
using detail::header_height;
using detail::num;
using detail::Svg;
using detail::text_width;
using detail::widest;

namespace {

constexpr double kPi = 3.14159265358979323846;
const char* const kBarFill = "#7d9cc4";  // histogram bars: a mid blue that prints mid grey
const char* const kInk = "#222222";

// Left margin that leaves room for the y tick labels and the rotated y title.
double left_margin(const Axis& y) { return 36 + widest(y.labels, 11); }

// Words of `text` on lines no wider than max_px.
std::vector<std::string> wrap(const std::string& text, double max_px, double size) {
  std::vector<std::string> lines;
  std::string line, word;
  auto flush_word = [&] {
    if (word.empty()) return;
    const std::string joined = line.empty() ? word : line + " " + word;
    if (!line.empty() && text_width(joined, size) > max_px) {
      lines.push_back(line);
      line = word;
    } else {
      line = joined;
    }
    word.clear();
  };
  for (char c : text) {
    if (c == ' ')
      flush_word();
    else
      word += c;
  }
  flush_word();
  if (!line.empty()) lines.push_back(line);
  return lines;
}

// A legend laid out in one row (below the header): swatch, label, gap.
struct KeyItem {
  enum Kind { bar, outline, line, dashed } kind;
  std::string colour;
  std::string label;
};

void draw_key_row(Svg& svg, double x, double y, const std::vector<KeyItem>& items) {
  for (const auto& it : items) {
    switch (it.kind) {
      case KeyItem::bar:
        svg.rect(x, y - 9, 18, 10, it.colour, "stroke=\"#ffffff\" stroke-width=\"0.7\"");
        break;
      case KeyItem::outline:
        svg.rect(x + 1, y - 8, 16, 8, "none", "stroke=\"" + it.colour + "\" stroke-width=\"2\"");
        break;
      case KeyItem::line:
        svg.line(x, y - 4, x + 18, y - 4, it.colour, 2);
        break;
      case KeyItem::dashed:
        svg.line(x, y - 4, x + 18, y - 4, it.colour, 1.5, "stroke-dasharray=\"5 3\"");
        break;
    }
    svg.text(x + 24, y, it.label, 11.5);
    x += 24 + text_width(it.label, 11.5) + 20;
  }
}

void no_data(Svg& svg, double x, double y, const std::string& what) {
  svg.text(x, y, what, 13, "fill=\"#777777\" class=\"no-data\"");
}

bool finite(double v) { return std::isfinite(v); }

void check_same_length(std::size_t a, std::size_t b, const std::string& what) {
  if (a != b)
    throw InputError("plots", what + " (" + std::to_string(a) + " and " + std::to_string(b) + ")");
}

// --- Maps: equal scales on both axes, legend column on the right ---------------

struct MapLayout {
  Area area;
  Axis xa, ya;
  double scale = 1;  ///< pixels per map unit
  double legend_x = 0;
  double height = 0;
};

MapLayout layout_map(const PlotFrame& f, double xmin, double xmax, double ymin, double ymax,
                     double legend_w, double legend_h) {
  MapLayout m;
  const double top = header_height(f) + 8;
  m.ya = detail::linear_axis(ymin, ymax, false, 5);
  m.area.x = left_margin(m.ya);
  const double avail_w = std::max(120.0, f.width - m.area.x - legend_w - 30);
  const double max_h = std::max(240.0, 1.15 * avail_w);
  const double ex = xmax - xmin, ey = ymax - ymin;
  m.scale = std::min(avail_w / ex, max_h / ey);
  m.area.y = top;
  m.area.w = ex * m.scale;
  m.area.h = ey * m.scale;
  // Fewer ticks when their labels would crowd the axis.
  for (int target = 5; target >= 2; --target) {
    m.xa = detail::linear_axis(xmin, xmax, false, target);
    if ((widest(m.xa.labels, 11) + 16) * static_cast<double>(m.xa.ticks.size()) <= m.area.w) break;
  }
  if (m.area.h < 160) m.ya = detail::linear_axis(ymin, ymax, false, 3);
  m.legend_x = m.area.x + m.area.w + 24;
  m.height = std::max(m.area.y + m.area.h + 52, m.area.y + legend_h + 12);
  return m;
}

// Legend title lines at (x, y); returns the y below them.
double legend_title(Svg& svg, double x, double y, const std::string& title, double max_px) {
  for (const auto& line : wrap(title, max_px, 12)) {
    svg.text(x, y + 12, line, 12, "font-weight=\"bold\" class=\"legend-title\"");
    y += 16;
  }
  return y + 4;
}

// North arrow and scale bar stacked in the legend column from y; returns the y below.
double map_furniture(Svg& svg, double x, double y, double width, double scale,
                     const std::string& unit, bool north, bool bar) {
  if (north) {
    detail::draw_north_arrow(svg, x, y);
    y += 50;
  }
  if (bar) y += detail::draw_scale_bar(svg, x + 4, y, width - 30, scale, unit) + 6;
  return y;
}

double furniture_height(bool north, bool bar) { return (north ? 50 : 0) + (bar ? 30 : 0); }

// Histograms of both kinds; `kind` names the figure in data-kind.
std::string histogram_impl(const HistogramPlot& p, const std::string& kind) {
  if (!p.weights.empty())
    check_same_length(p.values.size(), p.weights.size(), "a histogram needs one weight per value");
  const bool log_x = p.log_x && !p.standard_normal;
  std::vector<double> v, w;
  std::size_t left_out = 0;
  for (std::size_t i = 0; i < p.values.size(); ++i) {
    const double x = p.values[i];
    if (!finite(x)) continue;
    if (log_x && x <= 0) {
      ++left_out;
      continue;
    }
    v.push_back(log_x ? std::log10(x) : x);
    if (!p.weights.empty()) {
      if (!(p.weights[i] >= 0) || !finite(p.weights[i]))
        throw InputError("plots", "histogram weights must be finite and non-negative (weight " +
                                      std::to_string(i + 1) + ")");
      w.push_back(p.weights[i]);
    }
  }
  PlotFrame frame = p;
  if (left_out > 0)
    frame.subtitle += (frame.subtitle.empty() ? "" : " \u00b7 ") + std::to_string(left_out) +
                      (left_out == 1 ? " value" : " values") +
                      " \u2264 0 not shown on the log axis";
  Svg svg(frame.title, kind, frame.width, frame.height);
  const double top = detail::draw_header(svg, frame);
  if (v.empty()) {
    no_data(svg, 14, top + 30, "no values to show");
    return svg.finish();
  }

  // Bins of equal width over the data (in log10 units on a log axis).
  const int bins = p.bins > 0 ? p.bins : histogram_bins(v);
  double lo = *std::min_element(v.begin(), v.end()), hi = *std::max_element(v.begin(), v.end());
  if (hi <= lo) lo -= 0.5, hi += 0.5;
  const double width = (hi - lo) / bins;
  std::vector<double> count(bins, 0.0), weighted(bins, 0.0);
  for (std::size_t i = 0; i < v.size(); ++i) {
    const int b = std::clamp(static_cast<int>(std::floor((v[i] - lo) / width)), 0, bins - 1);
    count[b] += 1;
    if (!w.empty()) weighted[b] += w[i];
  }
  std::string y_label = "count";
  const double n = static_cast<double>(v.size());
  if (p.standard_normal) {
    for (double& c : count) c /= n * width;
    y_label = "density";
  } else if (!w.empty()) {
    const double total = std::accumulate(w.begin(), w.end(), 0.0);
    for (double& c : count) c *= 100 / n;
    for (double& c : weighted) c *= total > 0 ? 100 / total : 0;
    y_label = "frequency (%)";
  }
  double top_value = *std::max_element(count.begin(), count.end());
  if (!w.empty())
    top_value = std::max(top_value, *std::max_element(weighted.begin(), weighted.end()));
  if (p.standard_normal) top_value = std::max(top_value, 1 / std::sqrt(2 * kPi));

  auto edge = [&](int i) { return log_x ? std::pow(10.0, lo + i * width) : lo + i * width; };
  const Axis xa = log_x ? detail::log_axis(edge(0), edge(bins))
                        : detail::linear_axis(p.standard_normal ? std::min(lo, -3.0) : lo,
                                              p.standard_normal ? std::max(hi, 3.0) : hi, true);
  const Axis ya = detail::linear_axis(0, top_value, true);
  std::vector<KeyItem> key;
  if (!w.empty())
    key = {{KeyItem::bar, kBarFill, "equal weights"},
           {KeyItem::outline, detail::series_colour(1), p.weights_label}};
  if (p.standard_normal)
    key = {{KeyItem::bar, kBarFill, "standardised errors"},
           {KeyItem::line, kInk, "standard normal density"}};
  Area area;
  area.x = left_margin(ya);
  area.y = top + (key.empty() ? 10 : 30);
  area.w = frame.width - area.x - 20;
  area.h = frame.height - area.y - 52;
  if (!key.empty()) draw_key_row(svg, area.x, top + 12, key);
  detail::draw_axes(svg, area, xa, ya, p.x_label, y_label, true);

  for (int b = 0; b < bins; ++b) {
    if (count[b] <= 0) continue;
    const double x0 = area.px(xa, edge(b)), x1 = area.px(xa, edge(b + 1));
    const double y0 = area.py(ya, count[b]);
    svg.rect(x0, y0, x1 - x0, area.y + area.h - y0, kBarFill,
             "stroke=\"#ffffff\" stroke-width=\"0.7\" class=\"bar\"");
  }
  if (!w.empty()) {  // the weighted histogram as a step outline
    std::vector<double> xs, ys;
    const double base = area.py(ya, 0);
    xs.push_back(area.px(xa, edge(0)));
    ys.push_back(base);
    for (int b = 0; b < bins; ++b) {
      const double y = area.py(ya, weighted[b]);
      xs.push_back(area.px(xa, edge(b)));
      ys.push_back(y);
      xs.push_back(area.px(xa, edge(b + 1)));
      ys.push_back(y);
    }
    xs.push_back(area.px(xa, edge(bins)));
    ys.push_back(base);
    svg.polyline(xs, ys, detail::series_colour(1), 2, "class=\"weighted\"");
  }
  if (p.standard_normal) {
    std::vector<double> xs, ys;
    for (int i = 0; i <= 160; ++i) {
      const double x = xa.lo + (xa.hi - xa.lo) * i / 160.0;
      xs.push_back(area.px(xa, x));
      ys.push_back(area.py(ya, std::exp(-0.5 * x * x) / std::sqrt(2 * kPi)));
    }
    svg.polyline(xs, ys, kInk, 1.6, "class=\"normal-density\"");
  }
  return svg.finish();
}

}  // namespace

// --- 1, 8. Histograms ------------------------------------------------------------

std::string histogram_svg(const HistogramPlot& plot) { return histogram_impl(plot, "histogram"); }

std::string standardised_error_svg(const std::vector<double>& standardised_errors,
                                   const PlotFrame& frame) {
  HistogramPlot h;
  static_cast<PlotFrame&>(h) = frame;
  h.values = standardised_errors;
  h.x_label = "standardised error (error / kriging standard deviation)";
  h.standard_normal = true;
  return histogram_impl(h, "standardised-errors");
}

// --- 2. Scatter ------------------------------------------------------------------

std::string scatter_svg(const ScatterPlot& p) {
  check_same_length(p.x.size(), p.y.size(), "a scatter plot needs as many y as x values");
  std::vector<double> xs, ys;
  for (std::size_t i = 0; i < p.x.size(); ++i)
    if (finite(p.x[i]) && finite(p.y[i])) xs.push_back(p.x[i]), ys.push_back(p.y[i]);
  Svg svg(p.title, "scatter", p.width, p.height);
  const double top = detail::draw_header(svg, p);
  if (xs.empty()) {
    no_data(svg, 14, top + 30, "no values to show");
    return svg.finish();
  }
  auto [xmin, xmax] = std::minmax_element(xs.begin(), xs.end());
  auto [ymin, ymax] = std::minmax_element(ys.begin(), ys.end());
  Axis xa = detail::linear_axis(*xmin, *xmax, true), ya = detail::linear_axis(*ymin, *ymax, true);
  if (p.equal_ranges) {
    xa = ya = detail::linear_axis(std::min(*xmin, *ymin), std::max(*xmax, *ymax), true);
  }
  Area area;
  area.x = left_margin(ya);
  area.y = top + (p.one_to_one ? 30 : 10);
  area.w = p.width - area.x - 20;
  area.h = p.height - area.y - 52;
  if (p.equal_ranges && area.w > area.h) {  // a square area, centred
    area.x += (area.w - area.h) / 2;
    area.w = area.h;
  } else if (p.equal_ranges) {
    area.h = area.w;
  }
  if (p.one_to_one) draw_key_row(svg, area.x, top + 12, {{KeyItem::dashed, "#555555", "1:1 line"}});
  detail::draw_axes(svg, area, xa, ya, p.x_label, p.y_label, true);
  if (p.one_to_one) {
    const double a = std::max(xa.lo, ya.lo), b = std::min(xa.hi, ya.hi);
    if (b > a)
      svg.line(area.px(xa, a), area.py(ya, a), area.px(xa, b), area.py(ya, b), "#555555", 1.3,
               "stroke-dasharray=\"6 4\" class=\"one-to-one\"");
  }
  const std::string fill = detail::series_colour(0);
  for (std::size_t i = 0; i < xs.size(); ++i)
    svg.circle(area.px(xa, xs[i]), area.py(ya, ys[i]), 3.2, fill,
               "fill-opacity=\"0.6\" stroke=\"#ffffff\" stroke-width=\"0.5\" class=\"point\"");
  return svg.finish();
}

// --- 3. Variogram ----------------------------------------------------------------

std::string variogram_svg(const VariogramPlot& p) {
  double xmax = 0, ymax = 0;
  std::int64_t pmax = 0;
  for (const auto& s : p.series) {
    check_same_length(s.distance.size(), s.gamma.size(),
                      "variogram series '" + s.label + "' needs one semivariance per distance");
    if (!s.pairs.empty())
      check_same_length(s.distance.size(), s.pairs.size(),
                        "variogram series '" + s.label + "' needs one pair count per distance");
    check_same_length(s.model_h.size(), s.model_gamma.size(),
                      "the model curve of '" + s.label + "' needs one value per distance");
    for (std::size_t i = 0; i < s.distance.size(); ++i) {
      if (!finite(s.distance[i]) || !finite(s.gamma[i])) continue;
      xmax = std::max(xmax, s.distance[i]);
      ymax = std::max(ymax, s.gamma[i]);
    }
    for (std::size_t i = 0; i < s.model_h.size(); ++i) {
      if (!finite(s.model_h[i]) || !finite(s.model_gamma[i])) continue;
      xmax = std::max(xmax, s.model_h[i]);
      ymax = std::max(ymax, s.model_gamma[i]);
    }
    for (auto n : s.pairs) pmax = std::max(pmax, n);
  }
  if (finite(p.sill)) ymax = std::max(ymax, p.sill);
  Svg svg(p.title, "variogram", p.width, p.height);
  const double top = detail::draw_header(svg, p);
  if (p.series.empty() || xmax <= 0) {
    no_data(svg, 14, top + 30, "no lag classes to show");
    return svg.finish();
  }
  const Axis xa = detail::linear_axis(0, xmax, true);
  const Axis ya = detail::linear_axis(0, ymax > 0 ? ymax : 1, true);

  double legend_w = 110;
  for (const auto& s : p.series) legend_w = std::max(legend_w, 38 + text_width(s.label, 11.5));
  if (finite(p.sill)) legend_w = std::max(legend_w, 38 + text_width(p.sill_label, 11.5));
  legend_w = std::min(legend_w, 200.0);
  Area area;
  area.x = left_margin(ya);
  area.y = top + 10;
  area.w = p.width - area.x - legend_w - 26;
  area.h = p.height - area.y - 52;
  detail::draw_axes(svg, area, xa, ya, p.distance_label, p.gamma_label, true);

  if (finite(p.sill))
    svg.line(area.x, area.py(ya, p.sill), area.x + area.w, area.py(ya, p.sill), "#555555", 1.3,
             "stroke-dasharray=\"6 4\" class=\"sill\"");
  auto radius = [&](std::int64_t n) {
    return pmax > 0 ? 2.6 + 4.4 * std::sqrt(static_cast<double>(std::max<std::int64_t>(n, 0)) /
                                            static_cast<double>(pmax))
                    : 4.0;
  };
  for (std::size_t k = 0; k < p.series.size(); ++k) {
    const auto& s = p.series[k];
    std::vector<double> xs, ys;
    for (std::size_t i = 0; i < s.model_h.size(); ++i) {
      if (!finite(s.model_h[i]) || !finite(s.model_gamma[i])) continue;
      xs.push_back(area.px(xa, s.model_h[i]));
      ys.push_back(area.py(ya, s.model_gamma[i]));
    }
    svg.polyline(xs, ys, detail::series_colour(k), 1.8, "class=\"model\"");
  }
  for (std::size_t k = 0; k < p.series.size(); ++k) {
    const auto& s = p.series[k];
    for (std::size_t i = 0; i < s.distance.size(); ++i) {
      if (!finite(s.distance[i]) || !finite(s.gamma[i])) continue;
      const double x = area.px(xa, s.distance[i]), y = area.py(ya, s.gamma[i]);
      const double r = s.pairs.empty() ? 4.0 : radius(s.pairs[i]);
      detail::marker(svg, k, x, y, r, detail::series_colour(k),
                     "stroke=\"#ffffff\" stroke-width=\"0.8\" class=\"marker\"");
      if (p.pair_labels && !s.pairs.empty())
        svg.text(x + r + 2, y - r, std::to_string(s.pairs[i]), 9,
                 "fill=\"#555555\" class=\"pair-count\"");
    }
  }

  // Legend column: one entry per direction, the sill line, a key to marker sizes.
  const double lx = area.x + area.w + 22;
  double ly = area.y + 6;
  for (std::size_t k = 0; k < p.series.size(); ++k) {
    const auto& s = p.series[k];
    if (!s.model_h.empty()) svg.line(lx, ly, lx + 26, ly, detail::series_colour(k), 1.8);
    detail::marker(svg, k, lx + 13, ly, 4, detail::series_colour(k),
                   "stroke=\"#ffffff\" stroke-width=\"0.8\"");
    svg.text(lx + 34, ly + 4, s.label, 11.5);
    ly += 20;
  }
  if (finite(p.sill)) {
    svg.line(lx, ly, lx + 26, ly, "#555555", 1.3, "stroke-dasharray=\"6 4\"");
    svg.text(lx + 34, ly + 4, p.sill_label, 11.5);
    ly += 20;
  }
  if (pmax > 0) {
    ly += 8;
    svg.text(lx, ly + 4, "pairs per lag", 11, "fill=\"#444444\"");
    ly += 18;
    const double big = nice_length(static_cast<double>(pmax));
    for (double n : {big, nice_length(big / 8)}) {
      if (n < 1) continue;
      const double r = radius(static_cast<std::int64_t>(n));
      svg.circle(lx + 13, ly, r, "#9a9a9a");
      svg.text(lx + 34, ly + 4, format_number(n, 1), 11);
      ly += std::max(20.0, 2 * r + 6);
    }
  }
  return svg.finish();
}

// --- 4. Sample locations ---------------------------------------------------------

std::string location_map_svg(const LocationMapPlot& p) {
  check_same_length(p.x.size(), p.y.size(), "a location map needs as many y as x coordinates");
  check_same_length(p.x.size(), p.value.size(), "a location map needs one value per location");
  std::vector<std::size_t> idx;
  double xmin = 0, xmax = 0, ymin = 0, ymax = 0;
  std::vector<double> sorted;
  for (std::size_t i = 0; i < p.x.size(); ++i) {
    if (!finite(p.x[i]) || !finite(p.y[i])) continue;
    if (idx.empty()) xmin = xmax = p.x[i], ymin = ymax = p.y[i];
    xmin = std::min(xmin, p.x[i]), xmax = std::max(xmax, p.x[i]);
    ymin = std::min(ymin, p.y[i]), ymax = std::max(ymax, p.y[i]);
    idx.push_back(i);
    if (finite(p.value[i])) sorted.push_back(p.value[i]);
  }
  if (idx.empty()) {
    Svg svg(p.title, "location-map", p.width, p.height);
    no_data(svg, 14, detail::draw_header(svg, p) + 30, "no locations to show");
    return svg.finish();
  }
  const double pad =
      0.04 * std::max({xmax - xmin, ymax - ymin, 0.0}) + (xmax == xmin && ymax == ymin ? 1 : 0);
  xmin -= pad, xmax += pad, ymin -= pad, ymax += pad;
  if (xmax - xmin < 1e-9 * (ymax - ymin)) xmin -= (ymax - ymin) / 10, xmax += (ymax - ymin) / 10;
  if (ymax - ymin < 1e-9 * (xmax - xmin)) ymin -= (xmax - xmin) / 10, ymax += (xmax - xmin) / 10;

  // Colour classes: edges e0 < e1 < ... < eK (ties of quantiles merged).
  std::sort(sorted.begin(), sorted.end());
  std::vector<double> edges;
  const int k = std::clamp(p.class_count, 2, 9);
  if (!sorted.empty()) {
    for (int j = 0; j <= k; ++j) {
      const double f = static_cast<double>(j) / k;
      edges.push_back(p.classes == ColourClasses::quantile
                          ? quantile_sorted(sorted, f)
                          : sorted.front() + f * (sorted.back() - sorted.front()));
    }
    edges.erase(std::unique(edges.begin(), edges.end()), edges.end());
  }
  const std::size_t classes = edges.size() > 1 ? edges.size() - 1 : (sorted.empty() ? 0 : 1);
  auto class_of = [&](double v) -> std::size_t {
    if (edges.size() < 2) return 0;
    return static_cast<std::size_t>(std::upper_bound(edges.begin() + 1, edges.end() - 1, v) -
                                    (edges.begin() + 1));
  };
  auto class_colour = [&](std::size_t c) {
    return hex_colour(ramp_colour(ColourRamp::sequential,
                                  classes > 1 ? static_cast<double>(c) / (classes - 1) : 0.5));
  };
  std::vector<std::string> labels;
  if (edges.size() >= 2) {
    double gap = edges.back() - edges.front();
    for (std::size_t j = 1; j < edges.size(); ++j) gap = std::min(gap, edges[j] - edges[j - 1]);
    const double step = std::pow(10.0, std::floor(std::log10(gap)));
    for (std::size_t c = 0; c < classes; ++c)
      labels.push_back(format_number(edges[c], step) + " \u2013 " +
                       format_number(edges[c + 1], step));
  } else if (!sorted.empty()) {
    labels.push_back(format_number(sorted.front(), 0));
  }
  const bool missing = sorted.size() < idx.size();
  if (missing) labels.push_back("no value");

  const double legend_w = std::clamp(widest(labels, 11.5) + 34, 140.0, 220.0);
  const auto title_lines = wrap(p.value_label, legend_w - 10, 12).size();
  const double legend_h = 16.0 * title_lines + 4 + 19.0 * labels.size() + 12 +
                          furniture_height(p.north_arrow, p.scale_bar);
  const MapLayout m = layout_map(p, xmin, xmax, ymin, ymax, legend_w, legend_h);
  Svg svg(p.title, "location-map", p.width, m.height);
  detail::draw_header(svg, p);
  detail::draw_axes(svg, m.area, m.xa, m.ya, p.x_label, p.y_label, false);

  // Highest values drawn last so that hot spots stay visible; no-value points first.
  std::stable_sort(idx.begin(), idx.end(), [&](std::size_t a, std::size_t b) {
    const double va = p.value[a], vb = p.value[b];
    if (!finite(va) || !finite(vb)) return !finite(va) && finite(vb);
    return va < vb;
  });
  for (std::size_t i : idx) {
    const double x = m.area.px(m.xa, p.x[i]), y = m.area.py(m.ya, p.y[i]);
    if (finite(p.value[i]))
      svg.circle(x, y, 3.8, class_colour(class_of(p.value[i])),
                 "stroke=\"#333333\" stroke-width=\"0.6\" class=\"sample\"");
    else
      svg.circle(x, y, 3.4, "none",
                 "stroke=\"#333333\" stroke-width=\"1\" class=\"sample no-value\"");
  }
  svg.rect(m.area.x, m.area.y, m.area.w, m.area.h, "none",
           "stroke=\"#444444\" stroke-width=\"1\" class=\"map-frame\"");

  double ly = legend_title(svg, m.legend_x, m.area.y, p.value_label, legend_w - 10);
  for (std::size_t j = 0; j < labels.size(); ++j) {  // highest class on top, as on colour bars
    const bool hollow = missing && j + 1 == labels.size();
    const std::size_t c = hollow ? j : classes - 1 - j;
    if (hollow)
      svg.circle(m.legend_x + 7, ly + 6, 4.5, "none", "stroke=\"#333333\" stroke-width=\"1\"");
    else
      svg.circle(m.legend_x + 7, ly + 6, 5, class_colour(c),
                 "stroke=\"#333333\" stroke-width=\"0.6\" class=\"legend-class\"");
    svg.text(m.legend_x + 20, ly + 10, labels[c], 11.5);
    ly += 19;
  }
  map_furniture(svg, m.legend_x, ly + 12, legend_w, m.scale, p.map_unit, p.north_arrow,
                p.scale_bar);
  return svg.finish();
}

// --- 5, 6. Raster maps -------------------------------------------------------------

std::string raster_map_svg(const RasterMapPlot& p) {
  const auto& gt = p.grid.geotransform;
  if (gt[2] != 0 || gt[4] != 0 || !(gt[1] > 0) || !(gt[5] < 0))
    throw InputError("plots",
                     "raster maps need a north-up grid (geotransform {xmin, dx, 0, ymax, 0, -dy})");
  const RasterGrid g = decimate(p.grid, p.max_pixels);
  const double xmin = gt[0], xmax = gt[0] + gt[1] * static_cast<double>(p.grid.nx);
  const double ymax = gt[3], ymin = gt[3] + gt[5] * static_cast<double>(p.grid.ny);

  // Colour range.
  double lo = INFINITY, hi = -INFINITY;
  bool any_nodata = false;
  for (double v : g.values) {
    if (std::isnan(v) || v == g.nodata) {
      any_nodata = true;
      continue;
    }
    lo = std::min(lo, v), hi = std::max(hi, v);
  }
  const bool any_valid = lo <= hi;
  if (!any_valid) lo = 0, hi = 1;
  if (p.ramp == ColourRamp::diverging && std::isnan(p.value_min) && std::isnan(p.value_max)) {
    const double a = std::max(std::abs(lo), std::abs(hi));
    lo = -a, hi = a;
  }
  if (finite(p.value_min)) lo = p.value_min;
  if (finite(p.value_max)) hi = p.value_max;
  if (p.ramp == ColourRamp::probability) lo = 0, hi = 1;
  if (!(hi > lo)) {
    const double d = lo == 0 ? 0.5 : 0.05 * std::abs(lo);
    lo -= d, hi += d;
  }

  // The image: one pixel per (decimated) cell, no data transparent.
  std::vector<std::uint8_t> rgba(static_cast<std::size_t>(g.nx * g.ny) * 4, 0);
  for (std::size_t i = 0; i < g.values.size(); ++i) {
    const double v = g.values[i];
    if (std::isnan(v) || v == g.nodata) continue;
    const Rgb c = ramp_colour(p.ramp, (v - lo) / (hi - lo));
    rgba[4 * i] = c.r, rgba[4 * i + 1] = c.g, rgba[4 * i + 2] = c.b, rgba[4 * i + 3] = 255;
  }
  const std::string uri =
      "data:image/png;base64," +
      detail::base64(detail::encode_png(static_cast<int>(g.nx), static_cast<int>(g.ny), rgba));

  const double legend_w = 140;
  const auto title_lines = wrap(p.value_label, legend_w - 10, 12).size();
  const double furniture = furniture_height(p.north_arrow, p.scale_bar);
  const double legend_fixed = 16.0 * title_lines + 4 + (any_nodata ? 26 : 0) + 16 + furniture;
  const bool classes = p.ramp == ColourRamp::probability;
  const double classes_h = 21.0 * static_cast<double>(probability_breaks().size() + 1) + 10;
  MapLayout m = layout_map(p, xmin, xmax, ymin, ymax, legend_w, legend_fixed + classes_h);
  // The colour bar takes the height the map leaves, within 140..240 px; the
  // figure grows when the legend needs more than the map.
  const double bar_h = std::clamp(m.area.h - legend_fixed, 140.0, 240.0);
  if (!classes) m.height = std::max(m.height, m.area.y + legend_fixed + bar_h + 12);
  Svg svg(p.title, "raster-map", p.width, m.height);
  detail::draw_header(svg, p);
  if (any_nodata)  // shows through the transparent no-data pixels
    detail::hatch(svg, m.area.x, m.area.y, m.area.w, m.area.h, "#b0b0b0",
                  "class=\"no-data-hatch\"");
  svg.raw("<image x=\"" + num(m.area.x) + "\" y=\"" + num(m.area.y) + "\" width=\"" +
          num(m.area.w) + "\" height=\"" + num(m.area.h) +
          "\" preserveAspectRatio=\"none\" image-rendering=\"optimizeSpeed\" "
          "style=\"image-rendering:pixelated\" class=\"raster\" xlink:href=\"" +
          uri + "\"/>");
  detail::draw_axes(svg, m.area, m.xa, m.ya, p.x_label, p.y_label, false);
  for (std::size_t i = 0; i < std::min(p.sample_x.size(), p.sample_y.size()); ++i) {
    const double x = p.sample_x[i], y = p.sample_y[i];
    if (!(x >= xmin && x <= xmax && y >= ymin && y <= ymax)) continue;
    svg.circle(m.area.px(m.xa, x), m.area.py(m.ya, y), 2.2, "#ffffff",
               "stroke=\"#222222\" stroke-width=\"0.8\" class=\"sample\"");
  }
  svg.rect(m.area.x, m.area.y, m.area.w, m.area.h, "none",
           "stroke=\"#444444\" stroke-width=\"1\" class=\"map-frame\"");

  double ly = legend_title(svg, m.legend_x, m.area.y, p.value_label, legend_w - 10);
  const double bx = m.legend_x, bw = 16;
  if (classes) {
    // Classes as boxes of equal height, highest on top, with their bounds.
    const auto& b = probability_breaks();
    std::vector<std::string> labels{"< " + format_number(b.front(), 0.1)};
    for (std::size_t c = 0; c + 1 < b.size(); ++c)
      labels.push_back(format_number(b[c], 0.1) + " \u2013 " + format_number(b[c + 1], 0.1));
    labels.push_back("\u2265 " + format_number(b.back(), 0.1));
    for (std::size_t c = labels.size(); c-- > 0;) {
      const double t = c == 0 ? 0.0 : b[c - 1];
      svg.rect(bx, ly, bw, 18, hex_colour(ramp_colour(p.ramp, t)),
               "stroke=\"#444444\" stroke-width=\"0.8\" class=\"colour-class\"");
      svg.text(bx + bw + 7, ly + 13, labels[c], 11, "class=\"colour-bar-label\"");
      ly += 21;
    }
    ly += 10;
  } else {
    // Colour bar: the ramp from lo (bottom) to hi (top), ticks on its right.
    constexpr int steps = 96;
    for (int k = 0; k < steps; ++k) {
      const double y = ly + bar_h * (1 - (k + 1.0) / steps);
      svg.rect(bx, y, bw, bar_h / steps + 0.6, hex_colour(ramp_colour(p.ramp, (k + 0.5) / steps)),
               "class=\"colour-bar\"");
    }
    svg.rect(bx, ly, bw, bar_h, "none", "stroke=\"#444444\" stroke-width=\"0.8\"");
    const Axis cb = detail::linear_axis(lo, hi, false, 5);
    for (std::size_t t = 0; t < cb.ticks.size(); ++t) {
      const double y = ly + bar_h * (1 - cb.frac(cb.ticks[t]));
      svg.line(bx + bw, y, bx + bw + 4, y, "#444444", 1);
      svg.text(bx + bw + 7, y + 4, cb.labels[t], 11, "class=\"colour-bar-label\"");
    }
    ly += bar_h + 16;
  }
  if (any_nodata) {
    detail::hatch(svg, bx, ly, bw, 12, "#b0b0b0");
    svg.rect(bx, ly, bw, 12, "none", "stroke=\"#888888\" stroke-width=\"0.8\"");
    svg.text(bx + bw + 7, ly + 10, "no estimate", 11);
    ly += 26;
  }
  map_furniture(svg, m.legend_x, ly, legend_w, m.scale, p.map_unit, p.north_arrow, p.scale_bar);
  if (!any_valid) no_data(svg, m.area.x + 10, m.area.y + 24, "no cells to show");
  return svg.finish();
}

// --- 7. Two y axes ---------------------------------------------------------------

std::string dual_axis_svg(const DualAxisPlot& p) {
  check_same_length(p.x.size(), p.left.size(), "a dual-axis chart needs one left value per x");
  check_same_length(p.x.size(), p.right.size(), "a dual-axis chart needs one right value per x");
  Svg svg(p.title, "dual-axis", p.width, p.height);
  const double top = detail::draw_header(svg, p);
  auto range = [&](const std::vector<double>& v, bool from_zero, double& a, double& b) {
    a = INFINITY, b = -INFINITY;
    for (std::size_t i = 0; i < v.size(); ++i)
      if (finite(v[i]) && finite(p.x[i])) a = std::min(a, v[i]), b = std::max(b, v[i]);
    if (from_zero && a <= b) a = std::min(a, 0.0), b = std::max(b, 0.0);
    return a <= b;
  };
  double x0, x1, l0, l1, r0, r1;
  const bool ok_x = range(p.x, false, x0, x1);
  const bool ok_l = range(p.left, p.left_from_zero, l0, l1);
  const bool ok_r = range(p.right, p.right_from_zero, r0, r1);
  if (!ok_x || (!ok_l && !ok_r)) {
    no_data(svg, 14, top + 30, "no values to show");
    return svg.finish();
  }
  if (!ok_l) l0 = 0, l1 = 1;
  if (!ok_r) r0 = 0, r1 = 1;
  const Axis xa = detail::linear_axis(x0, x1, true);
  const Axis la = detail::linear_axis(l0, l1, true), ra = detail::linear_axis(r0, r1, true);
  const std::string lc = detail::series_colour(0), rc = detail::series_colour(1);
  Area area;
  area.x = left_margin(la);
  area.y = top + 30;
  area.w = p.width - area.x - (36 + widest(ra.labels, 11));
  area.h = p.height - area.y - 52;
  draw_key_row(svg, area.x, top + 12,
               {{KeyItem::line, lc, p.left_label}, {KeyItem::dashed, rc, p.right_label}});
  detail::draw_axes(svg, area, xa, la, p.x_label, p.left_label, true, lc);
  detail::draw_right_axis(svg, area, ra, p.right_label, rc);

  auto draw = [&](const std::vector<double>& v, const Axis& a, const std::string& colour,
                  const std::string& extra, const std::string& cls, std::size_t shape) {
    std::vector<double> xs, ys;
    auto flush = [&] {  // a NaN ends a run: the line has a gap there
      svg.polyline(xs, ys, colour, 2, extra + " class=\"" + cls + "-line\"");
      xs.clear(), ys.clear();
    };
    for (std::size_t i = 0; i < v.size(); ++i) {
      if (!finite(v[i]) || !finite(p.x[i])) {
        flush();
        continue;
      }
      xs.push_back(area.px(xa, p.x[i]));
      ys.push_back(area.py(a, v[i]));
    }
    flush();
    if (v.size() <= 40)
      for (std::size_t i = 0; i < v.size(); ++i)
        if (finite(v[i]) && finite(p.x[i]))
          detail::marker(svg, shape, area.px(xa, p.x[i]), area.py(a, v[i]), 3.2, colour,
                         "stroke=\"#ffffff\" stroke-width=\"0.7\" class=\"" + cls + "-marker\"");
  };
  if (ok_l) draw(p.left, la, lc, "", "left", 0);
  if (ok_r) draw(p.right, ra, rc, "stroke-dasharray=\"7 4\"", "right", 1);
  return svg.finish();
}

}  // namespace sillstone
