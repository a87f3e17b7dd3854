// Internals of the report's figures: an SVG text builder, axes, markers and
// the embedded-PNG encoder. Only src/report/ and the unit tests include this.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "sillstone/plots.hpp"

namespace sillstone::detail {

/// Text with &, <, >, " and ' escaped for XML content and attribute values.
std::string xml_escape(const std::string& text);

/// A coordinate as SVG text: at most two decimals, no trailing zeros.
std::string num(double v);

/// Approximate width in pixels of `text` set in sans-serif at `size` px
/// (0.56 em per character): enough to lay out legends without fonts.
double text_width(const std::string& text, double size);

/// One SVG figure being written. Elements are appended in drawing order;
/// `extra` is inserted verbatim into the element's attributes.
class Svg {
 public:
  /// Opens <svg> with role="img", aria-label, data-kind, a <title> and a white background.
  Svg(const std::string& title, const std::string& kind, double width, double height);
  void line(double x1, double y1, double x2, double y2, const std::string& stroke, double width,
            const std::string& extra = "");
  void rect(double x, double y, double w, double h, const std::string& fill,
            const std::string& extra = "");
  void circle(double cx, double cy, double r, const std::string& fill,
              const std::string& extra = "");
  /// An open polyline; nothing is drawn for fewer than two points.
  void polyline(const std::vector<double>& xs, const std::vector<double>& ys,
                const std::string& stroke, double width, const std::string& extra = "");
  void path(const std::string& d, const std::string& fill, const std::string& extra = "");
  /// Text (escaped) at baseline (x, y).
  void text(double x, double y, const std::string& s, double size, const std::string& extra = "");
  void raw(const std::string& element) { out_ += element; }
  /// The finished figure (closes </svg>).
  std::string finish();

 private:
  std::string out_;
};

/// A linear or log10 axis: its range and labelled ticks.
struct Axis {
  double lo = 0, hi = 1;  ///< range in data units (log axes: both > 0)
  bool log = false;
  std::vector<double> ticks;
  std::vector<std::string> labels;
  /// Position of v along the axis: 0 at lo, 1 at hi.
  double frac(double v) const;
};

/// Linear axis over [lo, hi]; `widen` extends the range to whole tick steps,
/// otherwise ticks are kept inside the range (maps).
Axis linear_axis(double lo, double hi, bool widen, int target = 5);
/// Log10 axis over [lo, hi] (> 0) widened to the nearest 1, 2 or 5 x 10^k;
/// ticks at decades, and at 2 and 5 times them when the axis spans three
/// decades or less.
Axis log_axis(double lo, double hi);

/// The plotting area in SVG units.
struct Area {
  double x = 0, y = 0, w = 1, h = 1;
  double px(const Axis& a, double v) const { return x + w * a.frac(v); }
  double py(const Axis& a, double v) const { return y + h * (1 - a.frac(v)); }
};

/// A white box crossed by thin diagonal lines: how no-data areas are shown
/// (white alone could be read as the pale end of a ramp).
void hatch(Svg& svg, double x, double y, double w, double h, const std::string& colour,
           const std::string& extra = "");

/// Width of the widest of `labels` at `size` px (see text_width).
double widest(const std::vector<std::string>& labels, double size);

/// Height taken by the title and subtitle of `frame`.
double header_height(const PlotFrame& frame);
/// Title and subtitle at the top left; returns header_height(frame).
double draw_header(Svg& svg, const PlotFrame& frame);

/// Bottom and left axes: light grid lines (when `grid`), ticks, labels and
/// axis titles. `left_colour` colours the left axis title (dual-axis charts).
void draw_axes(Svg& svg, const Area& area, const Axis& x, const Axis& y, const std::string& x_label,
               const std::string& y_label, bool grid, const std::string& left_colour = "#222222");
/// A right-hand y axis with its title in `colour`.
void draw_right_axis(Svg& svg, const Area& area, const Axis& y, const std::string& label,
                     const std::string& colour);

/// Categorical colours and marker shapes of series (cycled): shapes differ
/// as well as colours so that series stay apart without colour vision.
std::string series_colour(std::size_t i);
/// Draws marker shape `shape` (0 circle, 1 square, 2 triangle, 3 diamond,
/// 4 inverted triangle, 5 plus; cycled) of radius r centred at (x, y).
void marker(Svg& svg, std::size_t shape, double x, double y, double r, const std::string& fill,
            const std::string& extra = "");

/// North arrow whose box is (x, y, 24 x 40).
void draw_north_arrow(Svg& svg, double x, double y);
/// Scale bar starting at (x, y) no longer than `max_px`; `scale` is pixels
/// per map unit. Returns its height, 0 when nothing fits.
double draw_scale_bar(Svg& svg, double x, double y, double max_px, double scale,
                      const std::string& unit);

/// PNG file bytes of an 8-bit RGBA image (row-major from the top-left), via
/// GDAL's MEM and PNG drivers and an in-memory /vsimem/ file.
std::string encode_png(int width, int height, const std::vector<std::uint8_t>& rgba);
/// Standard base64 (RFC 4648, with padding).
std::string base64(const std::string& bytes);

}  // namespace sillstone::detail
