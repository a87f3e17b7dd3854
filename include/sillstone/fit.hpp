// sillstone/fit.hpp -- fitting a covariance model to an empirical variogram
// (`sillstone fit`).
//
// The fourth stage of the pipeline: the model whose semivariance is closest,
// in weighted least squares, to the empirical variogram's classes. Method,
// weights, starting values, bounds and the warnings are in docs/fitting.md.
//
//   sillstone::FitOptions opt;
//   opt.structures = {sillstone::Family::nugget, sillstone::Family::spherical};
//   opt.weights = sillstone::FitWeights::cressie;
//   opt.fixed = sillstone::parse_fixes("range=450");
//   sillstone::FitResult fit = sillstone::fit_model(variogram, opt);
//   if (!fit.summary.converged) ...;           // said in fit.summary.warnings too
//   std::string spec = sillstone::to_spec(fit.model);
//
// The objective is S = sum_i w_i (gamma_hat_i - gamma(h_i))^2 over the classes
// with pairs > 0 and a finite value, gamma(h_i) the model's semivariance at
// the class's mean distance along the class's direction. Weights:
//   cressie  w_i = N_i / gamma(h_i)^2 (Cressie 1985), gamma of the current
//            model: the weights are recomputed and the fit repeated until they
//            settle;
//   pairs    w_i = N_i;
//   equal    w_i = 1.
// Parameters are found by a Levenberg-Marquardt method with box bounds
// (projection onto the bounds), from several data-driven starts.
//
// Conventions: ranges are practical ranges in the variogram's distance units;
// azimuths in degrees clockwise from north (model.hpp). A variogram with
// directions (rows with azimuths, or dips in 3D) gets ONE anisotropic model
// fitted to all directions at once.
//
// Errors: bad options and variograms that cannot be fitted throw InputError
// (component "fit"); trouble converging is reported in FitResult::summary,
// never thrown. Thread safety: the functions are re-entrant.
#pragma once

#include <cstddef>
#include <cstdint>
#include <iosfwd>
#include <limits>
#include <string>
#include <vector>

#include "sillstone/model.hpp"
#include "sillstone/transform.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {

/// The weights w_i of the classes in the least-squares objective.
enum class FitWeights : int {
  cressie,  ///< N_i / gamma_model(h_i)^2 (Cressie 1985), iterated with the current model
  pairs,    ///< N_i, the number of pairs of the class
  equal,    ///< 1
};

/// How a fit ended. The first seven count as converged.
enum class FitTermination : int {
  small_gradient,      ///< the projected gradient vanished (to the tolerance)
  small_step,          ///< the parameters stopped moving
  small_decrease,      ///< the objective stopped decreasing
  no_decrease,         ///< no step, however short, lowers the objective any further
  perfect_fit,         ///< the model passes through every class (noise-free data)
  sills_only,          ///< only sills were free: solved exactly (linear least squares)
  no_free_parameters,  ///< every parameter was held: nothing to fit
  iteration_limit,     ///< FitOptions::max_iterations reached: not converged
  weights_unsettled,   ///< cressie: the weights still changed after the last round: not converged
};

/// The classes of spatial dependence by the nugget-to-sill ratio, after
/// Cambardella et al. (1994): strong below 25 %, moderate from 25 % to 75 %,
/// weak above 75 %.
enum class SpatialDependence : int {
  strong,
  moderate,
  weak,
  undefined,  ///< no sill (power structure)
};

/// A parameter held at a value instead of fitted: `--fix [N.]KEY=VALUE`.
struct FixedParameter {
  /// 1-based position of the structure in FitOptions::structures; 0: every
  /// structure that has the parameter (for "sill": every one but the nugget).
  int structure = 0;
  /// A model key: sill, range, nu, exponent, azimuth, ratio, dip, plunge,
  /// ratio2 (docs/models.md). The key "nugget" is read as the nugget's sill.
  std::string key;
  double value = 0;
  /// azimuth only: hold it at the variogram direction with the longest range.
  bool longest = false;

  /// The text it was read from, e.g. "2.range=300" (canonical form).
  std::string text() const;
};

/// Reads `--fix` text: one or more `[N.]KEY=VALUE` separated by commas, e.g.
/// "nugget=0.1,2.range=300" or "azimuth=longest". Throws InputError("fit", ...)
/// naming the faulty item.
std::vector<FixedParameter> parse_fixes(const std::string& text);

/// Settings of a fit. Defaults are those of the command line.
struct FitOptions {
  /// The structures of the model, in order (`--structures`). At most one nugget.
  std::vector<Family> structures = {Family::nugget, Family::spherical};
  FitWeights weights = FitWeights::cressie;
  std::vector<FixedParameter> fixed;  ///< held parameters
  double matern_nu = 1.5;             ///< nu of matern structures unless fitted or held
  bool fit_nu = false;                ///< fit nu (bounds [0.1, 10]) where no hold says otherwise

