// sillstone/plots.hpp -- the report's figures as self-contained SVG text.
//
// Every figure function is pure: it takes plain structs of numbers and labels
// (no other sillstone type) and returns one <svg> element as text. The SVG
// needs nothing outside itself: no scripts, no style sheets, no fonts to fetch
// (font-family "sans-serif"), and rasters are embedded as PNG data URIs. It
// can be written to a .svg file or pasted inline into an HTML page: it uses
// no id attributes and no <style> element, so several figures on one page
// cannot clash.
//
// Each figure carries its title twice for machines: a <title> child and the
// aria-label of the root element (role="img"), and names its kind in
// data-kind (e.g. data-kind="histogram"). Marks carry a class so that tests
// and readers can count them: "bar", "point", "marker", "sample", ...
//
// Colour ramps, tick placement and layout are described in
// docs/report-plots.md.
//
// Example:
//   sillstone::HistogramPlot h;
//   h.title = "Lead in topsoil";
//   h.x_label = "lead (mg/kg)";
//   h.values = lead;
//   h.log_x = true;
//   std::string svg = sillstone::histogram_svg(h);
//
// Thread safety: all functions are re-entrant; they share no state (the PNG
// encoder uses a distinct GDAL in-memory file per call).
#pragma once

#include <array>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

namespace sillstone {

// --- Colour ------------------------------------------------------------------

/// An 8-bit sRGB colour.
struct Rgb {
  std::uint8_t r = 0, g = 0, b = 0;
};

/// The colour ramps of the report. Each is built in the OKLab colour space
/// (Ottosson 2020) so that lightness can be set directly; see
/// docs/report-plots.md for the design.
enum class ColourRamp {
  /// Dark blue-violet through teal to pale yellow. Lightness rises
  /// monotonically from t = 0 to t = 1, so the ramp reads for colour-blind
  /// readers and prints as a grey ramp.
  sequential,
  /// Dark blue, through a near-white centre at t = 0.5, to dark red-brown.
  /// Lightness rises to the centre and falls after it (for signed values such
  /// as errors; a greyscale print cannot tell the two arms apart).
  diverging,
  /// Four classes for probabilities 0..1, split at 0.1, 0.5 and 0.9
  /// (probability_breaks()), pale cream to dark red-brown, each class clearly
  /// darker than the one below.
  probability,
};

/// The colour at position t of a ramp; t is clamped to [0, 1] (NaN gives t = 0).
Rgb ramp_colour(ColourRamp ramp, double t);

/// The class breaks of ColourRamp::probability: {0.1, 0.5, 0.9}.
const std::vector<double>& probability_breaks();

/// Relative luminance Y (0 black .. 1 white) of an sRGB colour, as defined in
/// WCAG 2.x: linearised channels weighted 0.2126 R + 0.7152 G + 0.0722 B.
double relative_luminance(Rgb colour);

/// "#rrggbb".
std::string hex_colour(Rgb colour);

// --- Axes and numbers ----------------------------------------------------------

/// Ticks of a linear axis.
struct AxisTicks {
  double lo = 0;               ///< axis start: the data minimum widened down to a whole step
  double hi = 1;               ///< axis end: the data maximum widened up to a whole step
  double step = 1;             ///< 1, 2 or 5 x 10^k
  std::vector<double> values;  ///< lo, lo + step, ..., hi
};

/// "Nice" ticks for data in [lo, hi]: the step is 1, 2 or 5 x 10^k chosen so
/// that the number of intervals is closest to `target` (ties: the tighter
/// axis). lo == hi is widened to a unit-or-10% range; lo > hi are swapped.
/// Non-finite input gives the axis 0..1.
AxisTicks nice_ticks(double lo, double hi, int target = 5);

/// Text of a tick value on an axis with spacing `step`: just enough decimals
/// for the step, no scientific notation for |value| < 1e12 and step >= 1e-6,
/// digits grouped in threes with a narrow no-break space (U+202F) from
/// 10 000 up ("5 712 000"), "-0" printed as "0".
std::string format_number(double value, double step);

/// The largest 1, 2 or 5 x 10^k not above `max_length` (> 0): the length of a
/// scale bar in map units.
double nice_length(double max_length);

/// Number of histogram bins for `values` (non-finite entries skipped) by the
/// Freedman-Diaconis rule (bin width 2 IQR n^(-1/3); Freedman & Diaconis
/// 1981), clamped to [5, 50]. Falls back to Sturges' rule (ceil(log2 n) + 1)
/// when the IQR is 0. Returns 1 when fewer than two distinct values.
int histogram_bins(const std::vector<double>& values);

// --- Figures -----------------------------------------------------------------

/// What every figure has: its title (also the <title> element and the
/// aria-label), an optional second line, and its size in SVG user units
/// (CSS pixels). Maps compute their own height from the data's aspect ratio.
struct PlotFrame {
  std::string title;
  std::string subtitle;  ///< optional, e.g. "n = 212, 4 values below detection"
  double width = 640;
  double height = 400;
};

/// 1, 8. Histogram of values, optionally with a second, weighted histogram
/// drawn as an outline over the first (e.g. declustering weights).
struct HistogramPlot : PlotFrame {
  std::string x_label;                        ///< the variable with its units, e.g. "lead (mg/kg)"
  std::vector<double> values;                 ///< non-finite entries are skipped
  std::vector<double> weights;                ///< empty, or one non-negative weight per value
  std::string weights_label = "declustered";  ///< legend text of the weighted histogram
  bool log_x = false;  ///< log10 axis and bins of equal width in log10; values <= 0 are
                       ///< left out and counted in the subtitle
  int bins = 0;        ///< 0: histogram_bins() of the (log10) values
  /// Y axis as probability density with the standard normal density drawn
  /// over the bars (for standardised errors); `log_x` is then ignored.
  /// Otherwise the y axis is a count, or a percentage of the total (weight)
  /// when `weights` are given.
  bool standard_normal = false;
};
std::string histogram_svg(const HistogramPlot& plot);

/// 8. Histogram of cross-validation standardised errors (error / kriging
/// standard deviation) with the standard normal density: a HistogramPlot
/// with standard_normal set and an x axis covering at least -3..3.
std::string standardised_error_svg(const std::vector<double>& standardised_errors,
                                   const PlotFrame& frame);

/// 2. Scatter plot, e.g. observed vs estimated in cross-validation.
struct ScatterPlot : PlotFrame {
  std::string x_label, y_label;  ///< with units
  std::vector<double> x, y;      ///< same length; pairs with a non-finite member are skipped
  bool one_to_one = false;       ///< draw the line y = x (dashed)
  bool equal_ranges = false;     ///< same range on both axes and a square plotting area
};
std::string scatter_svg(const ScatterPlot& plot);

/// One direction of an empirical variogram and, optionally, its model.
struct VariogramSeries {
  std::string label;                ///< e.g. "omnidirectional", "azimuth 45°"
  std::vector<double> distance;     ///< mean distance of the pairs in each lag class
  std::vector<double> gamma;        ///< semivariance of each lag class
  std::vector<std::int64_t> pairs;  ///< empty, or pairs per lag class (marker area grows with it)
  std::vector<double> model_h;      ///< model curve: distances, increasing
  std::vector<double> model_gamma;  ///< model curve: semivariance at model_h
};

/// 3. Empirical variogram points (one series per direction) with model curves
/// drawn as lines. Both axes start at 0.
struct VariogramPlot : PlotFrame {
  std::string distance_label = "distance";   ///< with units, e.g. "distance (m)"
  std::string gamma_label = "semivariance";  ///< with units when useful
  std::vector<VariogramSeries> series;
  /// Drawn as a dashed horizontal line when finite: the sample variance or
  /// the model's total sill.
  double sill = std::numeric_limits<double>::quiet_NaN();
  std::string sill_label = "sample variance";
  bool pair_labels = false;  ///< also print the pair count beside each point
};
std::string variogram_svg(const VariogramPlot& plot);

/// How a location map groups values into colour classes.
enum class ColourClasses {
  quantile,        ///< equal numbers of samples per class
  equal_interval,  ///< classes of equal width between the minimum and maximum
};

/// 4. Sample locations coloured by value, in map units with equal scales on
/// both axes, with a north arrow and a scale bar (maps are drawn north-up).
struct LocationMapPlot : PlotFrame {
  std::vector<double> x, y, value;  ///< same length; a NaN value is drawn as a hollow marker
  std::string value_label;          ///< legend title with units, e.g. "lead (mg/kg)"
  std::string x_label = "easting (m)", y_label = "northing (m)";
  std::string map_unit = "m";  ///< for the scale bar ("m" switches to km from 1000 m)
  ColourClasses classes = ColourClasses::quantile;
  int class_count = 5;  ///< 2..9
  bool north_arrow = true;
  bool scale_bar = true;
};
std::string location_map_svg(const LocationMapPlot& plot);

/// A north-up grid of values, as GDAL describes a raster.
struct RasterGrid {
  std::int64_t nx = 0, ny = 0;  ///< columns, rows
  /// GDAL geotransform: {xmin, dx, 0, ymax, 0, -dy} with dx, dy > 0 (rows
  /// run north to south). Rotated grids are refused.
  std::array<double, 6> geotransform{0, 1, 0, 0, 0, -1};
  std::vector<double> values;  ///< nx * ny, row by row from the north-west corner
  double nodata = std::numeric_limits<double>::quiet_NaN();  ///< NaN cells are no data too
};

/// Reduces a grid to at most `max_pixels` columns and rows by an integer
/// factor k = ceil(max(nx, ny) / max_pixels): each output cell is the mean of
/// the valid cells of its k x k block (no data when none is valid; NaN marks
/// no data in the result). The extent is kept, so the last row and column
/// may stand for partial blocks. Returns the grid unchanged when it is small
/// enough. Throws InputError for a grid whose size does not match its values.
RasterGrid decimate(const RasterGrid& grid, std::int64_t max_pixels);

/// 5, 6. A raster rendered as an embedded PNG (one pixel per cell after
/// decimation, drawn with image-rendering: pixelated; no-data cells are
/// transparent), with a colour bar, axes in map units and, for maps, a north
/// arrow and a scale bar. A variogram surface uses the same figure with lag
/// coordinates and north_arrow = scale_bar = false.
struct RasterMapPlot : PlotFrame {
  RasterGrid grid;
  std::string value_label;  ///< colour bar title with units
  ColourRamp ramp = ColourRamp::sequential;
  /// Colour range; NaN takes the data's minimum / maximum (diverging: a
  /// range symmetric about 0; probability: always 0..1).
  double value_min = std::numeric_limits<double>::quiet_NaN();
  double value_max = std::numeric_limits<double>::quiet_NaN();
  std::string x_label = "easting (m)", y_label = "northing (m)";
  std::string map_unit = "m";
  bool north_arrow = true;
  bool scale_bar = true;
  std::vector<double> sample_x, sample_y;  ///< optional sample locations drawn over the raster
  std::int64_t max_pixels = 800;           ///< larger grids are decimated (see decimate())
};
std::string raster_map_svg(const RasterMapPlot& plot);

/// 7. A line chart with two y axes over one x axis, e.g. a grade-tonnage
/// curve: tonnage (left) and mean grade above cut-off (right) against cut-off.
struct DualAxisPlot : PlotFrame {
  std::string x_label;           ///< e.g. "cut-off grade (g/t)"
  std::vector<double> x;         ///< increasing
  std::string left_label;        ///< e.g. "tonnage above cut-off (Mt)"
  std::vector<double> left;      ///< same length as x; NaN leaves a gap
  std::string right_label;       ///< e.g. "mean grade above cut-off (g/t)"
  std::vector<double> right;     ///< same length as x; NaN leaves a gap
  bool left_from_zero = true;    ///< left axis starts at 0
  bool right_from_zero = false;  ///< right axis starts at 0
};
std::string dual_axis_svg(const DualAxisPlot& plot);

}  // namespace sillstone
