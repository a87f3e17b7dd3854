// Fitting covariance models: recovery of known models from noise-free
// variograms (isotropic, directional, 3D), bounds, holds, the auto ranking,
// the Cambardella classes, the warnings, the scale and translation
// properties, and the model file.
//
// "Noise-free" variograms are made from a known model: each class's value is
// the model's semivariance at the class's mean distance along its direction,
// so the true model fits exactly and the fit must find it (to 1e-6 relative).
#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "sillstone/error.hpp"
#include "sillstone/fit.hpp"
#include "sillstone/names.hpp"
#include "sillstone/variogram.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace {

constexpr double kDegree = 0.017453292519943295;

// Classes (i w, (i+1) w], mean distance 0.4 w for the first and (i + 0.55) w
// for the others (not the class centres, so that nothing depends on them),
// pairs rising from 40, for each direction (empty: omnidirectional).
EmpiricalVariogram noise_free(const CovarianceModel& m, std::vector<double> azimuths = {},
                              int lags = 15, double w = 40, std::vector<double> dips = {}) {
  EmpiricalVariogram v;
  v.value = "v";
  v.dimension = dips.empty() ? 2 : 3;
  v.summary.samples = 400;
  std::vector<std::pair<std::optional<double>, std::optional<double>>> directions;
  if (azimuths.empty() && dips.empty()) directions.push_back({std::nullopt, std::nullopt});
  for (double a : azimuths)
    directions.push_back({a, dips.empty() ? std::nullopt : std::optional<double>(0.0)});
  for (double d : dips) directions.push_back({std::nullopt, d});
  for (const auto& [azimuth, dip] : directions) {
    for (int i = 0; i < lags; ++i) {
      VariogramRow r;
      r.azimuth = azimuth;
      r.dip = dip;
      r.lag_from = i * w;
      r.lag_to = (i + 1) * w;
      r.mean_distance = i == 0 ? 0.4 * w : (i + 0.55) * w;
      r.pairs = static_cast<std::uint64_t>(40 + 25 * i);
      const double a = azimuth.value_or(0) * kDegree, d = dip.value_or(0) * kDegree;
      const double h = r.mean_distance;
      r.value = m.variogram(h * std::sin(a) * std::cos(d), h * std::cos(a) * std::cos(d),
                            -h * std::sin(d));
      v.rows.push_back(r);
    }
  }
  v.options.lag = w;
  v.options.lags = lags;
  v.options.max_distance = lags * w;
  v.options.azimuths = azimuths;
  v.options.dips = dips;
  return v;
}

FitOptions with(std::vector<Family> structures, FitWeights weights = FitWeights::cressie) {
  FitOptions o;
  o.structures = std::move(structures);
  o.weights = weights;
  return o;
}

// Every parameter of two models within `rel` (relative, absolute below 1e-9).
void check_same(const CovarianceModel& got, const CovarianceModel& want, double rel = 1e-6) {
  INFO("fitted " << to_spec(got) << "\nwanted " << to_spec(want));
  REQUIRE(got.structures().size() == want.structures().size());
  for (std::size_t i = 0; i < want.structures().size(); ++i) {
    const Structure& a = got.structures()[i];
    const Structure& b = want.structures()[i];
    CHECK(a.family == b.family);
    CHECK(a.sill == Approx(b.sill).epsilon(rel).margin(1e-9));
    CHECK(a.range == Approx(b.range).epsilon(rel));
    CHECK(a.nu == Approx(b.nu).epsilon(rel));
    CHECK(a.exponent == Approx(b.exponent).epsilon(rel));
    CHECK(a.anisotropy.ratio == Approx(b.anisotropy.ratio).epsilon(rel));
    CHECK(a.anisotropy.ratio2 == Approx(b.anisotropy.ratio2).epsilon(rel));
    if (b.anisotropy.ratio < 1)
      CHECK(a.anisotropy.azimuth == Approx(b.anisotropy.azimuth).epsilon(rel));
  }
}