  /// Ranges are bounded by [L / 1000, max_range_factor * L], L the largest
  /// mean distance of the classes used.
  double max_range_factor = 3;
  int max_iterations = 500;    ///< Levenberg-Marquardt iterations per start and round
  int max_weight_rounds = 50;  ///< cressie: rounds of re-weighting at most
  /// Convergence: relative decrease of the objective, relative step, and
  /// projected gradient (relative to the objective). Tight by default: the
  /// problems are small.
  double function_tolerance = 1e-14;
  double parameter_tolerance = 1e-12;
  double gradient_tolerance = 1e-10;

  /// True when the options are complete and consistent (structures, holds
  /// that name existing structures and parameters with valid values,
  /// tolerances); otherwise `why` says what is wrong.
  bool is_valid(std::string* why) const;
};

/// One class of the variogram as used in the fit.
struct FitRow {
  double azimuth = std::numeric_limits<double>::quiet_NaN();  ///< NaN: none
  double dip = std::numeric_limits<double>::quiet_NaN();      ///< NaN: none
  double distance = 0;                                        ///< the class's mean distance
  std::uint64_t pairs = 0;
  double empirical = 0;  ///< gamma_hat
  double model = 0;      ///< gamma of the fitted model
  double weight = 0;     ///< w_i of the final objective
};

/// How a fit went.
struct FitSummary {
  FitTermination termination = FitTermination::iteration_limit;
  bool converged = false;
  int iterations = 0;     ///< Levenberg-Marquardt iterations of the chosen start, all rounds
  int weight_rounds = 0;  ///< cressie: fits with re-computed weights after the first; else 0
  int starts = 0;         ///< starting points tried
  std::vector<std::string> notes;     ///< facts worth saying (e.g. an azimuth held)
  std::vector<std::string> warnings;  ///< each one sentence, with its source
};

/// A fitted model with its figures of merit.
struct FitResult {
  CovarianceModel model;
  std::string source;              ///< what the variogram was computed from (or the table's path)
  std::string value;               ///< the value column, when known
  ValueTransform transform;        ///< of the variogram's values
  std::vector<Family> structures;  ///< as requested (the model's order)
  FitWeights weights = FitWeights::cressie;
  double objective = 0;  ///< S = sum w_i (gamma_hat_i - gamma(h_i))^2, final weights
  /// Akaike-type criterion on the weighted residuals: n ln(S'/n) + 2 p, with
  /// S' = max(S, 1e-12 S0), S0 the objective of the zero model (a floor for
  /// noise-free data), n = lags_used and p = parameters.
  double aic = 0;
  std::size_t lags_used = 0;   ///< classes used (pairs > 0, finite value)
  std::size_t parameters = 0;  ///< parameters fitted (held ones not counted)
  double largest_lag = 0;      ///< L: the largest mean distance of the classes used
  std::size_t samples = 0;     ///< of the variogram; 0: not known (CSV table)
  double sample_variance = std::numeric_limits<double>::quiet_NaN();  ///< NaN: not known
  /// nugget / total sill (0..1); NaN without a sill.
  double nugget_ratio = std::numeric_limits<double>::quiet_NaN();
  SpatialDependence dependence = SpatialDependence::undefined;
  std::vector<std::string> fixed;  ///< the holds applied, canonical text
  std::vector<FitRow> rows;
  FitSummary summary;
};

/// Fits `options.structures` to `variogram` (a semivariance table). Throws
/// InputError("fit", ...) for invalid options, a variogram of another
/// statistic, fewer usable classes than parameters, negative values, and holds
/// that do not apply to the variogram (e.g. a ratio without directions).
FitResult fit_model(const EmpiricalVariogram& variogram, const FitOptions& options);

/// The candidates of `--auto`: nugget plus one of spherical, exponential,
/// gaussian, cubic, matern (nu = FitOptions::matern_nu) or power; nugget plus
/// spherical + spherical; nugget plus exponential + spherical.
std::vector<std::vector<Family>> auto_candidates();

/// Fits every candidate of auto_candidates() with `options` (whose structures
/// are ignored; holds without a structure number apply to each candidate that
/// has the parameter) and ranks them by `aic`, lowest first, ties by the
/// objective. Throws InputError as fit_model, and when a hold applies to no
/// candidate or names a structure number.
std::vector<FitResult> fit_auto(const EmpiricalVariogram& variogram, const FitOptions& options);

/// The class of Cambardella et al. (1994) for a nugget-to-sill ratio in [0, 1]:
/// < 0.25 strong, 0.25..0.75 moderate, > 0.75 weak; NaN: undefined.
SpatialDependence spatial_dependence(double nugget_ratio);

/// model.json contents for `best`: its model and transform, and the "fit"
/// object (weights, objective, aic, lags_used, parameters, converged,
/// iterations, termination, fixed, and the ranking when `ranking` is not empty).
ModelFile fitted_model_file(const FitResult& best, const std::vector<FitResult>& ranking);

/// The `--json` document: everything of the fit table.
std::string fit_to_json(const FitResult& best, const std::vector<FitResult>& ranking);

/// The fit table printed by `sillstone fit` (ranking: --auto's, or empty).
void write_fit_text(std::ostream& out, const FitResult& best,
                    const std::vector<FitResult>& ranking);

}  // namespace sillstone
