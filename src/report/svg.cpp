// The SVG text builder and the parts every figure shares: header, axes,
// markers, north arrow and scale bar.
#include "svg.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace sillstone::detail {

std::string xml_escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
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
      case '\'':
        out += "&apos;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

std::string num(double v) {
  if (!std::isfinite(v)) v = 0;
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.2f", v);
  std::string s = buf;
  while (s.back() == '0') s.pop_back();
  if (s.back() == '.') s.pop_back();
  if (s == "-0") s = "0";
  return s;
}

double text_width(const std::string& text, double size) {
  std::size_t chars = 0;
  for (unsigned char c : text)
    if ((c & 0xC0) != 0x80) ++chars;  // count UTF-8 code points, not bytes
  return 0.56 * size * static_cast<double>(chars);
}

Svg::Svg(const std::string& title, const std::string& kind, double width, double height) {
  const std::string t = xml_escape(title.empty() ? kind : title);
  out_ = "<svg xmlns=\"http://www.w3.org/2000/svg\" xmlns:xlink=\"http://www.w3.org/1999/xlink\"";
  out_ += " width=\"" + num(width) + "\" height=\"" + num(height) + "\" viewBox=\"0 0 " +
          num(width) + " " + num(height) + "\"";
  out_ += " role=\"img\" aria-label=\"" + t + "\" data-kind=\"" + xml_escape(kind) +
          "\" class=\"sillstone-plot\" font-family=\"sans-serif\">";
  out_ += "<title>" + t + "</title>";
  out_ += "<rect width=\"" + num(width) + "\" height=\"" + num(height) + "\" fill=\"#ffffff\"/>";
}

void Svg::line(double x1, double y1, double x2, double y2, const std::string& stroke, double width,
               const std::string& extra) {
  out_ += "<line x1=\"" + num(x1) + "\" y1=\"" + num(y1) + "\" x2=\"" + num(x2) + "\" y2=\"" +
          num(y2) + "\" stroke=\"" + stroke + "\" stroke-width=\"" + num(width) + "\"" +
          (extra.empty() ? "" : " " + extra) + "/>";
}

void Svg::rect(double x, double y, double w, double h, const std::string& fill,
               const std::string& extra) {
  out_ += "<rect x=\"" + num(x) + "\" y=\"" + num(y) + "\" width=\"" + num(std::max(w, 0.0)) +
          "\" height=\"" + num(std::max(h, 0.0)) + "\" fill=\"" + fill + "\"" +
          (extra.empty() ? "" : " " + extra) + "/>";
}

void Svg::circle(double cx, double cy, double r, const std::string& fill,
                 const std::string& extra) {
  out_ += "<circle cx=\"" + num(cx) + "\" cy=\"" + num(cy) + "\" r=\"" + num(r) + "\" fill=\"" +
          fill + "\"" + (extra.empty() ? "" : " " + extra) + "/>";
}

void Svg::polyline(const std::vector<double>& xs, const std::vector<double>& ys,
                   const std::string& stroke, double width, const std::string& extra) {
  const std::size_t n = std::min(xs.size(), ys.size());
  if (n < 2) return;
  out_ += "<polyline points=\"";
  for (std::size_t i = 0; i < n; ++i) out_ += (i ? " " : "") + num(xs[i]) + "," + num(ys[i]);
  out_ += "\" fill=\"none\" stroke=\"" + stroke + "\" stroke-width=\"" + num(width) +
          "\" stroke-linejoin=\"round\"" + (extra.empty() ? "" : " " + extra) + "/>";
}

void Svg::path(const std::string& d, const std::string& fill, const std::string& extra) {
  out_ += "<path d=\"" + d + "\" fill=\"" + fill + "\"" + (extra.empty() ? "" : " " + extra) + "/>";
}

void Svg::text(double x, double y, const std::string& s, double size, const std::string& extra) {
  out_ += "<text x=\"" + num(x) + "\" y=\"" + num(y) + "\" font-size=\"" + num(size) + "\"";
  if (extra.find("fill=") == std::string::npos) out_ += " fill=\"#222222\"";
  out_ += (extra.empty() ? "" : " " + extra) + ">" + xml_escape(s) + "</text>";
}

std::string Svg::finish() { return out_ + "</svg>"; }

// --- Axes ------------------------------------------------------------------------

double Axis::frac(double v) const {
  if (log) {
    const double a = std::log10(lo), b = std::log10(hi);
    return v > 0 ? (std::log10(v) - a) / (b - a) : 0;
  }
  return hi > lo ? (v - lo) / (hi - lo) : 0.5;
}

Axis linear_axis(double lo, double hi, bool widen, int target) {
  const AxisTicks t = nice_ticks(lo, hi, target);
  Axis a;
  if (widen || !(hi > lo)) {
    a.lo = t.lo;
    a.hi = t.hi;
  } else {
    a.lo = lo;
    a.hi = hi;
  }
  const double eps = 1e-9 * (a.hi - a.lo);
  for (double v : t.values) {
    if (v < a.lo - eps || v > a.hi + eps) continue;
    a.ticks.push_back(v);
    a.labels.push_back(format_number(v, t.step));
  }
  return a;
}

