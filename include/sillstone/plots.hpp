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

}  // namespace sillstone