bool has_text(const std::vector<std::string>& lines, const std::string& part) {
  for (const auto& l : lines)
    if (l.find(part) != std::string::npos) return true;
  return false;
}

// A spatially correlated field at random points: a sum of random cosines
// (a spectral simulation with a gaussian-shaped spectrum) plus white noise.
SampleSet correlated_samples(std::size_t n, std::uint64_t seed, double shift_x = 0,
                             double shift_y = 0, double scale = 1) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> u(0, 1000), phase(0, 2 * std::acos(-1.0));
  std::normal_distribution<double> g(0, 1);
  std::vector<std::array<double, 3>> waves;
  for (int j = 0; j < 60; ++j) waves.push_back({g(rng) / 120, g(rng) / 240, phase(rng)});
  SampleSet s;
  s.source = "synthetic";
  s.value_names = {"v"};
  s.values.resize(1);
  s.censored.resize(1);
  for (std::size_t i = 0; i < n; ++i) {
    const double x = u(rng), y = u(rng);
    double z = 0;
    for (const auto& w : waves) z += std::cos(w[0] * x + w[1] * y + w[2]);
    z = 5 + z * std::sqrt(2.0 / 60) + 0.3 * g(rng);
    s.points.push_back({x + shift_x, y + shift_y, 0});
    s.values[0].push_back(z * scale);
    s.censored[0].push_back(0);
    s.ids.push_back("line " + std::to_string(i + 2));
    s.row_numbers.push_back(static_cast<std::int64_t>(i + 2));
  }
  return s;
}

}  // namespace

TEST_CASE("noise-free variograms give back the model of every family", "[fit]") {
  const std::vector<std::string> specs = {
      "0.2 nugget + 1 spherical(range=300)",
      "0.2 nugget + 1 exponential(range=250)",
      "0.1 nugget + 2 gaussian(range=200)",
      "0.3 nugget + 1.5 cubic(range=350)",
      "0.2 nugget + 1 matern(range=280, nu=1.5)",
      "0.2 nugget + 0.004 power(exponent=1.3)",
      "0.1 nugget + 0.6 spherical(range=120) + 0.8 exponential(range=450)",
  };
  for (const auto& spec : specs) {
    const CovarianceModel truth = parse_model_spec(spec);
    std::vector<Family> families;
    for (const auto& s : truth.structures()) families.push_back(s.family);
    for (FitWeights w : {FitWeights::cressie, FitWeights::pairs, FitWeights::equal}) {
      INFO(spec << " with " << name_of(w) << " weights");
      const FitResult r = fit_model(noise_free(truth), with(families, w));
      CHECK(r.summary.converged);
      check_same(r.model, truth);
      double zero_model = 0;  // the objective of the model 0 everywhere
      for (const FitRow& row : r.rows) zero_model += row.weight * row.empirical * row.empirical;
      CHECK(r.objective <= 1e-20 * zero_model);
      CHECK(r.lags_used == 15);
      CHECK(r.parameters == 2 * families.size() - 1);
    }
  }
}

TEST_CASE("matern nu is held at 1.5 unless it is fitted or held elsewhere", "[fit]") {
  const CovarianceModel truth = parse_model_spec("0.1 nugget + 1 matern(range=300, nu=2.5)");
  FitOptions o = with({Family::nugget, Family::matern});
  FitResult held = fit_model(noise_free(truth), o);
  CHECK(held.model.structures()[1].nu == 1.5);
  CHECK(held.objective > 1e-6);  // the wrong smoothness cannot fit exactly
  o.fit_nu = true;
  check_same(fit_model(noise_free(truth), o).model, truth);
  o.fit_nu = false;
  o.fixed = parse_fixes("nu=2.5");
  check_same(fit_model(noise_free(truth), o).model, truth);
}