Axis log_axis(double lo, double hi) {
  Axis a;
  a.log = true;
  if (!(lo > 0) || !std::isfinite(lo)) lo = 1;
  if (!(hi > lo) || !std::isfinite(hi)) hi = lo * 10;
  // Widen to the nearest 1, 2 or 5 x 10^k outside [lo, hi].
  const double d0 = std::floor(std::log10(lo) + 1e-9), d1 = std::ceil(std::log10(hi) - 1e-9);
  a.lo = std::pow(10.0, d0);
  for (double m : {2.0, 5.0})
    if (m * std::pow(10.0, d0) <= lo * (1 + 1e-9)) a.lo = m * std::pow(10.0, d0);
  a.hi = std::pow(10.0, d1);
  for (double m : {5.0, 2.0})
    if (m * std::pow(10.0, d1 - 1) >= hi * (1 - 1e-9)) a.hi = m * std::pow(10.0, d1 - 1);
  const bool fine = std::log10(a.hi / a.lo) <= 3 + 1e-9;
  for (double d = d0; d <= d1; ++d) {
    for (double m : {1.0, 2.0, 5.0}) {
      if (m > 1 && !fine) continue;
      const double v = m * std::pow(10.0, d);
      if (v < a.lo * (1 - 1e-9) || v > a.hi * (1 + 1e-9)) continue;
      a.ticks.push_back(v);
      a.labels.push_back(format_number(v, v));
    }
  }
  return a;
}

void hatch(Svg& svg, double x, double y, double w, double h, const std::string& colour,
           const std::string& extra) {
  constexpr double spacing = 5;
  std::string d;
  for (double c = spacing; c < w + h; c += spacing) {  // lines u + v = c in the box's frame
    const double u1 = std::max(0.0, c - h), u2 = std::min(w, c);
    d += "M" + num(x + u1) + "," + num(y + c - u1) + "L" + num(x + u2) + "," + num(y + c - u2);
  }
  svg.rect(x, y, w, h, "#ffffff");
  if (!d.empty())
    svg.path(d, "none",
             "stroke=\"" + colour + "\" stroke-width=\"0.8\"" + (extra.empty() ? "" : " " + extra));
}

double widest(const std::vector<std::string>& labels, double size) {
  double w = 0;
  for (const auto& l : labels) w = std::max(w, text_width(l, size));
  return w;
}

double header_height(const PlotFrame& frame) { return frame.subtitle.empty() ? 32 : 50; }

double draw_header(Svg& svg, const PlotFrame& frame) {
  svg.text(14, 22, frame.title, 15, "font-weight=\"bold\" fill=\"#1a1a1a\"");
  if (!frame.subtitle.empty()) svg.text(14, 40, frame.subtitle, 12, "fill=\"#555555\"");
  return header_height(frame);
}

void draw_axes(Svg& svg, const Area& area, const Axis& x, const Axis& y, const std::string& x_label,
               const std::string& y_label, bool grid, const std::string& left_colour) {
  const double bottom = area.y + area.h;
  for (std::size_t i = 0; i < x.ticks.size(); ++i) {
    const double px = area.px(x, x.ticks[i]);
    if (grid) svg.line(px, area.y, px, bottom, "#e6e6e6", 1);
    svg.line(px, bottom, px, bottom + 4, "#444444", 1);
    svg.text(px, bottom + 17, x.labels[i], 11, "text-anchor=\"middle\" fill=\"#333333\"");
  }
  for (std::size_t i = 0; i < y.ticks.size(); ++i) {
    const double py = area.py(y, y.ticks[i]);
    if (grid) svg.line(area.x, py, area.x + area.w, py, "#e6e6e6", 1);
    svg.line(area.x - 4, py, area.x, py, "#444444", 1);
    svg.text(area.x - 7, py + 4, y.labels[i], 11, "text-anchor=\"end\" fill=\"#333333\"");
  }
  svg.line(area.x, bottom, area.x + area.w, bottom, "#444444", 1);
  svg.line(area.x, area.y, area.x, bottom, "#444444", 1);
  svg.text(area.x + area.w / 2, bottom + 38, x_label, 12.5,
           "text-anchor=\"middle\" class=\"axis-label\"");
  const double yx = area.x - 7 - widest(y.labels, 11) - 10;
  const double yy = area.y + area.h / 2;
  svg.text(yx, yy, y_label, 12.5,
           "text-anchor=\"middle\" class=\"axis-label\" fill=\"" + left_colour +
               "\" transform=\"rotate(-90 " + num(yx) + " " + num(yy) + ")\"");
}

