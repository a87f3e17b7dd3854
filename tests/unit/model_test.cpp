// Covariance models: the families' closed forms, the practical-range
// conventions, anisotropy, the SPEC syntax and model.json (docs/models.md).
// The Matern values are also checked against scipy in
// tests/reference/model_vs_scipy.py.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <random>
#include <stdexcept>
#include <string>
#include <vector>

#include "sillstone/error.hpp"
#include "sillstone/model.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace Catch {
template <>
struct StringMaker<CovarianceModel> {
  static std::string convert(const CovarianceModel& m) { return to_spec(m); }
};
}  // namespace Catch

namespace {

const double kDegree = std::acos(-1.0) / 180;

// A one-structure model with unit sill.
CovarianceModel single(const std::string& family_and_parameters) {
  return parse_model_spec("1 " + family_and_parameters);
}

// The message of the InputError that `f` throws ("" when it throws none).
template <class F>
std::string error_of(F f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

// A lag of length h at `azimuth` degrees clockwise from north, `dip` degrees down.
struct Lag {
  double dx, dy, dz;
};
Lag lag_at(double h, double azimuth, double dip = 0) {
  return {h * std::sin(azimuth * kDegree) * std::cos(dip * kDegree),
          h * std::cos(azimuth * kDegree) * std::cos(dip * kDegree), -h * std::sin(dip * kDegree)};
}
double variogram_at(const CovarianceModel& m, const Lag& l) {
  return m.variogram(l.dx, l.dy, l.dz);
}

}  // namespace

// ---------------------------------------------------------------- closed forms

TEST_CASE("exponential and gaussian reach 1 - exp(-3) of their sill at the practical range",
          "[model]") {
  // The contract (PRODUCT.md, Conventions) defines the practical range a by
  // c(1 - exp(-3h/a)) and c(1 - exp(-3h^2/a^2)): at h = a both are at
  // 1 - exp(-3) = 0.9502 of the sill -- the "about 95%" of common practice,
  // since the factor 3 is the nearest round number to -ln(0.05) = 2.996.
  const double at_range = 1 - std::exp(-3.0);
  CHECK(at_range > 0.95);
  CHECK(at_range < 0.951);
  const auto exponential = parse_model_spec("2.5 exponential(range=300)");
  const auto gaussian = parse_model_spec("2.5 gaussian(range=300)");
  CHECK(exponential.variogram(300.0) == Approx(2.5 * at_range).epsilon(1e-15));
  CHECK(gaussian.variogram(300.0) == Approx(2.5 * at_range).epsilon(1e-15));
  // Elsewhere: h = a/3 gives 1 - exp(-1) (exponential) and 1 - exp(-1/3) (gaussian).
  CHECK(exponential.variogram(100.0) == Approx(2.5 * (1 - std::exp(-1.0))).epsilon(1e-15));
  CHECK(gaussian.variogram(100.0) == Approx(2.5 * (1 - std::exp(-1.0 / 3))).epsilon(1e-15));
  // Both keep rising towards the sill without reaching it.
  CHECK(exponential.variogram(3000.0) < 2.5);
  CHECK(exponential.variogram(3000.0) > exponential.variogram(600.0));
}

TEST_CASE("spherical and cubic reach the sill exactly at the range and stay there", "[model]") {
  const auto spherical = parse_model_spec("2 spherical(range=100)");
  const auto cubic = parse_model_spec("2 cubic(range=100)");
  // Hand computation at r = h/a = 0.5:
  //   spherical 1.5 r - 0.5 r^3 = 0.75 - 0.0625 = 0.6875
  //   cubic 7 r^2 - 35/4 r^3 + 7/2 r^5 - 3/4 r^7
  //       = 1.75 - 1.09375 + 0.109375 - 0.005859375 = 0.759765625
  CHECK(spherical.variogram(50.0) == Approx(2 * 0.6875).epsilon(1e-15));
  CHECK(cubic.variogram(50.0) == Approx(2 * 0.759765625).epsilon(1e-15));
  for (double h : {100.0, 100.5, 150.0, 1e6}) {
    CHECK(spherical.variogram(h) == 2.0);
    CHECK(cubic.variogram(h) == 2.0);
    CHECK(spherical.covariance(h) == 0.0);
    CHECK(cubic.covariance(h) == 0.0);
  }
  // Continuous at the range: both polynomials equal 1 at r = 1.
  CHECK(spherical.variogram(100 * (1 - 1e-9)) == Approx(2.0).epsilon(1e-8));
  CHECK(cubic.variogram(100 * (1 - 1e-9)) == Approx(2.0).epsilon(1e-8));
  // Increasing below the range.
  double last_s = 0, last_c = 0;
  for (double h = 5; h < 100; h += 5) {
    CHECK(spherical.variogram(h) > last_s);
    CHECK(cubic.variogram(h) > last_c);
    last_s = spherical.variogram(h);
    last_c = cubic.variogram(h);
  }
}

TEST_CASE("the nugget is 0 at lag 0 and its sill at any other lag", "[model]") {
  const auto m = parse_model_spec("0.3 nugget");
  CHECK(m.variogram(0.0) == 0.0);
  CHECK(m.variogram(0.0, 0.0, 0.0) == 0.0);
  CHECK(m.variogram(1e-9) == 0.3);
  CHECK(m.variogram(0.0, 0.0, -1e-12) == 0.3);
  CHECK(m.covariance(0.0) == 0.3);
  CHECK(m.covariance(1e-9) == 0.0);
  CHECK(m.nugget() == 0.3);
}

TEST_CASE("every family is 0 at lag 0 and covariance + variogram is the total sill", "[model]") {
  const auto m = parse_model_spec(
      "0.1 nugget + 0.7 spherical(range=80, azimuth=20, ratio=0.6) + 0.3 exponential(range=40) + "
      "0.2 gaussian(range=150) + 0.4 cubic(range=60, dip=20, ratio2=0.5) + "
      "0.5 matern(range=120, nu=1.7, azimuth=100, ratio=0.3)");
  CHECK(m.total_sill() == Approx(2.2).epsilon(1e-15));
  CHECK(m.nugget() == 0.1);
  CHECK(m.variogram(0.0, 0.0, 0.0) == 0.0);
  CHECK(m.covariance(0.0, 0.0, 0.0) == Approx(2.2).epsilon(1e-15));
  CHECK(m.correlation(0.0, 0.0, 0.0) == Approx(1.0).epsilon(1e-15));
  std::mt19937_64 rng(20260301);
  std::uniform_real_distribution<double> u(-200, 200);
  for (int i = 0; i < 200; ++i) {
    const double dx = u(rng), dy = u(rng), dz = u(rng) / 10;
    const double g = m.variogram(dx, dy, dz), c = m.covariance(dx, dy, dz);
    CHECK(g + c == Approx(m.total_sill()).epsilon(1e-13));
    CHECK(m.correlation(dx, dy, dz) == Approx(c / 2.2).epsilon(1e-13));
    CHECK(g >= 0.1);  // the nugget is reached at any lag other than 0
  }
}

TEST_CASE("the power model is intrinsic: c h^exponent, no sill, no covariance", "[model]") {
  const auto m = parse_model_spec("0.02 power(exponent=1.5)");
  CHECK_FALSE(m.has_sill());
  CHECK(m.total_sill() == std::numeric_limits<double>::infinity());
  CHECK(m.variogram(0.0) == 0.0);
  CHECK(m.variogram(100.0) == Approx(0.02 * 1000.0).epsilon(1e-14));  // 100^1.5 = 1000
  CHECK(m.variogram(30.0, 40.0) == Approx(0.02 * std::pow(50.0, 1.5)).epsilon(1e-14));
  CHECK_THROWS_AS(m.covariance(1.0), std::logic_error);
  CHECK_THROWS_AS(m.correlation(1.0, 2.0), std::logic_error);
  // Anisotropy scales distances as for the other families: along the minor
  // axis distance counts 1/ratio times.
  const auto a = parse_model_spec("0.02 power(exponent=1.5, azimuth=45, ratio=0.25)");
  CHECK(variogram_at(a, lag_at(100, 45)) == Approx(0.02 * 1000.0).epsilon(1e-12));
  CHECK(variogram_at(a, lag_at(25, 135)) == Approx(0.02 * 1000.0).epsilon(1e-12));
}

// ---------------------------------------------------------------------- matern

TEST_CASE("the matern correlation at the practical range is 0.05", "[model]") {
  // The contract's definition of the matern practical range (PRODUCT.md, Conventions).
  for (double nu : {0.05, 0.3, 0.5, 1.0, 1.5, 2.5, 7.3, 20.0}) {
    INFO("nu = " << nu);
    const auto m = parse_model_spec("3 matern(range=250, nu=" + std::to_string(nu) + ")");
    CHECK(m.correlation(250.0) == Approx(0.05).epsilon(1e-12));
    CHECK(m.correlation(0.0) == 1.0);
    CHECK(m.correlation(1e-6) <= 1.0);
    CHECK(m.variogram(1e-6) >= 0.0);
    // Near 0, 1 - rho ~ t^(2 min(nu, 1)) (Stein 1999, from memory): for nu >= 0.5 a
    // lag of 1e-30 is as good as 0; for small nu the drop near 0 is steep.
    if (nu >= 0.5) CHECK(m.correlation(1e-30) == Approx(1.0).epsilon(1e-14));
    CHECK(m.correlation(249.0) > 0.05);
    CHECK(m.correlation(251.0) < 0.05);
    CHECK(m.correlation(1e9) == 0.0);  // far beyond any scale: no exception, no NaN
  }
}

TEST_CASE("matern with nu = 0.5 is the exponential of the same internal scale", "[model]") {
  // rho_{1/2}(t) = exp(-t). The matern's practical range puts the correlation
  // at exactly 0.05 (t = ln 20 at h = a), the exponential's at exp(-3): the
  // same curve therefore has practical range a as a matern and a * 3 / ln 20
  // as an exponential (docs/models.md explains the 0.14% difference).
  const auto matern = parse_model_spec("1.3 matern(range=400, nu=0.5)");
  Structure s;
  s.family = Family::exponential;
  s.sill = 1.3;
  s.range = 400 * 3 / std::log(20.0);
  const CovarianceModel exponential({s});
  for (double h : {1.0, 10.0, 100.0, 400.0, 1000.0, 3000.0}) {
    INFO("h = " << h);
    CHECK(matern.variogram(h) == Approx(exponential.variogram(h)).epsilon(1e-12));
    CHECK(matern.covariance(h) == Approx(exponential.covariance(h)).epsilon(1e-12));
  }
  // With the same practical range they differ, by 0.05 - exp(-3) at h = a.
  const auto same_range = parse_model_spec("1 exponential(range=400)");
  CHECK(matern.correlation(400.0) - same_range.correlation(400.0) ==
        Approx(0.05 - std::exp(-3.0)).epsilon(1e-10));
}

// ------------------------------------------------------------------ anisotropy

TEST_CASE("2D anisotropy: the major axis has the range, the minor axis range * ratio",
          "[model][anisotropy]") {
  for (const char* family : {"spherical", "exponential", "gaussian", "cubic", "matern"}) {
    INFO(family);
    const std::string shape = std::string(family) == "matern" ? ", nu=1.5" : "";
    const auto rotated =
        single(std::string(family) + "(range=200, azimuth=30, ratio=0.5" + shape + ")");
    const auto major = single(std::string(family) + "(range=200" + shape + ")");
    const auto minor = single(std::string(family) + "(range=100" + shape + ")");
    for (double h : {10.0, 60.0, 120.0, 199.0, 260.0}) {
      INFO("h = " << h);
      for (double azimuth : {30.0, 210.0})  // both ways along the major axis
        CHECK(variogram_at(rotated, lag_at(h, azimuth)) ==
              Approx(major.variogram(h)).epsilon(1e-12));
      for (double azimuth : {120.0, 300.0, -60.0})  // the minor axis
        CHECK(variogram_at(rotated, lag_at(h, azimuth)) ==
              Approx(minor.variogram(h)).epsilon(1e-12));
    }
  }
}

TEST_CASE("2D anisotropy: the worked example of docs/models.md", "[model][anisotropy]") {
  // 1 spherical(range=200, azimuth=30, ratio=0.5) at the lag (dx, dy) = (0, 100),
  // due north. Along the major axis (azimuth 30) the lag has length
  // 100 cos 30 = 86.603, along the minor axis (azimuth 120) 100 cos 120 = -50.
  // Reduced distance r = sqrt((86.603/200)^2 + (-50/100)^2) = sqrt(0.1875 + 0.25).
  const double r = std::sqrt(0.4375);
  const double expected = 1.5 * r - 0.5 * r * r * r;  // 0.84747
  const auto m = parse_model_spec("1 spherical(range=200, azimuth=30, ratio=0.5)");
  CHECK(m.variogram(0.0, 100.0) == Approx(expected).epsilon(1e-14));
  CHECK(expected == Approx(0.84747).margin(5e-6));  // the value printed in the docs
  // Equivalent isotropic distance: r * 200 = 132.29.
  CHECK(single("spherical(range=200)").variogram(r * 200) == Approx(expected).epsilon(1e-14));
}

TEST_CASE("3D anisotropy: the worked example of docs/models.md", "[model][anisotropy]") {
  // 1 exponential(range=100, azimuth=90, dip=30, ratio=0.5, ratio2=0.25): the
  // major axis points east, 30 degrees down. The horizontal lag (50, 0, 0) has
  // 50 cos 30 = 43.301 along the major axis (range 100) and 50 sin 30 = 25
  // along the third axis (range 25): r = sqrt(0.1875 + 1).
  const auto m = single("exponential(range=100, azimuth=90, dip=30, ratio=0.5, ratio2=0.25)");
  const double r = std::sqrt(0.1875 + 1.0);
  CHECK(m.variogram(50.0, 0.0, 0.0) == Approx(1 - std::exp(-3 * r)).epsilon(1e-14));
  CHECK(1 - std::exp(-3 * r) == Approx(0.96196).margin(5e-6));  // printed in the docs
  // 50 units down the major axis: r = 0.5.
  CHECK(m.variogram(50 * std::cos(30 * kDegree), 0.0, -25.0) ==
        Approx(1 - std::exp(-1.5)).epsilon(1e-14));
  CHECK(1 - std::exp(-1.5) == Approx(0.77687).margin(5e-6));
}

TEST_CASE("3D anisotropy: dip tilts the major axis, plunge turns the minor axes about it",
          "[model][anisotropy]") {
  // Major axis at azimuth 90 (east) dipping 30 degrees down; range 100 along
  // it, 50 (ratio) along the second axis, 25 (ratio2) along the third.
  const double d = 30 * kDegree;
  for (double plunge : {0.0, 40.0, -25.0}) {
    INFO("plunge = " << plunge);
    const auto m = single(
        "exponential(range=100, azimuth=90, dip=30, ratio=0.5, ratio2=0.25, "
        "plunge=" +
        std::to_string(plunge) + ")");
    CHECK(m.dimension() == 3);
    const double p = plunge * kDegree;
    // Axes in (east, north, up): u1 = (cos d, 0, -sin d) along the dip;
    // u2 = (0, -1, 0) horizontal at azimuth 180; u3 = (sin d, 0, cos d).
    // Plunge turns u2 and u3 about u1: v2 = cos p u2 - sin p u3, v3 = sin p u2 + cos p u3.
    const double u1[3] = {std::cos(d), 0, -std::sin(d)};
    const double u2[3] = {0, -1, 0};
    const double u3[3] = {std::sin(d), 0, std::cos(d)};
    double v2[3], v3[3];
    for (int k = 0; k < 3; ++k) {
      v2[k] = std::cos(p) * u2[k] - std::sin(p) * u3[k];
      v3[k] = std::sin(p) * u2[k] + std::cos(p) * u3[k];
    }
    for (double h : {5.0, 20.0, 70.0, 150.0}) {
      INFO("h = " << h);
      CHECK(m.variogram(h * u1[0], h * u1[1], h * u1[2]) ==
            Approx(single("exponential(range=100)").variogram(h)).epsilon(1e-12));
      CHECK(m.variogram(h * v2[0], h * v2[1], h * v2[2]) ==
            Approx(single("exponential(range=50)").variogram(h)).epsilon(1e-12));
      CHECK(m.variogram(h * v3[0], h * v3[1], h * v3[2]) ==
            Approx(single("exponential(range=25)").variogram(h)).epsilon(1e-12));
    }
    // Positive plunge tips the second axis down (z < 0), negative tips it up.
    if (plunge > 0) CHECK(v2[2] < 0);
    if (plunge < 0) CHECK(v2[2] > 0);
  }
  // The dip is measured downward: the same lag going up is off the major axis.
  const auto m = single("spherical(range=100, azimuth=90, dip=30, ratio2=0.25)");
  CHECK(variogram_at(m, lag_at(50, 90, 30)) ==
        Approx(single("spherical(range=100)").variogram(50.0)).epsilon(1e-12));
  CHECK(variogram_at(m, lag_at(50, 90, -30)) > variogram_at(m, lag_at(50, 90, 30)));
}

TEST_CASE("2D lags are 3D lags with dz = 0, 2D models are isotropic vertically", "[model]") {
  const auto m = parse_model_spec("0.1 nugget + 1 spherical(range=300, azimuth=75, ratio=0.4)");
  CHECK(m.dimension() == 2);
  CHECK_FALSE(m.is_isotropic());
  CHECK(m.variogram(40.0, -70.0) == m.variogram(40.0, -70.0, 0.0));
  // Without ratio2 the vertical range is the major range.
  CHECK(m.variogram(0.0, 0.0, 120.0) ==
        Approx(0.1 + single("spherical(range=300)").variogram(120.0)));
  CHECK(single("gaussian(range=10, ratio2=0.5)").dimension() == 3);
  CHECK(single("gaussian(range=10, plunge=5)").dimension() == 3);
}

TEST_CASE("the distance path is the lag path for isotropic models, refused otherwise", "[model]") {
  const auto iso =
      parse_model_spec("0.2 nugget + 1 matern(range=80, nu=2.5) + 0.5 gaussian(range=40)");
  CHECK(iso.is_isotropic());
  for (double h : {0.0, 3.0, 40.0, 95.0}) {
    CHECK(iso.variogram(h) == Approx(iso.variogram(h * 0.6, h * 0.8)).epsilon(1e-14));
    CHECK(iso.covariance(h) == Approx(iso.covariance(0.0, 0.0, h)).epsilon(1e-14));
  }
  const auto aniso = single("spherical(range=10, ratio=0.5)");
  CHECK_THROWS_AS(aniso.variogram(5.0), std::logic_error);
  CHECK_THROWS_AS(aniso.covariance(5.0), std::logic_error);
}

// ------------------------------------------------------------------------ SPEC

TEST_CASE("the SPEC of the contract reads into its structures", "[model][spec]") {
  const auto m = parse_model_spec(
      "0.2 nugget + 1.1 spherical(range=450) + 0.4 exponential(range=2000, azimuth=30, ratio=0.5)");
  REQUIRE(m.structures().size() == 3);
  const auto& s = m.structures();
  CHECK(s[0].family == Family::nugget);
  CHECK(s[0].sill == 0.2);
  CHECK(s[1].family == Family::spherical);
  CHECK(s[1].sill == 1.1);
  CHECK(s[1].range == 450.0);
  CHECK(s[1].anisotropy == Anisotropy{});
  CHECK(s[2].family == Family::exponential);
  CHECK(s[2].range == 2000.0);
  CHECK(s[2].anisotropy.azimuth == 30.0);
  CHECK(s[2].anisotropy.ratio == 0.5);
  CHECK(m.total_sill() == Approx(1.7).epsilon(1e-15));
}

TEST_CASE("the SPEC allows scientific notation, any blanks and 3D keys", "[model][spec]") {
  const auto a = parse_model_spec("2e-1nugget+1.1E0 spherical( range = 4.5e2 )");
  const auto b = parse_model_spec("  0.2 nugget + 1.1 spherical(range=450)  ");
  CHECK(a == b);
  const auto c = parse_model_spec(
      "1 matern(range=300, nu=1.5) + 0.01 power(exponent=1.5) + "
      "2 cubic(range=50, azimuth=-20, ratio=0.5, dip=15, plunge=-10, ratio2=0.1) + 1 nugget()");
  REQUIRE(c.structures().size() == 4);
  CHECK(c.structures()[0].nu == 1.5);
  CHECK(c.structures()[1].exponent == 1.5);
  const Anisotropy& an = c.structures()[2].anisotropy;
  CHECK(an.azimuth == -20.0);
  CHECK(an.dip == 15.0);
  CHECK(an.plunge == -10.0);
  CHECK(an.ratio2 == 0.1);
  CHECK(c.structures()[3].family == Family::nugget);
}

TEST_CASE("SPEC errors quote the spec and point at the column of the fault", "[model][spec]") {
  CHECK(error_of([] { parse_model_spec("0.2 nuget + 1 spherical(range=1)"); }) ==
        "model: \"0.2 nuget + 1 spherical(range=1)\" column 5: unknown family 'nuget' "
        "(families: nugget, spherical, exponential, gaussian, cubic, matern, power)");
  struct Case {
    const char* spec;
    int column;
    const char* says;
  };
  // Columns counted by hand, 1-based.
  const Case cases[] = {
      {"", 1, "empty model"},
      {"   ", 4, "empty model"},
      {"spherical(range=100)", 1, "missing the sill before 'spherical'"},
      {"1 spherical(range=100, rnage=3)", 24, "unknown parameter 'rnage' for spherical"},
      {"1 spherical(range=100, range=200)", 24, "duplicate parameter 'range'"},
      {"1 spherical", 3, "spherical needs range=..."},
      {"1 spherical()", 3, "spherical needs range=..."},
      {"1 matern(range=100)", 3, "matern needs nu=..."},
      {"1 nugget + 1 spherical(range=100))", 34, "expected '+'"},
      {"0.2 nugget 1.1 spherical(range=450)", 12, "expected '+'"},
      {"1 nugget +", 11, "expected the sill of a structure"},
      {"-0.2 nugget + 1 spherical(range=1)", 1, "sill must be >= 0 (got -0.2)"},
      {"1 spherical(range=-5)", 19, "range must be > 0 (got -5)"},
      {"1 spherical(range=0)", 19, "range must be > 0 (got 0)"},
      {"1 spherical(range=100, ratio=1.5)", 30, "ratio must be in (0, 1] (got 1.5)"},
      {"1 spherical(range=100, ratio2=0)", 31, "ratio2 must be in (0, 1] (got 0)"},
      {"1 spherical(range=100, dip=95)", 28, "dip must be in [-90, 90] (got 95)"},
      {"1 power(exponent=2)", 18, "exponent must be in (0, 2) (got 2)"},
      {"1 power(range=5, exponent=1)", 9, "unknown parameter 'range' for power"},
      {"1 nugget(range=5)", 10, "unknown parameter 'range' for nugget (nugget takes none)"},
      {"1 matern(range=10, nu=0.01)", 23, "nu must be in [0.05, 20] (got 0.01)"},
      {"0.5 nugget + 0.5 nugget", 18, "a second nugget structure"},
      {"0 spherical(range=10)", 1, "the sills add up to 0"},
      // Each sill is finite, their sum is not: covariances would be inf - inf.
      {"1e308 nugget + 1e308 spherical(range=1)", 1,
       "the sills add up to more than a double can hold"},
      {"1 spherical(range=100", 22, "missing ')'"},
      {"1 spherical(range 100)", 19, "expected '=' after 'range'"},
      {"1 spherical(range=100 ratio=1)", 23, "expected ',' or ')'"},
      {"1 spherical(range=inf)", 19, "expected a number for range, found 'inf)'"},
      {"1 spherical(range=1e999)", 19, "is not a usable number"},
      {"+1 nugget", 1, "expected the sill of a structure, found '+1'"},
      {"1 2", 3, "expected a family name after the sill"},
  };
  for (const Case& c : cases) {
    INFO("spec: " << c.spec);
    const std::string message = error_of([&] { parse_model_spec(c.spec); });
    CHECK_THAT(message, Catch::StartsWith("model: \"" + std::string(c.spec) + "\" column " +
                                          std::to_string(c.column) + ": "));
    CHECK_THAT(message, Catch::Contains(c.says));
  }
}

TEST_CASE("to_spec writes the canonical SPEC, which reads back to the same model",
          "[model][spec]") {
  const std::string contract =
      "0.2 nugget + 1.1 spherical(range=450) + 0.4 exponential(range=2000, azimuth=30, ratio=0.5)";
  CHECK(to_spec(parse_model_spec(contract)) == contract);
  CHECK(to_spec(parse_model_spec("1e-1 nugget() + 2 matern(ratio=0.5, nu=1.5, range=3e2)")) ==
        "0.1 nugget + 2 matern(range=300, nu=1.5, ratio=0.5)");
  // Random models with awkward numbers (fixed seed): exact round trips.
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> u(0, 1);
  for (int i = 0; i < 100; ++i) {
    std::vector<Structure> structures;
    if (u(rng) < 0.5) {
      Structure n;
      n.family = Family::nugget;
      n.sill = u(rng) * 1e-3;
      structures.push_back(n);
    }
    for (Family f : {Family::spherical, Family::exponential, Family::gaussian, Family::cubic,
                     Family::matern, Family::power}) {
      if (u(rng) < 0.5) continue;
      Structure s;
      s.family = f;
      s.sill = u(rng) * 1e4 + 0.1 + 0.2;
      if (f != Family::power) s.range = std::exp(u(rng) * 20 - 5);
      if (f == Family::matern) s.nu = 0.05 + u(rng) * 19.95;
      if (f == Family::power) s.exponent = 1.9999 * u(rng) + 1e-5;
      s.anisotropy.azimuth = u(rng) * 720 - 360;
      s.anisotropy.ratio = 1 - u(rng) * 0.999;
      if (u(rng) < 0.5) {
        s.anisotropy.dip = u(rng) * 180 - 90;
        s.anisotropy.plunge = u(rng) * 180 - 90;
        s.anisotropy.ratio2 = 1 - u(rng) * 0.999;
      }
      structures.push_back(s);
    }
    if (structures.empty()) continue;
    const CovarianceModel m(structures);
    INFO(to_spec(m));
    CHECK(parse_model_spec(to_spec(m)) == m);
    ModelFile file;
    file.model = m;
    CHECK(model_from_json(model_to_json(file), "memory").model == m);
  }
}

// ------------------------------------------------------------------------ JSON

TEST_CASE("model.json of the contract reads into the contract's SPEC model", "[model][json]") {
  // The model.json example of PRODUCT.md, verbatim.
  const std::string text = R"({ "structures": [
    {"family": "nugget", "sill": 0.2},
    {"family": "spherical", "sill": 1.1, "range": 450},
    {"family": "exponential", "sill": 0.4, "range": 2000,
     "anisotropy": {"azimuth": 30, "ratio": 0.5}} ],
  "transform": "none",
  "fit": { "weights": "cressie", "objective": 0.0123, "lags_used": 12 } })";
  const ModelFile f = model_from_json(text, "model.json");
  CHECK(f.model == parse_model_spec("0.2 nugget + 1.1 spherical(range=450) + "
                                    "0.4 exponential(range=2000, azimuth=30, ratio=0.5)"));
  CHECK(f.transform.kind == Transform::none);
  CHECK(f.transform_recorded);
  CHECK(f.fit == R"({"weights":"cressie","objective":0.0123,"lags_used":12})");
}