TEST_CASE("fitted parameters respect their bounds", "[fit]") {
  // A straight line never levels off: the range stops at 3 L, with a warning.
  CovarianceModel line = parse_model_spec("0.01 power(exponent=1)");
  const FitResult r = fit_model(noise_free(line), with({Family::nugget, Family::spherical}));
  const double largest = r.largest_lag;
  CHECK(largest == Approx(14.55 * 40));
  CHECK(r.model.structures()[1].range == Approx(3 * largest).epsilon(1e-12));
  CHECK(has_text(r.summary.warnings, "range stopped at its upper bound"));
  CHECK(has_text(r.summary.warnings, "beyond the largest lag"));
  for (const auto& s : r.model.structures()) CHECK(s.sill >= 0);

  // A variogram that falls with distance: sills stay >= 0, the spherical gets none.
  EmpiricalVariogram falling = noise_free(parse_model_spec("1 nugget"));
  for (std::size_t i = 0; i < falling.rows.size(); ++i)
    falling.rows[i].value = 2.0 - 0.05 * static_cast<double>(i);
  const FitResult f = fit_model(falling, with({Family::nugget, Family::spherical}));
  CHECK(f.model.structures()[1].sill == 0);
  CHECK(f.model.structures()[0].sill > 0);
  CHECK(has_text(f.summary.warnings, "pure nugget"));

  // Power exponents stay in [0.01, 1.99]: a parabola asks for 2.
  EmpiricalVariogram parabola = noise_free(parse_model_spec("1 nugget"));
  for (auto& row : parabola.rows) row.value = 1e-4 * row.mean_distance * row.mean_distance;
  const FitResult p = fit_model(parabola, with({Family::power}));
  CHECK(p.model.structures()[0].exponent == Approx(1.99).epsilon(1e-12));
  CHECK(has_text(p.summary.warnings, "exponent stopped at its upper bound"));
}

TEST_CASE("holds given with --fix are honoured", "[fit]") {
  const CovarianceModel truth =
      parse_model_spec("0.2 nugget + 0.6 spherical(range=120) + 0.8 exponential(range=450)");
  const EmpiricalVariogram v = noise_free(truth);
  FitOptions o = with({Family::nugget, Family::spherical, Family::exponential});

  // Held at the truth, the rest is recovered exactly.
  o.fixed = parse_fixes("3.range=450,nugget=0.2");
  FitResult r = fit_model(v, o);
  CHECK(r.model.structures()[2].range == 450);
  CHECK(r.model.structures()[0].sill == 0.2);
  check_same(r.model, truth);
  CHECK(r.parameters == 3);
  CHECK(r.fixed == std::vector<std::string>{"3.range=450", "nugget=0.2"});

  // Held elsewhere, the holds are kept exactly and the fit moves the others.
  o.fixed = parse_fixes("2.range=200, 2.sill=0.5");
  r = fit_model(v, o);
  CHECK(r.model.structures()[1].range == 200);
  CHECK(r.model.structures()[1].sill == 0.5);
  CHECK(r.objective > 0);

  // Without a number a hold applies to every structure that has the parameter.
  o.fixed = parse_fixes("range=300");
  r = fit_model(v, o);
  CHECK(r.model.structures()[1].range == 300);
  CHECK(r.model.structures()[2].range == 300);

  // Everything held: nothing is fitted, and the model is the holds.
  o = with({Family::nugget, Family::spherical});
  o.fixed = parse_fixes("nugget=0.1,sill=1,range=250");
  r = fit_model(v, o);
  CHECK(r.summary.termination == FitTermination::no_free_parameters);
  CHECK(r.summary.converged);
  CHECK(to_spec(r.model) == "0.1 nugget + 1 spherical(range=250)");
  // Only sills free: linear least squares, solved exactly.
  o.fixed = parse_fixes("range=300");
  r = fit_model(noise_free(parse_model_spec("0.2 nugget + 1 spherical(range=300)")), o);
  CHECK(r.summary.termination == FitTermination::sills_only);
  check_same(r.model, parse_model_spec("0.2 nugget + 1 spherical(range=300)"));
}

