// The report's figures: tick and bin rules, colour-ramp lightness.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <string>
#include <vector>

#include "sillstone/plots.hpp"

using namespace sillstone;

namespace {

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