TEST_CASE("model.json is written in the documented layout and reads back", "[model][json]") {
  ModelFile f;
  f.model = parse_model_spec(
      "0.2 nugget + 1.1 spherical(range=450) + 0.4 matern(range=2000.5, nu=1.5, azimuth=30, "
      "ratio=0.5, dip=10) + 0.003 power(exponent=1.2)");
  f.transform.kind = Transform::normal_score;
  f.transform.table.values = {0.5, 2.25};
  f.transform.table.scores = {-0.5, 0.5};
  f.fit = R"({"weights":"pairs","objective":1.5})";
  const std::string text = model_to_json(f);
  CHECK(text ==
        R"({
  "structures": [
    {
      "family": "nugget",
      "sill": 0.2
    },
    {
      "family": "spherical",
      "sill": 1.1,
      "range": 450
    },
    {
      "family": "matern",
      "sill": 0.4,
      "range": 2000.5,
      "nu": 1.5,
      "anisotropy": {
        "azimuth": 30,
        "ratio": 0.5,
        "dip": 10,
        "plunge": 0,
        "ratio2": 1
      }
    },
    {
      "family": "power",
      "sill": 0.003,
      "exponent": 1.2
    }
  ],
  "transform": {
    "kind": "normal-score",
    "table": [
      [
        0.5,
        -0.5
      ],
      [
        2.25,
        0.5
      ]
    ],
    "tails": {
      "below": "first value",
      "above": "last value"
    }
  },
  "fit": {
    "weights": "pairs",
    "objective": 1.5
  }
}
)");
  const ModelFile back = model_from_json(text, "model.json");
  CHECK(back.model == f.model);
  CHECK(back.transform.same_as(f.transform));
  CHECK(back.transform_recorded);
  CHECK(back.fit == f.fit);
  // Without transform and fit: the defaults.
  const ModelFile bare = model_from_json(R"({"structures":[{"family":"nugget","sill":1}]})", "m");
  CHECK(bare.transform.kind == Transform::none);
  CHECK_FALSE(bare.transform_recorded);
  REQUIRE(bare.notes.size() == 1);
  CHECK_THAT(bare.notes[0], Catch::Contains("does not record a transform"));
  CHECK(bare.fit.empty());
}