TEST_CASE("the text of --fix is read strictly and faults are named", "[fit]") {
  auto f = parse_fixes("range=450");
  REQUIRE(f.size() == 1);
  CHECK(f[0].structure == 0);
  CHECK(f[0].key == "range");
  CHECK(f[0].value == 450);
  f = parse_fixes(" 2.range = 300 ,nugget=0.1,azimuth=longest");
  REQUIRE(f.size() == 3);
  CHECK(f[0].structure == 2);
  CHECK(f[0].text() == "2.range=300");
  CHECK(f[1].key == "nugget");
  CHECK(f[2].longest);
  CHECK(f[2].text() == "azimuth=longest");

  auto fails = [](const std::string& text, const std::string& part) {
    INFO(text);
    try {
      parse_fixes(text);
      FAIL("accepted");
    } catch (const InputError& e) {
      CHECK_THAT(e.what(), Catch::Contains(part));
    }
  };
  fails("range450", "expected [N.]KEY=VALUE");
  fails("rnage=4", "unknown parameter 'rnage'");
  fails("range=abc", "'abc' is not a number");
  fails("range=inf", "is not a number");
  fails("0.range=4", "whole number from 1");
  fails("x.range=4", "whole number from 1");
  fails("2.nugget=1", "N.sill=VALUE");
  fails("ratio=longest", "azimuth only");
  fails("range=1,,sill=2", "an empty item");
}

TEST_CASE("holds are checked against the structures", "[fit]") {
  auto invalid = [](std::vector<Family> s, const std::string& fixes, const std::string& part) {
    FitOptions o = with(std::move(s));
    o.fixed = parse_fixes(fixes);
    std::string why;
    INFO(fixes);
    CHECK_FALSE(o.is_valid(&why));
    CHECK_THAT(why, Catch::Contains(part));
  };
  invalid({Family::spherical}, "nugget=0.1", "--structures has no nugget");
  invalid({Family::nugget, Family::spherical}, "3.range=1", "only 2 structures");
  invalid({Family::nugget, Family::spherical}, "1.range=1", "range is not a parameter of nugget");
  invalid({Family::nugget, Family::spherical}, "nu=1", "no structure in --structures has");
  invalid({Family::nugget, Family::spherical}, "range=-3", "range must be > 0");
  invalid({Family::nugget, Family::spherical}, "ratio=1.5", "ratio must be in (0, 1]");
  invalid({Family::nugget, Family::power}, "exponent=2", "exponent must be in (0, 2)");
  invalid({Family::nugget, Family::spherical}, "range=1,2.range=2", "held twice");
  invalid({Family::nugget, Family::spherical}, "nugget=0,sill=0", "every sill is held at 0");
  FitOptions o = with({Family::nugget, Family::nugget});
  std::string why;
  CHECK_FALSE(o.is_valid(&why));
  CHECK_THAT(why, Catch::Contains("at most one nugget"));
  o = with({});
  CHECK_FALSE(o.is_valid(&why));
  CHECK(with({Family::nugget, Family::spherical}).is_valid(&why));
}

TEST_CASE("directional variograms give back the azimuth and ratio of one anisotropic model",
          "[fit]") {
  for (const std::string spec :
       {"0.1 nugget + 1 spherical(range=400, azimuth=30, ratio=0.5)",
        "0.1 nugget + 1 exponential(range=500, azimuth=120, ratio=0.4)",
        "0.2 nugget + 1 gaussian(range=300, azimuth=75, ratio=0.7)",
        "0.1 nugget + 0.5 spherical(range=150, azimuth=160, ratio=0.6) + 0.7 spherical(range=500, "
        "azimuth=160, ratio=0.3)"}) {
    const CovarianceModel truth = parse_model_spec(spec);
    std::vector<Family> families;
    for (const auto& s : truth.structures()) families.push_back(s.family);
    INFO(spec);
    const FitResult r = fit_model(noise_free(truth, {0, 45, 90, 135}), with(families));
    CHECK(r.summary.converged);
    CHECK(r.lags_used == 60);
    check_same(r.model, truth);
  }
}

