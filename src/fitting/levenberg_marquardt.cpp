// A Levenberg-Marquardt solver with box bounds for small least-squares problems.
//
// Each iteration solves (J_F'J_F + lambda diag(J_F'J_F)) d = -J_F'r over the
// free parameters F -- all but those at a bound whose gradient points out of
// the box -- and projects x + d onto the box (a projected Levenberg-Marquardt
// method; Kanzow, Yamashita & Fukushima 2004, from memory). Marquardt's
// diagonal scaling makes the step invariant to the parameters' units. The
// damping follows Nielsen (1999, from memory): after a successful step
// lambda *= max(1/3, 1 - (2 rho - 1)^3), after a failed one lambda *= nu,
// nu *= 2, rho being the ratio of actual to predicted decrease.
//
// Stopping rules (any one):
//  - perfect fit: ||r||^2 <= settings.perfect_cost;
//  - small gradient: for each free parameter, |J_i'r| <= gtol ||J_i|| ||r||
//    (the cosine between the residual and the column; MINPACK's test);
//  - small decrease: an accepted step lowered ||r||^2 by at most ftol of it and
//    predicted no more;
//  - small step: an accepted step with ||dx|| <= xtol (||x|| + xtol);
//  - no decrease: the damping grew past 1e16, or steps no longer than
//    xtol (||x|| + xtol) failed to lower the objective;
//  - iteration limit (not converged).
#include <algorithm>
#include <cmath>
#include <limits>

#include "fitting/fit_detail.hpp"

namespace sillstone::detail {
namespace {

constexpr double kAcceptRatio = 1e-4;  // rho above which a step is taken
constexpr double kMaxDamping = 1e16;

Eigen::VectorXd project(const Eigen::VectorXd& x, const Eigen::VectorXd& lower,
                        const Eigen::VectorXd& upper) {
  return x.cwiseMax(lower).cwiseMin(upper);
}

}  // namespace

bool is_converged(FitTermination t) {
  switch (t) {
    case FitTermination::small_gradient:
    case FitTermination::small_step:
    case FitTermination::small_decrease:
    case FitTermination::no_decrease:
    case FitTermination::perfect_fit:
    case FitTermination::sills_only:
    case FitTermination::no_free_parameters:
      return true;
    case FitTermination::iteration_limit:
    case FitTermination::weights_unsettled:
      return false;
  }
  return false;
}

SolverOutcome minimise(const LeastSquares& problem, const Eigen::VectorXd& x0,
                       const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                       const SolverSettings& s) {
  SolverOutcome out;
  const Eigen::Index n = x0.size();
  out.x = project(x0, lower, upper);
  Eigen::VectorXd r(problem.residual_count());
  problem.residuals(out.x, &r);
  out.cost = r.squaredNorm();
  if (n == 0) {
    out.termination = FitTermination::no_free_parameters;
    return out;
  }
  if (out.cost <= s.perfect_cost) {
    out.termination = FitTermination::perfect_fit;
    return out;
  }

  Eigen::MatrixXd jacobian(r.size(), n);
  Eigen::VectorXd trial_r(r.size());
  double lambda = 1e-3, nu = 2;
  for (out.iterations = 0; out.iterations < s.max_iterations; ++out.iterations) {
    problem.jacobian(out.x, r, &jacobian);
    const Eigen::VectorXd gradient = jacobian.transpose() * r;  // half the gradient of ||r||^2
    const Eigen::MatrixXd normal = jacobian.transpose() * jacobian;

    // Free parameters: not held at a bound by a gradient pointing outwards.
    std::vector<Eigen::Index> free;
    for (Eigen::Index i = 0; i < n; ++i) {
      const bool at_lower = out.x[i] <= lower[i] && gradient[i] > 0;
      const bool at_upper = out.x[i] >= upper[i] && gradient[i] < 0;
      if (!at_lower && !at_upper) free.push_back(i);
    }
    const double r_norm = std::sqrt(out.cost);
    double worst_cosine = 0;
    for (Eigen::Index i : free) {
      const double column = std::sqrt(normal(i, i));
      if (column > 0)
        worst_cosine = std::max(worst_cosine, std::fabs(gradient[i]) / (column * r_norm));
    }
    if (free.empty() || worst_cosine <= s.gradient_tolerance) {
      out.termination = FitTermination::small_gradient;
      return out;
    }

    const Eigen::Index m = static_cast<Eigen::Index>(free.size());
    Eigen::MatrixXd a(m, m);
    Eigen::VectorXd g(m), scale(m);
    double largest_diagonal = 0;
    for (Eigen::Index i = 0; i < m; ++i)
      largest_diagonal = std::max(largest_diagonal, normal(free[i], free[i]));
    for (Eigen::Index i = 0; i < m; ++i) {
      for (Eigen::Index j = 0; j < m; ++j) a(i, j) = normal(free[i], free[j]);
      g[i] = gradient[free[i]];
      // A column without effect (e.g. an azimuth while the ranges are equal)
      // still gets a little damping, so that the system stays solvable.
      scale[i] = std::max(normal(free[i], free[i]), 1e-12 * largest_diagonal);
    }

    bool accepted = false;
    while (!accepted) {
      Eigen::MatrixXd damped = a;
      damped.diagonal() += lambda * scale;
      const Eigen::VectorXd step = damped.ldlt().solve(-g);
      Eigen::VectorXd trial = out.x;
      for (Eigen::Index i = 0; i < m; ++i) trial[free[i]] += step[i];
      trial = project(trial, lower, upper);
      const Eigen::VectorXd dx = trial - out.x;
      const bool tiny_step =
          dx.norm() <= s.parameter_tolerance * (out.x.norm() + s.parameter_tolerance);

      problem.residuals(trial, &trial_r);
      const double trial_cost = trial_r.squaredNorm();
      const double predicted = out.cost - (r + jacobian * dx).squaredNorm();
      const double actual = out.cost - trial_cost;
      const double rho = predicted > 0 ? actual / predicted : -1;
      if (std::isfinite(trial_cost) && actual > 0 && rho > kAcceptRatio) {
        accepted = true;
        out.x = trial;
        r = trial_r;
        out.cost = trial_cost;
        lambda *= std::max(1.0 / 3, 1 - std::pow(2 * rho - 1, 3));
        nu = 2;
        if (out.cost <= s.perfect_cost) {
          out.termination = FitTermination::perfect_fit;
          ++out.iterations;
          return out;
        }
        if (actual <= s.function_tolerance * (out.cost + actual) &&
            predicted <= s.function_tolerance * (out.cost + actual)) {
          out.termination = FitTermination::small_decrease;
          ++out.iterations;
          return out;
        }
        if (tiny_step) {
          out.termination = FitTermination::small_step;
          ++out.iterations;
          return out;
        }
      } else {
        lambda *= nu;
        nu *= 2;
        if (lambda > kMaxDamping || tiny_step) {
          out.termination = FitTermination::no_decrease;
          ++out.iterations;
          return out;
        }
      }
    }
  }
  out.termination = FitTermination::iteration_limit;
  return out;
}

}  // namespace sillstone::detail