TEST_CASE("model.json errors name the file and the JSON path", "[model][json]") {
  const auto error = [](const std::string& text) {
    return error_of([&] { model_from_json(text, "site/model.json"); });
  };
  const std::string two = R"({"structures":[{"family":"nugget","sill":0.1},)";
  CHECK(error(two + R"({"family":"spherical","sill":1,"range":-3}]})") ==
        "model: site/model.json: structures[1].range: must be > 0 (got -3)");
  CHECK(error(two + R"({"family":"spherical","sill":1,"rnage":3}]})") ==
        "model: site/model.json: structures[1].rnage: unknown key "
        "(keys of spherical: family, sill, range, anisotropy)");
  CHECK(error(two + R"({"family":"spherical","sill":1,"range":3,"anisotropy":{"ratio":0}}]})") ==
        "model: site/model.json: structures[1].anisotropy.ratio: must be in (0, 1] (got 0)");
  CHECK(error(two + R"({"family":"spherical","sill":"1","range":3}]})") ==
        "model: site/model.json: structures[1].sill: expected a number, found string");
  CHECK(error(two + R"({"family":"spherical","sill":1}]})") ==
        "model: site/model.json: structures[1]: spherical needs \"range\"");
  CHECK(
      error(two + R"({"family":"nugget","sill":1}]})") ==
      "model: site/model.json: structures[1]: a second nugget structure (a model has at most one)");
  CHECK_THAT(error(two + R"({"family":"spheric","sill":1}]})"),
             Catch::StartsWith("model: site/model.json: structures[1].family: expected one of "
                               "nugget, spherical,"));
  CHECK(
      error(R"({"structures":[{"family":"nugget","sill":1}],"transform":"sqrt"})") ==
      "model: site/model.json: transform: expected one of none, log, normal-score, found \"sqrt\"");
  CHECK(error(R"({"structures":[]})") ==
        "model: site/model.json: structures: expected a non-empty array of structures");
  CHECK(error(R"({"structure":[]})") ==
        "model: site/model.json: structure: unknown key (keys: structures, transform, fit)");
  CHECK(error(R"({"transform":"none"})") == "model: site/model.json: missing \"structures\"");
  CHECK(error(R"({"structures":[{"family":"nugget","sill":1}],"fit":3})") ==
        "model: site/model.json: fit: expected an object");
  CHECK_THAT(error("{\"structures\": [\n  {\"family\": \"nugget\" \"sill\": 1}]}"),
             Catch::StartsWith("model: site/model.json: not valid JSON: parse error at line 2"));
}