TEST_CASE("two azimuths hold the azimuth at the longest, one gives an isotropic model", "[fit]") {
  const CovarianceModel truth =
      parse_model_spec("0.1 nugget + 1 spherical(range=400, azimuth=90, ratio=0.5)");
  const FitResult two =
      fit_model(noise_free(truth, {0, 90}), with({Family::nugget, Family::spherical}));
  CHECK(has_text(two.summary.notes, "the azimuth is held at 90"));
  check_same(two.model, truth);

  const FitResult one =
      fit_model(noise_free(truth, {90}), with({Family::nugget, Family::spherical}));
  CHECK(one.model.is_isotropic());
  CHECK(one.model.structures()[1].range == Approx(400).epsilon(1e-6));
  CHECK(has_text(one.summary.notes, "one azimuth cannot show anisotropy"));

  FitOptions o = with({Family::nugget, Family::spherical});
  o.fixed = parse_fixes("azimuth=longest");
  const FitResult longest = fit_model(noise_free(truth, {0, 45, 90, 135}), o);
  CHECK(longest.model.structures()[1].anisotropy.azimuth == 90);
  check_same(longest.model, truth);

  o.fixed = parse_fixes("ratio=0.5");  // without directions there is no ratio to hold
  CHECK_THROWS_WITH(fit_model(noise_free(truth), o),
                    Catch::Contains("needs a variogram with two or more azimuths"));
}

TEST_CASE("3D directional variograms give back the vertical ratio", "[fit]") {
  const CovarianceModel truth =
      parse_model_spec("0.1 nugget + 1 spherical(range=400, azimuth=60, ratio=0.5, ratio2=0.2)");
  const FitResult r = fit_model(noise_free(truth, {0, 45, 90, 135}, 15, 40, {90}),
                                with({Family::nugget, Family::spherical}));
  CHECK(r.summary.converged);
  check_same(r.model, truth);
  // A vertical range longer than the horizontal ones: the major axis is vertical (dip 90).
  const CovarianceModel deep =
      parse_model_spec("1 exponential(range=200, dip=90, azimuth=30, ratio=0.5, ratio2=0.4)");
  const FitResult d =
      fit_model(noise_free(deep, {0, 45, 90, 135}, 15, 40, {90}), with({Family::exponential}));
  CHECK(d.summary.converged);
  check_same(d.model, deep);
  CHECK(d.model.structures()[0].anisotropy.dip == 90);
}

TEST_CASE("auto ranking picks the true family on noise-free data", "[fit]") {
  for (const std::string spec :
       {"0.2 nugget + 1 spherical(range=300)", "0.2 nugget + 1 exponential(range=300)",
        "0.2 nugget + 1 gaussian(range=300)", "0.2 nugget + 1 cubic(range=300)",
        "0.2 nugget + 1 matern(range=300, nu=1.5)", "0.2 nugget + 0.01 power(exponent=0.8)",
        "0.1 nugget + 0.5 spherical(range=100) + 1 spherical(range=400)"}) {
    const CovarianceModel truth = parse_model_spec(spec);
    std::vector<Family> families;
    for (const auto& s : truth.structures()) families.push_back(s.family);
    INFO(spec);
    const auto ranked = fit_auto(noise_free(truth), FitOptions{});
    REQUIRE(ranked.size() == auto_candidates().size());
    CHECK(ranked.front().structures == families);
    check_same(ranked.front().model, truth);
    for (std::size_t i = 1; i < ranked.size(); ++i) CHECK(ranked[i - 1].aic <= ranked[i].aic);
  }
}

