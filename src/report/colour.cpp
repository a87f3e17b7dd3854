// Colour ramps of the report, built in OKLab (Ottosson 2020, "A perceptual
// color space for image processing"), whose L axis tracks perceived
// lightness. Our design choice: each ramp is a path in lightness, chroma and
// hue (OKLCh) with lightness set directly, so
//  - the sequential ramp rises in lightness at a constant rate (0.25 -> 0.95)
//    while its hue turns from blue-violet through teal to yellow; order is
//    carried by lightness alone, so it survives colour-vision deficiency and
//    greyscale printing, and the hue turn adds separation on screen;
//  - the diverging ramp falls in lightness on both arms away from a
//    near-white centre (blue below, red-brown above);
//  - the probability ramp has four flat classes whose lightness steps by
//    about 0.2, so each class break reads in grey.
// Colours outside sRGB are brought in by lowering the chroma only, which
// keeps the lightness path intact.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include "sillstone/plots.hpp"

namespace sillstone {
namespace {

constexpr double kPi = 3.14159265358979323846;

struct Linear {
  double r, g, b;
};

// OKLab -> linear sRGB (Ottosson 2020, the published matrices).
Linear oklab_to_linear(double L, double a, double b) {
  const double l_ = L + 0.3963377774 * a + 0.2158037573 * b;
  const double m_ = L - 0.1055613458 * a - 0.0638541728 * b;
  const double s_ = L - 0.0894841775 * a - 1.2914855480 * b;
  const double l = l_ * l_ * l_, m = m_ * m_ * m_, s = s_ * s_ * s_;
  return {+4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
          -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
          -0.0041960863 * l - 0.7034186147 * m + 1.7076147010 * s};
}

bool in_gamut(const Linear& c) {
  constexpr double eps = 1e-9;
  return c.r >= -eps && c.r <= 1 + eps && c.g >= -eps && c.g <= 1 + eps && c.b >= -eps &&
         c.b <= 1 + eps;
}

// sRGB transfer function (IEC 61966-2-1).
std::uint8_t encode(double linear) {
  const double v = std::clamp(linear, 0.0, 1.0);
  const double s = v <= 0.0031308 ? 12.92 * v : 1.055 * std::pow(v, 1 / 2.4) - 0.055;
  return static_cast<std::uint8_t>(std::lround(s * 255));
}

double decode(std::uint8_t channel) {
  const double s = channel / 255.0;
  return s <= 0.04045 ? s / 12.92 : std::pow((s + 0.055) / 1.055, 2.4);
}

// OKLCh (hue in degrees) -> sRGB, lowering the chroma until the colour is in
// gamut (bisection), so the lightness asked for is kept.
Rgb from_oklch(double L, double C, double hue_deg) {
  const double h = hue_deg * kPi / 180;
  auto at = [&](double c) { return oklab_to_linear(L, c * std::cos(h), c * std::sin(h)); };
  Linear lin = at(C);
  if (!in_gamut(lin)) {
    double lo = 0, hi = C;
    for (int i = 0; i < 40; ++i) {
      const double mid = 0.5 * (lo + hi);
      (in_gamut(at(mid)) ? lo : hi) = mid;
    }
    lin = at(lo);
  }
  return {encode(lin.r), encode(lin.g), encode(lin.b)};
}

double lerp(double a, double b, double t) { return a + (b - a) * t; }

Rgb sequential(double t) {
  // Lightness 0.25 -> 0.95 (linear); hue 285 (blue-violet) -> 195 (teal, mid)
  // -> 105 (yellow); chroma a little lower at the dark end, where sRGB is narrow.
  return from_oklch(lerp(0.25, 0.95, t), lerp(0.11, 0.14, t), lerp(285, 105, t));
}

Rgb diverging(double t) {
  // Two arms from a near-white centre (L 0.97) to L 0.32: blue (hue 250)
  // below 0.5, red-brown (hue 40) above; chroma grows with distance from it.
  const double u = std::abs(t - 0.5) * 2;  // 0 at the centre, 1 at the ends
  return from_oklch(lerp(0.97, 0.32, u), lerp(0.0, 0.13, u), t < 0.5 ? 250 : 40);
}

Rgb probability(double t) {
  // Class lightness 0.96, 0.78, 0.58, 0.38: about 0.2 apart.
  static const Rgb classes[4] = {from_oklch(0.96, 0.035, 95), from_oklch(0.78, 0.11, 75),
                                 from_oklch(0.58, 0.15, 45), from_oklch(0.38, 0.11, 25)};
  const auto& breaks = probability_breaks();
  std::size_t k = 0;
  while (k < breaks.size() && t >= breaks[k]) ++k;
  return classes[k];
}

}  // namespace

const std::vector<double>& probability_breaks() {
  static const std::vector<double> breaks{0.1, 0.5, 0.9};
  return breaks;
}

Rgb ramp_colour(ColourRamp ramp, double t) {
  t = std::isnan(t) ? 0.0 : std::clamp(t, 0.0, 1.0);
  switch (ramp) {
    case ColourRamp::sequential:
      return sequential(t);
    case ColourRamp::diverging:
      return diverging(t);
    case ColourRamp::probability:
      return probability(t);
  }
  return sequential(t);
}

double relative_luminance(Rgb c) {
  return 0.2126 * decode(c.r) + 0.7152 * decode(c.g) + 0.0722 * decode(c.b);
}

std::string hex_colour(Rgb c) {
  char buf[8];
  std::snprintf(buf, sizeof buf, "#%02x%02x%02x", c.r, c.g, c.b);
  return buf;
}

}  // namespace sillstone