void draw_right_axis(Svg& svg, const Area& area, const Axis& y, const std::string& label,
                     const std::string& colour) {
  const double right = area.x + area.w;
  for (std::size_t i = 0; i < y.ticks.size(); ++i) {
    const double py = area.py(y, y.ticks[i]);
    svg.line(right, py, right + 4, py, "#444444", 1);
    svg.text(right + 7, py + 4, y.labels[i], 11, "fill=\"#333333\"");
  }
  svg.line(right, area.y, right, area.y + area.h, "#444444", 1);
  const double yx = right + 7 + widest(y.labels, 11) + 14;
  const double yy = area.y + area.h / 2;
  svg.text(yx, yy, label, 12.5,
           "text-anchor=\"middle\" class=\"axis-label\" fill=\"" + colour +
               "\" transform=\"rotate(90 " + num(yx) + " " + num(yy) + ")\"");
}

// --- Series colours and markers ----------------------------------------------------

std::string series_colour(std::size_t i) {
  // Our categorical set: deep blue, burnt orange, green, plum, grey, ochre.
  static const char* colours[] = {"#1f4f8c", "#c8641e", "#2c8a62", "#9a3d87", "#6b6b6b", "#a88a10"};
  return colours[i % 6];
}

void marker(Svg& svg, std::size_t shape, double x, double y, double r, const std::string& fill,
            const std::string& extra) {
  auto p = [](double a, double b) { return num(a) + "," + num(b); };
  switch (shape % 6) {
    case 0:
      svg.circle(x, y, r, fill, extra);
      break;
    case 1:
      svg.rect(x - 0.9 * r, y - 0.9 * r, 1.8 * r, 1.8 * r, fill, extra);
      break;
    case 2:
      svg.path("M" + p(x, y - 1.25 * r) + "L" + p(x + 1.15 * r, y + 0.8 * r) + "L" +
                   p(x - 1.15 * r, y + 0.8 * r) + "Z",
               fill, extra);
      break;
    case 3:
      svg.path("M" + p(x, y - 1.3 * r) + "L" + p(x + 1.3 * r, y) + "L" + p(x, y + 1.3 * r) + "L" +
                   p(x - 1.3 * r, y) + "Z",
               fill, extra);
      break;
    case 4:
      svg.path("M" + p(x, y + 1.25 * r) + "L" + p(x + 1.15 * r, y - 0.8 * r) + "L" +
                   p(x - 1.15 * r, y - 0.8 * r) + "Z",
               fill, extra);
      break;
    default: {
      const double a = 0.38 * r, b = 1.2 * r;  // a plus sign with arms of half-width a
      svg.path("M" + p(x - a, y - b) + "H" + num(x + a) + "V" + num(y - a) + "H" + num(x + b) +
                   "V" + num(y + a) + "H" + num(x + a) + "V" + num(y + b) + "H" + num(x - a) + "V" +
                   num(y + a) + "H" + num(x - b) + "V" + num(y - a) + "H" + num(x - a) + "Z",
               fill, extra);
    }
  }
}

// --- Map furniture -------------------------------------------------------------

void draw_north_arrow(Svg& svg, double x, double y) {
  const double cx = x + 12;
  auto p = [](double a, double b) { return num(a) + "," + num(b); };
  svg.text(cx, y + 11, "N", 12, "text-anchor=\"middle\" font-weight=\"bold\"");
  // A split arrowhead: dark west half, light east half, so it reads in grey.
  svg.path("M" + p(cx, y + 15) + "L" + p(cx - 7, y + 39) + "L" + p(cx, y + 33) + "Z", "#222222",
           "class=\"north-arrow\"");
  svg.path("M" + p(cx, y + 15) + "L" + p(cx, y + 33) + "L" + p(cx + 7, y + 39) + "Z", "#ffffff",
           "stroke=\"#222222\" stroke-width=\"1\" stroke-linejoin=\"round\"");
}

double draw_scale_bar(Svg& svg, double x, double y, double max_px, double scale,
                      const std::string& unit) {
  if (!(scale > 0) || !(max_px > 10)) return 0;
  const double length = nice_length(max_px / scale);
  const double px = length * scale;
  if (!(length > 0) || px < 10) return 0;
  double shown = length;
  std::string shown_unit = unit;
  if (unit == "m" && length >= 1000) {
    shown = length / 1000;
    shown_unit = "km";
  }
  const std::string outline = "stroke=\"#222222\" stroke-width=\"0.8\"";
  svg.rect(x, y, px / 2, 6, "#222222", outline + " class=\"scale-bar\"");
  svg.rect(x + px / 2, y, px / 2, 6, "#ffffff", outline);
  svg.text(x, y + 19, "0", 10.5, "text-anchor=\"middle\"");
  svg.text(x + px, y + 19,
           format_number(shown, shown) + (shown_unit.empty() ? "" : " " + shown_unit), 10.5,
           "text-anchor=\"middle\" class=\"scale-label\"");
  return 24;
}

}  // namespace sillstone::detail