TEST_CASE("auto applies unnumbered holds where they fit and refuses numbered ones", "[fit]") {
  const EmpiricalVariogram v = noise_free(parse_model_spec("0.2 nugget + 1 spherical(range=300)"));
  FitOptions o;
  o.fixed = parse_fixes("nugget=0.2,nu=2.5");
  const auto ranked = fit_auto(v, o);
  for (const auto& r : ranked) {
    CHECK(r.model.nugget() == 0.2);
    for (const auto& s : r.model.structures())
      if (s.family == Family::matern) CHECK(s.nu == 2.5);
  }
  o.fixed = parse_fixes("2.range=100");
  CHECK_THROWS_WITH(fit_auto(v, o), Catch::Contains("holds name no structure number"));
  o.fixed = parse_fixes("ratio2=0.5");
  CHECK_THROWS_AS(fit_auto(v, o), InputError);
}

TEST_CASE("the spatial-dependence classes of Cambardella et al. (1994)", "[fit]") {
  CHECK(spatial_dependence(0.0) == SpatialDependence::strong);
  CHECK(spatial_dependence(0.2499) == SpatialDependence::strong);
  CHECK(spatial_dependence(0.25) == SpatialDependence::moderate);
  CHECK(spatial_dependence(0.75) == SpatialDependence::moderate);
  CHECK(spatial_dependence(0.7501) == SpatialDependence::weak);
  CHECK(spatial_dependence(1.0) == SpatialDependence::weak);
  CHECK(spatial_dependence(std::nan("")) == SpatialDependence::undefined);
  // From a fit: 0.5 / (0.5 + 1) = 1/3, moderate.
  const FitResult r = fit_model(noise_free(parse_model_spec("0.5 nugget + 1 spherical(range=300)")),
                                with({Family::nugget, Family::spherical}));
  CHECK(r.nugget_ratio == Approx(1.0 / 3).epsilon(1e-6));
  CHECK(r.dependence == SpatialDependence::moderate);
  const FitResult p = fit_model(noise_free(parse_model_spec("0.5 nugget + 0.01 power(exponent=1)")),
                                with({Family::nugget, Family::power}));
  CHECK(std::isnan(p.nugget_ratio));
  CHECK(p.dependence == SpatialDependence::undefined);
}

TEST_CASE("warnings: few samples, few pairs, sill against variance, non-convergence", "[fit]") {
  const CovarianceModel truth = parse_model_spec("0.2 nugget + 1 spherical(range=300)");
  EmpiricalVariogram v = noise_free(truth);
  FitResult r = fit_model(v, with({Family::nugget, Family::spherical}));
  CHECK(r.summary.warnings.empty());

  v.summary.samples = 60;
  v.rows[0].pairs = 12;
  v.rows[1].pairs = 29;
  v.summary.variance = 3.0;  // the total sill 1.2 is 60 % below
  r = fit_model(v, with({Family::nugget, Family::spherical}));
  CHECK(has_text(r.summary.warnings, "only 60 samples"));
  CHECK(has_text(r.summary.warnings, "Webster & Oliver 1992"));
  CHECK(has_text(r.summary.warnings, "2 of the 15 classes used have fewer than 30 pairs"));
  CHECK(has_text(r.summary.warnings, "60 % away from the sample variance 3"));
  v.summary.variance = 1.2 * 1.49;  // within 50 %
  r = fit_model(v, with({Family::nugget, Family::spherical}));
  CHECK_FALSE(has_text(r.summary.warnings, "sample variance"));

  // A range below the second class (first classes at 16 and 62): only the first class sees it.
  r = fit_model(noise_free(parse_model_spec("0.2 nugget + 1 spherical(range=30)")),
                with({Family::nugget, Family::spherical}));
  CHECK(has_text(r.summary.warnings, "below the second class's distance 62"));
  CHECK(has_text(r.summary.warnings, "poorly determined"));

  // One iteration is not enough from the starts on a noisy variogram.
  EmpiricalVariogram noisy = noise_free(truth, {}, 15);
  for (std::size_t i = 0; i < noisy.rows.size(); ++i)
    noisy.rows[i].value *= 1 + 0.2 * std::sin(3.0 * static_cast<double>(i));
  FitOptions once = with({Family::nugget, Family::spherical}, FitWeights::pairs);
  once.max_iterations = 1;
  r = fit_model(noisy, once);
  CHECK_FALSE(r.summary.converged);
  CHECK(r.summary.termination == FitTermination::iteration_limit);
  CHECK(has_text(r.summary.warnings, "did not converge (iteration-limit)"));
  once.max_iterations = 500;
  r = fit_model(noisy, once);
  CHECK(r.summary.converged);
  CHECK_FALSE(has_text(r.summary.warnings, "did not converge"));
}

