// Internals of the fit stage: a Levenberg-Marquardt solver with box bounds,
// the resolution of `--fix` holds, and the least-squares problem of a
// covariance model against variogram classes (docs/fitting.md).
#pragma once

#include <Eigen/Dense>

#include <array>
#include <cstddef>
#include <limits>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "sillstone/fit.hpp"

namespace sillstone::detail {

// --- Levenberg-Marquardt with box bounds ---------------------------------------

/// A least-squares problem min ||r(x)||^2 for the solver.
class LeastSquares {
 public:
  virtual ~LeastSquares() = default;
  virtual Eigen::Index residual_count() const = 0;
  /// r(x).
  virtual void residuals(const Eigen::VectorXd& x, Eigen::VectorXd* r) const = 0;
  /// J = dr/dx at x, given r = r(x); x is within the bounds.
  virtual void jacobian(const Eigen::VectorXd& x, const Eigen::VectorXd& r,
                        Eigen::MatrixXd* jacobian) const = 0;
};

struct SolverSettings {
  int max_iterations = 500;
  double function_tolerance = 1e-14;
  double parameter_tolerance = 1e-12;
  double gradient_tolerance = 1e-10;
  /// ||r||^2 at or below this is a perfect fit.
  double perfect_cost = 0;
};

struct SolverOutcome {
  Eigen::VectorXd x;
  double cost = 0;  ///< ||r(x)||^2
  int iterations = 0;
  FitTermination termination = FitTermination::iteration_limit;
};

/// Minimises ||r(x)||^2 subject to lower <= x <= upper (infinite bounds
/// allowed) from x0 (projected onto the bounds). A projected
/// Levenberg-Marquardt method: parameters at a bound whose gradient points
/// outwards are held for the step; steps are projected onto the box.
SolverOutcome minimise(const LeastSquares& problem, const Eigen::VectorXd& x0,
                       const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                       const SolverSettings& settings);

/// True for the terminations that count as converged.
bool is_converged(FitTermination termination);

// --- Holds ---------------------------------------------------------------------

/// The holds of one structure: parameter key -> hold.
using StructureHolds = std::map<std::string, FixedParameter>;

/// Applies `fixed` to `structures`: per structure, the holds that concern it.
/// `skip_unused` (auto): holds without a number that match no structure are
/// ignored instead of refused. Returns false with `why` on a fault.
bool resolve_holds(const std::vector<Family>& structures, const std::vector<FixedParameter>& fixed,
                   bool skip_unused, std::vector<StructureHolds>* holds, std::string* why);

// --- The fitting problem -------------------------------------------------------

/// A class of the variogram ready for fitting.
struct ClassData {
  double azimuth = std::numeric_limits<double>::quiet_NaN();
  double dip = std::numeric_limits<double>::quiet_NaN();
  double lag_from = 0, lag_to = 0;
  double distance = 0;
  double pairs = 0;
  double value = 0;
  /// Lag vectors (east, north, up) where the model is evaluated; their mean is
  /// the class's model value (several: a free azimuth under an anisotropic model).
  std::vector<std::array<double, 3>> lags;
};

/// What the variogram's directions allow to be fitted.
struct DirectionInfo {
  std::vector<double> azimuths;  ///< distinct azimuths (mod 180) of the classes used
  bool horizontal = false;       ///< horizontal anisotropy fitted (2+ azimuths)
  bool azimuth_free = false;     ///< 3+ azimuths: the azimuth is fitted
  bool vertical = false;         ///< 3D with dipping classes: ratio2 fitted
  int dimension = 2;
  double longest_azimuth = 0;       ///< the direction with the longest empirical range
  double ratio_guess = 1;           ///< shortest / longest empirical range
  double vertical_ratio_guess = 1;  ///< vertical / longest horizontal empirical range
};

/// The shape of the data for starting values (docs/fitting.md).
struct DataShape {
  double nugget = 0;   ///< extrapolated to h = 0 from the first classes
  double plateau = 0;  ///< pair-weighted mean of the classes beyond 2/3 of L
  double range = 0;    ///< where the classes reach 95 % of the plateau above the nugget
};

/// What is fitted in one structure and the held values of the rest.
/// Sills are not solver parameters: the model is linear in them, so for any
/// other parameters the best non-negative sills are solved exactly (variable
/// projection; Golub & Pereyra 1973, from memory).
/// Two shapes of anisotropy parameters:
///  - axes: the ranges along the azimuth, across it and vertically, and the
///    azimuth (dip and plunge 0). Swapping axes never meets a bound, so the
///    azimuth can turn freely; used when range, ratio(s) and azimuth are all
///    fitted;
///  - natural: range (major), ratio, ratio2, azimuth, as in the model.
struct Layout {
  enum Slot : int { range, along, across, vertical, ratio, ratio2, azimuth, nu, exponent };
  static constexpr int kSlots = 9;

