// The report's figures: SVG structure, marks counted against known inputs,
// tick and bin rules, colour-ramp lightness, and the embedded PNG (decoded
// with GDAL's own base64 decoder and PNG driver, not ours).
#include <catch2/catch.hpp>

#include <cpl_string.h>
#include <cpl_vsi.h>
#include <gdal_priv.h>

#include <cmath>
#include <map>
#include <memory>
#include <random>
#include <regex>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "sillstone/error.hpp"
#include "sillstone/plots.hpp"

using namespace sillstone;

namespace {

// --- A minimal XML reader, enough for our SVG ---------------------------------------

struct Element {
  std::string name;
  std::map<std::string, std::string> attrs;
  std::string text;  ///< character data up to the next tag
};

// Every tag of `svg`, in order; closing tags have names starting with '/'.
std::vector<Element> tags(const std::string& svg) {
  static const std::regex attr(R"re(([A-Za-z_:][-A-Za-z0-9_:.]*)="([^"<]*)")re");
  std::vector<Element> out;
  std::size_t pos = 0;
  while ((pos = svg.find('<', pos)) != std::string::npos) {
    const std::size_t end = svg.find('>', pos);
    if (end == std::string::npos) break;
    const std::string body = svg.substr(pos + 1, end - pos - 1);
    Element e;
    std::size_t i = 0;
    if (!body.empty() && body[0] == '/') e.name = "/", i = 1;
    while (i < body.size() && body[i] != ' ' && body[i] != '/') e.name += body[i++];
    for (std::sregex_iterator it(body.begin(), body.end(), attr), stop; it != stop; ++it)
      e.attrs[(*it)[1]] = (*it)[2];
    const std::size_t next = svg.find('<', end);
    e.text = svg.substr(end + 1, (next == std::string::npos ? svg.size() : next) - end - 1);
    if (!body.empty() && body.back() == '/') e.name += "/";  // self-closing
    out.push_back(e);
    pos = end + 1;
  }
  return out;
}

// Balanced tags under one <svg> root, and no raw '&' or '<' in text or attributes.
bool well_formed(const std::string& svg, std::string* why) {
  std::vector<std::string> stack;
  int roots = 0;
  for (const Element& e : tags(svg)) {
    if (e.name.empty()) return *why = "empty tag", false;
    if (e.name[0] == '/') {
      if (stack.empty() || stack.back() != e.name.substr(1))
        return *why = "unbalanced </" + e.name.substr(1) + ">", false;
      stack.pop_back();
    } else if (e.name.back() != '/') {
      if (stack.empty()) ++roots;
      stack.push_back(e.name);
    } else if (stack.empty()) {
      return *why = "element outside the root", false;
    }
    static const std::regex bad_amp("&(?!(amp|lt|gt|quot|apos|#[0-9]+);)");
    if (std::regex_search(e.text, bad_amp)) return *why = "raw & in text", false;
    for (const auto& [k, v] : e.attrs)
      if (std::regex_search(v, bad_amp)) return *why = "raw & in attribute " + k, false;
  }
  if (!stack.empty()) return *why = "unclosed <" + stack.back() + ">", false;
  if (roots != 1) return *why = std::to_string(roots) + " root elements", false;
  if (svg.rfind("<svg", 0) != 0) return *why = "does not start with <svg", false;
  return true;
}

void check_figure(const std::string& svg, const std::string& title) {
  std::string why;
  INFO(why);
  REQUIRE(well_formed(svg, &why));
  const auto t = tags(svg);
  REQUIRE(t.size() > 2);
  CHECK(t[0].name == "svg");
  CHECK(t[0].attrs.at("role") == "img");
  CHECK(t[0].attrs.at("aria-label") == title);
  CHECK(t[1].name == "title");
  CHECK(t[1].text == title);
  CHECK(svg.find("<script") == std::string::npos);
  CHECK(svg.find("<style") == std::string::npos);
  CHECK(svg.find(" id=") == std::string::npos);  // figures share one HTML page
  for (std::size_t at = svg.find("http"); at != std::string::npos; at = svg.find("http", at + 1))
    CHECK(svg.compare(at, 18, "http://www.w3.org/") == 0);  // namespaces only, nothing to fetch
}

std::vector<Element> with_class(const std::string& svg, const std::string& cls) {
  std::vector<Element> out;
  for (auto& e : tags(svg)) {
    auto it = e.attrs.find("class");
    if (it == e.attrs.end()) continue;
    std::set<std::string> classes;
    std::istringstream words(it->second);
    for (std::string w; words >> w;) classes.insert(w);
    if (classes.count(cls)) out.push_back(e);
  }
  return out;
}

bool has_text(const std::string& svg, const std::string& text) {
  for (const auto& e : tags(svg))
    if (e.name == "text" && e.text == text) return true;
  return false;
}

// Decodes the single PNG data URI of a figure with GDAL's base64 decoder.
std::string png_of(const std::string& svg) {
  const std::string prefix = "data:image/png;base64,";
  const std::size_t a = svg.find(prefix);
  REQUIRE(a != std::string::npos);
  const std::size_t b = svg.find('"', a);
  std::string text = svg.substr(a + prefix.size(), b - a - prefix.size());
  std::vector<GByte> buf(text.begin(), text.end());
  buf.push_back(0);
  const int n = CPLBase64DecodeInPlace(buf.data());
  return std::string(reinterpret_cast<const char*>(buf.data()), static_cast<std::size_t>(n));
}

std::uint32_t big_endian(const std::string& s, std::size_t at) {
  std::uint32_t v = 0;
  for (std::size_t i = 0; i < 4; ++i) v = (v << 8) | static_cast<unsigned char>(s[at + i]);
  return v;
}

// Reads the PNG's RGBA bands back through GDAL.
std::vector<std::vector<GByte>> png_bands(const std::string& png, int& w, int& h) {
  GDALAllRegister();
  const std::string name = "/vsimem/plots_test.png";
  VSILFILE* f = VSIFileFromMemBuffer(
      name.c_str(), reinterpret_cast<GByte*>(const_cast<char*>(png.data())), png.size(), FALSE);
  VSIFCloseL(f);
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(name.c_str(), GDAL_OF_RASTER));
  REQUIRE(ds);
  w = ds->GetRasterXSize();
  h = ds->GetRasterYSize();
  REQUIRE(ds->GetRasterCount() == 4);
  std::vector<std::vector<GByte>> bands(4, std::vector<GByte>(static_cast<std::size_t>(w) * h));
  for (int b = 0; b < 4; ++b)
    REQUIRE(ds->GetRasterBand(b + 1)->RasterIO(GF_Read, 0, 0, w, h, bands[b].data(), w, h, GDT_Byte,
                                               0, 0, nullptr) == CE_None);
  ds.reset();
  VSIUnlink(name.c_str());
  return bands;
}

RasterGrid ramp_grid(std::int64_t nx, std::int64_t ny) {
  RasterGrid g;
  g.nx = nx;
  g.ny = ny;
  g.geotransform = {1000, 10, 0, 5000, 0, -10};
  for (std::int64_t i = 0; i < nx * ny; ++i) g.values.push_back(static_cast<double>(i));
  return g;
}

bool is_125(double step) {  // 1, 2 or 5 x 10^k
  const double m = step / std::pow(10.0, std::floor(std::log10(step) + 1e-12));
  return std::abs(m - 1) < 1e-9 || std::abs(m - 2) < 1e-9 || std::abs(m - 5) < 1e-9;
}

}  // namespace

// --- Ticks, numbers, bins ---------------------------------------------------------

TEST_CASE("nice ticks: steps of 1, 2 or 5 x 10^k covering the data", "[plots]") {
  struct Case {
    double lo, hi, step, first, last;
  };
  // Worked by hand from the rule (closest to 5 intervals, then the tighter axis).
  for (const Case c : {Case{0, 97, 20, 0, 100}, Case{0.013, 0.087, 0.02, 0, 0.1},
                       Case{5712035, 5714980, 500, 5712000, 5715000}, Case{-3.2, 2.7, 2, -4, 4},
                       Case{1, 9, 2, 0, 10}}) {
    INFO(c.lo << " .. " << c.hi);
    const AxisTicks t = nice_ticks(c.lo, c.hi);
    CHECK(t.step == Approx(c.step));
    CHECK(t.lo == Approx(c.first));
    CHECK(t.hi == Approx(c.last));
    CHECK(t.values.front() == Approx(t.lo));
    CHECK(t.values.back() == Approx(t.hi));
  }
  // Properties on random ranges over many magnitudes (fixed seed).
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> u(-1, 1);
  for (int i = 0; i < 500; ++i) {
    const double scale = std::pow(10.0, 8 * u(rng));
    double a = u(rng) * scale, b = a + std::abs(u(rng)) * scale + 1e-12 * std::abs(a);
    const AxisTicks t = nice_ticks(a, b);
    INFO(a << " .. " << b << " step " << t.step);
    REQUIRE(is_125(t.step));
    CHECK(t.lo <= a);
    CHECK(t.hi >= b);
    const double n = (t.hi - t.lo) / t.step;
    CHECK(n >= 2);
    CHECK(n <= 10);
    CHECK(std::abs(n - std::round(n)) < 1e-6);
    CHECK(t.values.size() == static_cast<std::size_t>(std::round(n)) + 1);
  }
  const AxisTicks same = nice_ticks(42, 42);
  CHECK(same.lo < 42);
  CHECK(same.hi > 42);
  const AxisTicks swapped = nice_ticks(10, 0);
  CHECK(swapped.lo == 0);
  CHECK(swapped.hi == 10);
}

TEST_CASE("tick labels: decimals for the step, thousands grouped, no exponent", "[plots]") {
  const std::string g = "\u202f";  // narrow no-break space
  CHECK(format_number(5712000, 500) == "5" + g + "712" + g + "000");
  CHECK(format_number(-25000, 5000) == "-25" + g + "000");
  CHECK(format_number(2500, 500) == "2500");  // four digits stay together
  CHECK(format_number(0.1 + 0.2, 0.1) == "0.3");
  CHECK(format_number(0.05, 0.01) == "0.05");
  CHECK(format_number(-1e-17, 0.1) == "0.0");
  CHECK(format_number(12345.5, 0.5) == "12" + g + "345.5");
  CHECK(format_number(3e11, 1e11) == "300" + g + "000" + g + "000" + g + "000");
  CHECK(format_number(1.5e-8, 5e-9).find("e-08") != std::string::npos);
}

TEST_CASE("scale bar lengths are the largest 1, 2 or 5 x 10^k that fit", "[plots]") {
  CHECK(nice_length(730) == 500);
  CHECK(nice_length(1999) == 1000);
  CHECK(nice_length(2000) == 2000);
  CHECK(nice_length(0.37) == Approx(0.2));
  CHECK(nice_length(0) == 0);
}

TEST_CASE("histogram bins follow Freedman-Diaconis, clamped to 5..50", "[plots]") {
  // 1..1000: IQR (type 7) = 750.25 - 250.75 = 499.5, width 2 * 499.5 / 1000^(1/3)
  // = 99.9, range 999 -> 10 bins.
  std::vector<double> v;
  for (int i = 1; i <= 1000; ++i) v.push_back(i);
  CHECK(histogram_bins(v) == 10);
  // 8 values 1..8: IQR 3.5, width 7 / 2 = 3.5, range 7 -> 2 bins, raised to 5.
  CHECK(histogram_bins({1, 2, 3, 4, 5, 6, 7, 8}) == 5);
  // A tight middle and far outliers: FD asks for thousands of bins; capped at 50.
  std::vector<double> w(1000, 0.0);
  for (int i = 0; i < 1000; ++i) w[i] = 1 + 1e-3 * i;
  w.push_back(1e6);
  CHECK(histogram_bins(w) == 50);
  CHECK(histogram_bins({3, 3, 3}) == 1);
  CHECK(histogram_bins({NAN, 1, 2, NAN}) == 5);
}

// --- Colour ------------------------------------------------------------------------

TEST_CASE("the sequential ramp rises in lightness, so it prints in grey", "[plots]") {
  double previous = -1;
  for (int i = 0; i <= 10; ++i) {
    const double y = relative_luminance(ramp_colour(ColourRamp::sequential, i / 10.0));
    INFO("t = " << i / 10.0 << " luminance " << y);
    CHECK(y > previous + 0.01);  // each tenth visibly lighter than the last
    previous = y;
  }
  for (int i = 1; i <= 200; ++i)  // finer: never darker at any step
    CHECK(relative_luminance(ramp_colour(ColourRamp::sequential, i / 200.0)) >=
          relative_luminance(ramp_colour(ColourRamp::sequential, (i - 1) / 200.0)));
  const double dark = relative_luminance(ramp_colour(ColourRamp::sequential, 0));
  const double pale = relative_luminance(ramp_colour(ColourRamp::sequential, 1));
  CHECK((pale + 0.05) / (dark + 0.05) > 8);  // WCAG contrast ratio of the two ends
  CHECK(ramp_colour(ColourRamp::sequential, -3).r == ramp_colour(ColourRamp::sequential, 0).r);
}

TEST_CASE("the diverging ramp is lightest at its centre", "[plots]") {
  auto y = [](double t) { return relative_luminance(ramp_colour(ColourRamp::diverging, t)); };
  for (int i = 1; i <= 5; ++i) CHECK(y(i / 10.0) > y((i - 1) / 10.0));
  for (int i = 6; i <= 10; ++i) CHECK(y(i / 10.0) < y((i - 1) / 10.0));
  const Rgb low = ramp_colour(ColourRamp::diverging, 0),
            high = ramp_colour(ColourRamp::diverging, 1);
  CHECK(low.b > low.r);    // blue arm
  CHECK(high.r > high.b);  // red-brown arm
}

TEST_CASE("the probability ramp has four classes split at 0.1, 0.5, 0.9", "[plots]") {
  REQUIRE(probability_breaks() == std::vector<double>{0.1, 0.5, 0.9});
  auto y = [](double t) { return relative_luminance(ramp_colour(ColourRamp::probability, t)); };
  CHECK(y(0.0) == y(0.099));
  CHECK(y(0.1) == y(0.49));
  CHECK(y(0.5) == y(0.89));
  CHECK(y(0.9) == y(1.0));
  CHECK(y(0.05) - y(0.3) > 0.1);  // each class clearly darker than the one below
  CHECK(y(0.3) - y(0.7) > 0.1);
  CHECK(y(0.7) - y(0.95) > 0.05);
  CHECK(hex_colour(Rgb{255, 0, 16}) == "#ff0010");
}

// --- Figures ------------------------------------------------------------------------

TEST_CASE("histogram: one bar per non-empty bin, labelled axes", "[plots]") {
  HistogramPlot h;
  h.title = "Zinc & lead <topsoil>";
  h.x_label = "zinc (mg/kg)";
  for (int i = 0; i < 100; ++i) h.values.push_back(i);
  h.bins = 10;
  std::string svg = histogram_svg(h);
  check_figure(svg, "Zinc &amp; lead &lt;topsoil&gt;");
  CHECK(with_class(svg, "bar").size() == 10);
  CHECK(has_text(svg, "zinc (mg/kg)"));
  CHECK(has_text(svg, "count"));
  const auto bars = with_class(svg, "bar");
  for (const auto& b : bars) CHECK(b.attrs.at("height") == bars[0].attrs.at("height"));

  // Two clusters: the eight empty bins between them draw nothing.
  h.values = {0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 90, 91, 92, 93, 94, 95, 96, 97, 98, 99};
  svg = histogram_svg(h);
  CHECK(with_class(svg, "bar").size() == 2);
  CHECK(with_class(svg, "weighted").empty());
}

TEST_CASE("histogram: a weighted outline in percent, and a log axis", "[plots]") {
  HistogramPlot h;
  h.title = "Lead";
  h.x_label = "lead (mg/kg)";
  h.values = {-1, 0, 2, 5, 8, 20, 60, 150, 400, 1200};
  h.weights = {1, 1, 1, 1, 1, 0.5, 0.5, 0.2, 0.2, 0.1};
  h.log_x = true;
  const std::string svg = histogram_svg(h);
  check_figure(svg, "Lead");
  CHECK(with_class(svg, "weighted").size() == 1);
  CHECK(has_text(svg, "frequency (%)"));
  CHECK(has_text(svg, "declustered"));
  CHECK(svg.find("2 values \u2264 0 not shown") != std::string::npos);
  CHECK(has_text(svg, "10"));  // decade ticks
  CHECK(has_text(svg, "100"));
  h.weights.pop_back();
  CHECK_THROWS_AS(histogram_svg(h), InputError);
}

TEST_CASE("standardised errors: density bars under the standard normal curve", "[plots]") {
  PlotFrame f;
  f.title = "Standardised errors";
  const std::string svg = standardised_error_svg({-0.8, -0.2, 0.1, 0.3, 0.9, NAN}, f);
  check_figure(svg, "Standardised errors");
  CHECK(tags(svg)[0].attrs.at("data-kind") == "standardised-errors");
  CHECK(with_class(svg, "normal-density").size() == 1);
  CHECK(has_text(svg, "density"));
  CHECK(has_text(svg, "-3"));  // the axis covers -3..3 whatever the data
  CHECK(has_text(svg, "3"));
}

TEST_CASE("scatter: one point per finite pair, a 1:1 line, equal ranges", "[plots]") {
  ScatterPlot s;
  s.title = "Observed and estimated";
  s.x_label = "observed (mg/kg)";
  s.y_label = "estimated (mg/kg)";
  s.x = {1, 2, 3, 4, NAN, 60};
  s.y = {2, 1, 4, 3, 5, 10};
  std::string svg = scatter_svg(s);
  check_figure(svg, "Observed and estimated");
  CHECK(with_class(svg, "point").size() == 5);
  CHECK(with_class(svg, "one-to-one").empty());
  CHECK(has_text(svg, "observed (mg/kg)"));
  CHECK(has_text(svg, "estimated (mg/kg)"));

  s.one_to_one = s.equal_ranges = true;
  svg = scatter_svg(s);
  CHECK(with_class(svg, "one-to-one").size() == 1);
  // Equal ranges: the y axis carries the same tick labels as the x axis.
  std::multiset<std::string> middle, end;
  for (const auto& e : tags(svg)) {
    if (e.name != "text") continue;
    auto a = e.attrs.find("text-anchor");
    if (a == e.attrs.end()) continue;
    if (a->second == "middle" && e.attrs.count("class") == 0) middle.insert(e.text);
    if (a->second == "end") end.insert(e.text);
  }
  CHECK(!end.empty());
  CHECK(middle == end);
  s.y.pop_back();
  CHECK_THROWS_AS(scatter_svg(s), InputError);
}

TEST_CASE("variogram: markers per lag, model lines, sill, sizes grow with pairs", "[plots]") {
  VariogramPlot v;
  v.title = "Variogram of lead";
  v.distance_label = "distance (m)";
  v.sill = 1.2;
  for (int d = 0; d < 2; ++d) {
    VariogramSeries s;
    s.label = d == 0 ? "azimuth 0\u00b0" : "azimuth 90\u00b0";
    for (int k = 1; k <= 5; ++k) {
      s.distance.push_back(100.0 * k);
      s.gamma.push_back(0.2 * k + 0.1 * d);
      s.pairs.push_back(10 * k * k);
    }
    for (int k = 0; k <= 20; ++k) {
      s.model_h.push_back(25.0 * k);
      s.model_gamma.push_back(1.1 * (1 - std::exp(-3 * 25.0 * k / 400)));
    }
    v.series.push_back(s);
  }
  v.pair_labels = true;
  const std::string svg = variogram_svg(v);
  check_figure(svg, "Variogram of lead");
  CHECK(with_class(svg, "marker").size() == 10);
  CHECK(with_class(svg, "model").size() == 2);
  CHECK(with_class(svg, "sill").size() == 1);
  CHECK(with_class(svg, "pair-count").size() == 10);
  CHECK(has_text(svg, "250"));  // a pair count
  CHECK(has_text(svg, "sample variance"));
  CHECK(has_text(svg, "azimuth 90\u00b0"));
  // Series 0 is drawn with circles: the radius grows with the pair count.
  std::vector<double> r;
  for (const auto& e : with_class(svg, "marker"))
    if (e.name == "circle/") r.push_back(std::stod(e.attrs.at("r")));
  REQUIRE(r.size() == 5);
  for (std::size_t i = 1; i < r.size(); ++i) CHECK(r[i] > r[i - 1]);
  // Axes start at 0: distance ticks 0, 100, ...; semivariance ticks 0.0, 0.2, ...
  CHECK(has_text(svg, "0"));
  CHECK(has_text(svg, "0.0"));
  CHECK(has_text(svg, "1.2"));  // the sill is inside the axis
}

TEST_CASE("location map: samples by quantile class, equal scales, north arrow, scale bar",
          "[plots]") {
  LocationMapPlot m;
  m.title = "Sample locations";
  m.value_label = "lead (mg/kg)";
  for (int i = 0; i < 100; ++i) {
    m.x.push_back(500000 + 20.0 * (i % 10));  // 180 m east-west
    m.y.push_back(6000000 + 8.0 * (i / 10));  // 72 m north-south
    m.value.push_back((i * 37) % 100 + 1.0);  // 1..100 shuffled
  }
  const std::string svg = location_map_svg(m);
  check_figure(svg, "Sample locations");
  const auto samples = with_class(svg, "sample");
  REQUIRE(samples.size() == 100);
  CHECK(with_class(svg, "legend-class").size() == 5);
  // Quantile classes: 20 samples in each of the five colours.
  std::map<std::string, int> by_colour;
  for (const auto& e : samples) ++by_colour[e.attrs.at("fill")];
  CHECK(by_colour.size() == 5);
  for (int c = 0; c < 5; ++c)
    CHECK(by_colour[hex_colour(ramp_colour(ColourRamp::sequential, c / 4.0))] == 20);
  // Equal scales: the frame has the aspect of the (padded) extent.
  const auto frame = with_class(svg, "map-frame");
  REQUIRE(frame.size() == 1);
  const double w = std::stod(frame[0].attrs.at("width")),
               h = std::stod(frame[0].attrs.at("height"));
  const double pad = 0.04 * 180;
  CHECK(w / h == Approx((180 + 2 * pad) / (72 + 2 * pad)).epsilon(0.01));
  CHECK(has_text(svg, "easting (m)"));
  CHECK(has_text(svg, "northing (m)"));
  CHECK(with_class(svg, "north-arrow").size() == 1);
  const auto scale = with_class(svg, "scale-label");
  REQUIRE(scale.size() == 1);
  CHECK(is_125(std::stod(scale[0].text)));
  CHECK(scale[0].text.find(" m") != std::string::npos);

  m.north_arrow = m.scale_bar = false;
  m.classes = ColourClasses::equal_interval;
  m.class_count = 3;
  m.value[0] = NAN;
  const std::string plain = location_map_svg(m);
  check_figure(plain, "Sample locations");
  CHECK(with_class(plain, "north-arrow").empty());
  CHECK(with_class(plain, "scale-bar").empty());
  CHECK(with_class(plain, "legend-class").size() == 3);
  CHECK(with_class(plain, "no-value").size() == 1);
  CHECK(has_text(plain, "no value"));
}

TEST_CASE("raster map: the PNG data URI decodes to one pixel per cell", "[plots]") {
  RasterMapPlot p;
  p.title = "Estimate";
  p.value_label = "lead (mg/kg)";
  p.grid = ramp_grid(7, 5);
  p.grid.nodata = -9999;
  p.grid.values[3] = -9999;         // row 0, column 3
  p.grid.values[8] = NAN;           // row 1, column 1
  p.sample_x = {1020, 1055, 2000};  // the last is outside the map
  p.sample_y = {4980, 4960, 4990};
  const std::string svg = raster_map_svg(p);
  check_figure(svg, "Estimate");
  const auto images = with_class(svg, "raster");
  REQUIRE(images.size() == 1);
  CHECK(images[0].attrs.at("style").find("pixelated") != std::string::npos);
  CHECK(with_class(svg, "sample").size() == 2);
  CHECK(with_class(svg, "north-arrow").size() == 1);
  CHECK(with_class(svg, "no-data-hatch").size() == 1);
  CHECK(has_text(svg, "no estimate"));

  const std::string png = png_of(svg);
  REQUIRE(png.size() > 33);
  CHECK(png.substr(0, 8) == std::string("\x89PNG\r\n\x1a\n", 8));
  CHECK(png.substr(12, 4) == "IHDR");
  CHECK(big_endian(png, 16) == 7);
  CHECK(big_endian(png, 20) == 5);

  int w = 0, h = 0;
  const auto bands = png_bands(png, w, h);
  REQUIRE(w == 7);
  REQUIRE(h == 5);
  CHECK(bands[3][3] == 0);  // no data: transparent
  CHECK(bands[3][8] == 0);
  CHECK(bands[3][0] == 255);
  CHECK(bands[3][34] == 255);
  // The lowest value takes the start of the ramp, the highest its end.
  const Rgb first = ramp_colour(ColourRamp::sequential, 0),
            last = ramp_colour(ColourRamp::sequential, 1);
  CHECK(bands[0][0] == first.r);
  CHECK(bands[2][0] == first.b);
  CHECK(bands[0][34] == last.r);
  CHECK(bands[1][34] == last.g);
}

TEST_CASE("raster map: large grids are decimated to block means", "[plots]") {
  // 5 x 4 cells, at most 2 pixels: blocks of 3 x 3 -> 2 x 2 pixels.
  RasterGrid g = ramp_grid(5, 4);
  g.values[0] = NAN;
  g.nodata = 13;
  const RasterGrid d = decimate(g, 2);
  REQUIRE(d.nx == 2);
  REQUIRE(d.ny == 2);
  // Brute force: mean of the valid cells of each block.
  for (int r = 0; r < 2; ++r) {
    for (int c = 0; c < 2; ++c) {
      double sum = 0;
      int n = 0;
      for (int i = 3 * r; i < std::min(4, 3 * r + 3); ++i)
        for (int j = 3 * c; j < std::min(5, 3 * c + 3); ++j) {
          const double v = g.values[i * 5 + j];
          if (std::isnan(v) || v == 13) continue;
          sum += v, ++n;
        }
      CHECK(d.values[r * 2 + c] == Approx(sum / n));
    }
  }
  CHECK(d.geotransform[1] * 2 == Approx(50));  // the extent is kept
  CHECK(d.geotransform[5] * 2 == Approx(-40));
  CHECK(d.geotransform[0] == 1000);
  // A block with no valid cell is no data.
  RasterGrid empty = ramp_grid(4, 4);
  for (int i : {0, 1, 4, 5}) empty.values[i] = NAN;
  CHECK(std::isnan(decimate(empty, 2).values[0]));
  CHECK(decimate(ramp_grid(4, 4), 4).values == ramp_grid(4, 4).values);  // small enough: unchanged
  empty.values.pop_back();
  CHECK_THROWS_AS(decimate(empty, 2), InputError);

  // Through the figure: 2000 x 1000 cells -> k = 3 -> 667 x 334 pixels.
  RasterMapPlot p;
  p.title = "Large";
  p.grid = ramp_grid(2000, 1000);
  const std::string png = png_of(raster_map_svg(p));
  CHECK(big_endian(png, 16) == 667);
  CHECK(big_endian(png, 20) == 334);
}

TEST_CASE("raster map: a variogram surface, probability classes, rotated grids", "[plots]") {
  RasterMapPlot p;
  p.title = "Variogram surface";
  p.value_label = "semivariance";
  p.x_label = "lag east (m)";
  p.y_label = "lag north (m)";
  p.north_arrow = p.scale_bar = false;
  p.grid = ramp_grid(9, 9);
  p.grid.geotransform = {-450, 100, 0, 450, 0, -100};
  std::string svg = raster_map_svg(p);
  check_figure(svg, "Variogram surface");
  CHECK(with_class(svg, "north-arrow").empty());
  CHECK(with_class(svg, "scale-bar").empty());
  CHECK(with_class(svg, "no-data-hatch").empty());
  CHECK(has_text(svg, "lag east (m)"));
  CHECK(with_class(svg, "colour-bar").size() > 10);

  p.ramp = ColourRamp::probability;
  for (auto& v : p.grid.values) v /= 80;
  svg = raster_map_svg(p);
  CHECK(with_class(svg, "colour-class").size() == 4);
  CHECK(has_text(svg, "\u2265 0.9"));
  CHECK(has_text(svg, "0.1 \u2013 0.5"));

  p.grid.geotransform = {0, 10, 1, 0, 0, -10};
  CHECK_THROWS_AS(raster_map_svg(p), InputError);
}

TEST_CASE("dual axis: a line for each axis, gaps at NaN", "[plots]") {
  DualAxisPlot d;
  d.title = "Grade and tonnage above cut-off";
  d.x_label = "cut-off (g/t)";
  d.left_label = "tonnage (Mt)";
  d.right_label = "mean grade (g/t)";
  d.x = {0, 0.5, 1, 1.5, 2, 2.5};
  d.left = {40, 30, NAN, 12, 6, 2};
  d.right = {1.1, 1.4, 1.8, 2.3, 2.9, 3.4};
  const std::string svg = dual_axis_svg(d);
  check_figure(svg, "Grade and tonnage above cut-off");
  CHECK(with_class(svg, "left-line").size() == 2);  // split by the NaN
  CHECK(with_class(svg, "right-line").size() == 1);
  CHECK(with_class(svg, "left-marker").size() == 5);
  CHECK(with_class(svg, "right-marker").size() == 6);
  CHECK(has_text(svg, "tonnage (Mt)"));
  CHECK(has_text(svg, "mean grade (g/t)"));
  CHECK(has_text(svg, "cut-off (g/t)"));
  d.right.pop_back();
  CHECK_THROWS_AS(dual_axis_svg(d), InputError);
}

TEST_CASE("figures without data still render, with their title", "[plots]") {
  HistogramPlot h;
  h.title = "Empty histogram";
  check_figure(histogram_svg(h), "Empty histogram");
  ScatterPlot s;
  s.title = "Empty scatter";
  check_figure(scatter_svg(s), "Empty scatter");
  VariogramPlot v;
  v.title = "Empty variogram";
  check_figure(variogram_svg(v), "Empty variogram");
  LocationMapPlot m;
  m.title = "Empty map";
  check_figure(location_map_svg(m), "Empty map");
  DualAxisPlot d;
  d.title = "Empty chart";
  check_figure(dual_axis_svg(d), "Empty chart");
  RasterMapPlot r;
  r.title = "All no data";
  r.grid = ramp_grid(3, 2);
  for (auto& x : r.grid.values) x = NAN;
  const std::string svg = raster_map_svg(r);
  check_figure(svg, "All no data");
  CHECK(with_class(svg, "no-data").size() == 1);
  // A single location still gets a map with a non-zero extent.
  m.x = {10};
  m.y = {20};
  m.value = {3};
  const std::string one = location_map_svg(m);
  check_figure(one, "Empty map");
  CHECK(with_class(one, "sample").size() == 1);
}