TEST_CASE("Cressie's weights end at the fitted model's N / gamma^2", "[fit]") {
  EmpiricalVariogram v = noise_free(parse_model_spec("0.2 nugget + 1 exponential(range=300)"));
  for (std::size_t i = 0; i < v.rows.size(); ++i)
    v.rows[i].value *= 1 + 0.15 * std::cos(2.0 * static_cast<double>(i));
  const FitResult r = fit_model(v, with({Family::nugget, Family::exponential}));
  CHECK(r.summary.converged);
  CHECK(r.summary.weight_rounds > 0);
  double objective = 0;
  for (const FitRow& row : r.rows) {
    CHECK(row.weight == Approx(row.pairs / (row.model * row.model)).epsilon(1e-8));
    objective += row.pairs * std::pow(row.empirical / row.model - 1, 2);
  }
  CHECK(r.objective == Approx(objective).epsilon(1e-12));
}

TEST_CASE("scaling the data by k scales the sills by k^2, moving the samples changes nothing",
          "[fit]") {
  const double k = 7.3;  // not a power of 2: the scaled data differ in their last bits
  for (FitWeights w : {FitWeights::cressie, FitWeights::pairs, FitWeights::equal}) {
    for (bool directional : {false, true}) {
      INFO(name_of(w) << (directional ? ", directional" : ", omnidirectional"));
      VariogramOptions vo;
      vo.lag = 40;
      vo.lags = 12;
      if (directional) vo.azimuths = {0, 45, 90, 135};
      // Well-posed fits: a nested model omnidirectionally, one anisotropic
      // structure with directions.
      const FitOptions o = directional
                               ? with({Family::nugget, Family::gaussian}, w)
                               : with({Family::nugget, Family::spherical, Family::exponential}, w);
      const FitResult base = fit_model(compute_variogram(correlated_samples(400, 11), vo), o);
      const FitResult scaled =
          fit_model(compute_variogram(correlated_samples(400, 11, 0, 0, k), vo), o);
      const FitResult moved =
          fit_model(compute_variogram(correlated_samples(400, 11, 431000, 5712000), vo), o);
      REQUIRE(base.summary.converged);
      CHECK(base.model.total_sill() > 0);
      for (std::size_t i = 0; i < base.model.structures().size(); ++i) {
        const Structure& b = base.model.structures()[i];
        const Structure& s = scaled.model.structures()[i];
        const Structure& m = moved.model.structures()[i];
        CHECK(s.sill == Approx(k * k * b.sill).epsilon(1e-6).margin(1e-9 * k * k));
        CHECK(m.sill == Approx(b.sill).epsilon(1e-6).margin(1e-9));
        if (b.sill == 0) continue;  // a structure without sill has no shape to compare
        CHECK(s.range == Approx(b.range).epsilon(1e-6));
        CHECK(s.anisotropy.azimuth == Approx(b.anisotropy.azimuth).epsilon(1e-6));
        CHECK(s.anisotropy.ratio == Approx(b.anisotropy.ratio).epsilon(1e-6));
        CHECK(m.range == Approx(b.range).epsilon(1e-6));
        CHECK(m.anisotropy.azimuth == Approx(b.anisotropy.azimuth).epsilon(1e-6));
        CHECK(m.anisotropy.ratio == Approx(b.anisotropy.ratio).epsilon(1e-6));
      }
      if (directional) CHECK(base.model.structures()[1].anisotropy.ratio < 1);
      // The objective scales with the weights' units: k^4 for pairs and
      // equal, not at all for Cressie's (dimensionless); AIC = n ln(S/n) + 2p
      // moves by n ln(k^4) or not at all.
      const double power = w == FitWeights::cressie ? 0 : 4;
      CHECK(scaled.objective == Approx(std::pow(k, power) * base.objective).epsilon(1e-6));
      const double n = static_cast<double>(base.lags_used);
      CHECK(scaled.aic == Approx(base.aic + n * power * std::log(k)).epsilon(1e-9).margin(1e-6));
    }
  }
}