  Family family = Family::nugget;
  bool sill_free = true;  ///< the sill is fitted (else sill_value is held)
  bool axes = false;
  bool tie_across =
      false;  ///< axes: the range across equals the range along (horizontally isotropic)
  bool vertical_axis = false;  ///< axes: the vertical range is fitted
  /// Held values (user units), used where index[slot] < 0.
  double sill_value = 0, range_value = 0, ratio_value = 1, ratio2_value = 1, azimuth_value = 0,
         dip_value = 0, plunge_value = 0, nu_value = 0, exponent_value = 0;
  std::array<int, kSlots> index{{-1, -1, -1, -1, -1, -1, -1, -1, -1}};  ///< position in x
};

/// ||r||^2 with r_i = sqrt(w_i) (gamma(h_i) - gamma_hat_i) / sqrt(S0), S0 =
/// sum w_i gamma_hat_i^2, gamma with the best non-negative sills for x.
/// Internal parameters are scaled to about 1: ranges by L, azimuths by 90
/// degrees, so that results do not depend on the data's units.
class ModelProblem : public LeastSquares {
 public:
  ModelProblem(std::vector<ClassData> classes, std::vector<Layout> layouts, double distance_scale,
               double max_range_factor);

  Eigen::Index parameter_count() const { return count_; }
  /// Parameters fitted, sills included.
  Eigen::Index fitted_count() const;
  Eigen::Index residual_count() const override {
    return static_cast<Eigen::Index>(classes_.size());
  }
  const Eigen::VectorXd& lower() const { return lower_; }
  const Eigen::VectorXd& upper() const { return upper_; }
  const std::vector<ClassData>& classes() const { return classes_; }
  const std::vector<Layout>& layouts() const { return layouts_; }

  /// Weights w_i in user units (size: classes).
  void set_weights(const Eigen::VectorXd& weights);
  const Eigen::VectorXd& weights() const { return weights_; }

  /// The model's structures at x with their best sills, in user units
  /// (valid, with wrapped azimuths).
  std::vector<Structure> structures(const Eigen::VectorXd& x) const;
  /// x for the structures `start` (user units; sills and held parameters
  /// ignored), projected onto the bounds.
  Eigen::VectorXd internal(const std::vector<Structure>& start) const;
  /// gamma at each class, with the best sills.
  Eigen::VectorXd values(const Eigen::VectorXd& x) const;

  void residuals(const Eigen::VectorXd& x, Eigen::VectorXd* r) const override;
  void jacobian(const Eigen::VectorXd& x, const Eigen::VectorXd& r,
                Eigen::MatrixXd* jacobian) const override;

 private:
  // The structures at x with unit sills (held sills as held).
  std::vector<Structure> shapes(const Eigen::VectorXd& x) const;
  // g(i, k): the mean unit variogram of structure k over class i's lags
  // (power: of (h / L)^exponent, so that columns have like sizes).
  Eigen::MatrixXd columns(const std::vector<Structure>& shapes) const;
  // The user sills: held ones, and the non-negative least-squares ones.
  Eigen::VectorXd sills(const std::vector<Structure>& shapes, const Eigen::MatrixXd& g) const;
  CompiledStructure compile_cached(const Structure& s) const;

  std::vector<ClassData> classes_;
  std::vector<Layout> layouts_;
  double distance_scale_;
  Eigen::Index count_ = 0;
  Eigen::VectorXd lower_, upper_, weights_, root_weights_, target_;
  mutable std::map<double, std::pair<double, double>> matern_;  // nu -> factor, scale
};

}  // namespace sillstone::detail