TEST_CASE("load_model takes a JSON file path or a SPEC (the --model option)", "[model][json]") {
  test::ScratchDir dir;
  const std::string path =
      dir.write("fitted.json",
                R"({"structures":[{"family":"gaussian","sill":2,"range":70}],"transform":"log"})");
  const ModelFile from_file = load_model(path);
  CHECK(from_file.model == parse_model_spec("2 gaussian(range=70)"));
  CHECK(from_file.transform.kind == Transform::log);  // the text form of older files
  CHECK(from_file.transform.log_offset == 0);
  CHECK(from_file.transform_recorded);
  const ModelFile from_spec = load_model("2 gaussian(range=70)");
  CHECK(from_spec.model == from_file.model);
  CHECK(from_spec.transform.kind == Transform::none);
  CHECK_FALSE(from_spec.transform_recorded);
  CHECK(error_of([&] { load_model(dir.path("missing.json")); }) ==
        "model: " + dir.path("missing.json") + ": cannot open the model file");
  CHECK_THAT(error_of([] { load_model("2 gausian(range=70)"); }), Catch::Contains("column 3"));
}

// -------------------------------------------------------------------- validity

TEST_CASE("validity rules say which structure and parameter are wrong", "[model]") {
  Structure s;
  s.family = Family::spherical;
  s.sill = 1;
  std::string why;
  CHECK_FALSE(s.is_valid(&why));
  CHECK(why == "spherical range must be > 0 (got 0)");
  s.range = 10;
  CHECK(s.is_valid(&why));
  s.nu = 1;
  CHECK_FALSE(s.is_valid(&why));
  CHECK(why == "spherical nu is not a parameter of spherical");
  s.nu = 0;
  s.anisotropy.ratio = 0;
  CHECK_FALSE(s.is_valid(nullptr));
  s.anisotropy.ratio = std::numeric_limits<double>::quiet_NaN();
  CHECK_FALSE(s.is_valid(&why));
  CHECK(why == "spherical ratio must be in (0, 1] (got nan)");

  Structure n;
  n.family = Family::nugget;
  n.sill = 0.5;
  CHECK(n.is_valid(&why));
  n.anisotropy.azimuth = 10;
  CHECK_FALSE(n.is_valid(&why));
  CHECK(why == "nugget azimuth is not a parameter of nugget");
  n.anisotropy.azimuth = 0;

  s.anisotropy.ratio = 1;
  s.sill = -1;
  CHECK_FALSE(CovarianceModel::is_valid({n, s}, &why));
  CHECK(why == "structure 2 (spherical): sill must be >= 0 (got -1)");
  CHECK_FALSE(CovarianceModel::is_valid({}, &why));
  CHECK(why == "a model needs at least one structure");
  CHECK(error_of([&] {
          CovarianceModel({n, n});
        }) == "model: structure 2 (nugget): a second nugget structure (a model has at most one)");
}