TEST_CASE("bad variograms are refused with InputError", "[fit]") {
  const CovarianceModel truth = parse_model_spec("0.2 nugget + 1 spherical(range=300)");
  EmpiricalVariogram v = noise_free(truth, {}, 3);
  FitOptions nested = with({Family::nugget, Family::spherical, Family::exponential});
  CHECK_THROWS_WITH(fit_model(v, nested), Catch::Contains("3 classes to fit, fewer than the 5"));
  v = noise_free(truth);
  v.options.statistic = VariogramStatistic::covariance;
  CHECK_THROWS_WITH(fit_model(v, with({Family::spherical})),
                    Catch::Contains("fit needs semivariance"));
  v = noise_free(truth);
  v.rows[3].value = -1;
  CHECK_THROWS_WITH(fit_model(v, with({Family::spherical})),
                    Catch::Contains("negative semivariance"));
  for (auto& row : v.rows) row.pairs = 0;
  CHECK_THROWS_WITH(fit_model(v, with({Family::spherical})),
                    Catch::Contains("no class with pairs"));
  v = noise_free(truth);
  for (auto& row : v.rows) row.value = 0;
  CHECK_THROWS_WITH(fit_model(v, with({Family::spherical})), Catch::Contains("nothing to fit"));
}

TEST_CASE("the model file carries the model, the transform and the fit object", "[fit]") {
  EmpiricalVariogram v = noise_free(parse_model_spec("0.2 nugget + 1 spherical(range=300)"));
  v.options.transform = Transform::log;
  v.options.log_offset = 2.5;
  FitOptions o = with({Family::nugget, Family::spherical}, FitWeights::pairs);
  o.fixed = parse_fixes("nugget=0.2");
  const FitResult r = fit_model(v, o);
  const ModelFile file = fitted_model_file(r, {});
  CHECK(file.transform.kind == Transform::log);
  CHECK(file.transform.log_offset == 2.5);
  const ModelFile back = model_from_json(model_to_json(file), "model.json");
  CHECK(back.model == r.model);
  CHECK(back.transform.kind == Transform::log);
  CHECK(back.transform.log_offset == 2.5);  // the offset travels with the model
  const auto fit = nlohmann::json::parse(back.fit);
  CHECK(fit["weights"] == "pairs");
  CHECK(fit["objective"].get<double>() == r.objective);
  CHECK(fit["lags_used"] == 15);
  CHECK(fit["converged"] == true);
  CHECK(fit["iterations"].get<int>() == r.summary.iterations);
  CHECK(fit["fixed"][0] == "nugget=0.2");
  CHECK_FALSE(fit.contains("ranking"));

  const auto ranked = fit_auto(v, FitOptions{});
  const auto with_ranking = nlohmann::json::parse(fitted_model_file(ranked.front(), ranked).fit);
  REQUIRE(with_ranking["ranking"].size() == ranked.size());
  CHECK(with_ranking["ranking"][0]["structures"] == "nugget+spherical");
  CHECK(with_ranking["criterion"] == "aic");
  for (std::size_t i = 0; i < ranked.size(); ++i)
    CHECK(with_ranking["ranking"][i]["warnings"] == ranked[i].summary.warnings.size());

  const auto doc = nlohmann::json::parse(fit_to_json(r, {}));
  CHECK(doc["model"] == to_spec(r.model));
  CHECK(doc["structures"][1]["practical_ranges"]["major"].get<double>() ==
        r.model.structures()[1].range);
  CHECK(doc["spatial_dependence"] == "strong");
  CHECK(doc["rows"].size() == 15);
}
