// The least-squares problem of a covariance model against variogram classes:
// the parameterisation (internal units, bounds), the model's values along
// each class's direction, the best non-negative sills, the Jacobian.
#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>

#include "fitting/fit_detail.hpp"
#include "models/model_detail.hpp"

namespace sillstone::detail {
namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();
constexpr double kAzimuthUnit = 90;                         // degrees per internal unit
constexpr double kMinRangeFactor = 1e-3;                    // ranges >= L / 1000
constexpr double kMinRatio = 0.01;                          // ratios in [0.01, 1]
constexpr double kMinNu = 0.1, kMaxNu = 10;                 // fitted matern nu
constexpr double kMinExponent = 0.01, kMaxExponent = 1.99;  // power: (0, 2) made closed
constexpr double kDifferenceStep = 6e-6;                    // ~ cube root of the machine epsilon
constexpr double kTie = 1e-12;  // relative: sill sets this close cost the same

// Azimuth in [0, 180) for an ellipse whose axis is horizontal (a and a + 180
// are the same axis); in [0, 360) when the axis dips.
double wrap_azimuth(double a, bool dipping) {
  const double period = dipping ? 360 : 180;
  double w = std::fmod(a, period);
  if (w < 0) w += period;
  if (w >= period) w = 0;
  return w;
}

}  // namespace

ModelProblem::ModelProblem(std::vector<ClassData> classes, std::vector<Layout> layouts,
                           double distance_scale, double max_range_factor)
    : classes_(std::move(classes)), layouts_(std::move(layouts)), distance_scale_(distance_scale) {
  std::vector<double> lo, hi;
  for (Layout& l : layouts_) {
    for (int slot = 0; slot < Layout::kSlots; ++slot) {
      if (l.index[slot] < 0) continue;
      l.index[slot] = static_cast<int>(count_++);
      switch (slot) {
        case Layout::range:
        case Layout::along:
        case Layout::across:
        case Layout::vertical:
          lo.push_back(kMinRangeFactor);
          hi.push_back(max_range_factor);
          break;
        case Layout::ratio:
        case Layout::ratio2:
          lo.push_back(kMinRatio);
          hi.push_back(1);
          break;
        case Layout::azimuth:
          lo.push_back(-kInfinity);
          hi.push_back(kInfinity);
          break;
        case Layout::nu:
          lo.push_back(kMinNu);
          hi.push_back(kMaxNu);
          break;
        case Layout::exponent:
          lo.push_back(kMinExponent);
          hi.push_back(kMaxExponent);
          break;
      }
    }
  }
  lower_ = Eigen::Map<Eigen::VectorXd>(lo.data(), count_);
  upper_ = Eigen::Map<Eigen::VectorXd>(hi.data(), count_);
  target_.resize(static_cast<Eigen::Index>(classes_.size()));
  for (std::size_t i = 0; i < classes_.size(); ++i)
    target_[static_cast<Eigen::Index>(i)] = classes_[i].value;
  set_weights(Eigen::VectorXd::Ones(target_.size()));
}

Eigen::Index ModelProblem::fitted_count() const {
  Eigen::Index n = count_;
  for (const Layout& l : layouts_) n += l.sill_free;
  return n;
}

void ModelProblem::set_weights(const Eigen::VectorXd& w) {
  weights_ = w;
  const double reference = w.dot(target_.cwiseProduct(target_));  // S0, the zero model's objective
  root_weights_ = (w / reference).cwiseSqrt();
}

std::vector<Structure> ModelProblem::shapes(const Eigen::VectorXd& x) const {
  auto get = [&x](const Layout& l, int slot, double held) {
    return l.index[slot] < 0 ? held : x[l.index[slot]];
  };
  std::vector<Structure> out;
  for (const Layout& l : layouts_) {
    Structure s;
    s.family = l.family;
    s.sill = l.sill_free ? 1 : l.sill_value;
    if (l.family == Family::matern) s.nu = get(l, Layout::nu, l.nu_value);
    if (l.family == Family::power) s.exponent = get(l, Layout::exponent, l.exponent_value);
    if (l.family == Family::nugget) {
      out.push_back(s);
      continue;
    }
    Anisotropy& a = s.anisotropy;
    if (l.axes) {
      const double along = x[l.index[Layout::along]] * distance_scale_;
      const double across = l.tie_across ? along : x[l.index[Layout::across]] * distance_scale_;
      const double vertical = l.vertical_axis ? x[l.index[Layout::vertical]] * distance_scale_
                                              : std::max(along, across);
      const double theta = get(l, Layout::azimuth, l.azimuth_value / kAzimuthUnit) * kAzimuthUnit;
      const double horizontal = std::max(along, across);
      if (vertical > horizontal) {
        // The longest axis is vertical: dip 90 puts the second axis at
        // azimuth + 90 and the third at the azimuth (docs/models.md); turning
        // both by 180 degrees changes nothing.
        s.range = vertical;
        a.dip = 90;
        a.azimuth = wrap_azimuth(theta, false);
        a.ratio = across / vertical;
        a.ratio2 = along / vertical;
      } else if (along >= across) {
        s.range = along;
        a.azimuth = wrap_azimuth(theta, false);
        a.ratio = across / along;
        a.ratio2 = vertical / along;
      } else {
        s.range = across;
        a.azimuth = wrap_azimuth(theta + 90, false);
        a.ratio = along / across;
        a.ratio2 = vertical / across;
      }
    } else {
      if (takes_range(l.family))
        s.range = l.index[Layout::range] < 0 ? l.range_value
                                             : x[l.index[Layout::range]] * distance_scale_;
      a.ratio = get(l, Layout::ratio, l.ratio_value);
      a.ratio2 = get(l, Layout::ratio2, l.ratio2_value);
      a.dip = l.dip_value;
      a.plunge = l.plunge_value;
      a.azimuth = l.index[Layout::azimuth] < 0
                      ? l.azimuth_value
                      : wrap_azimuth(x[l.index[Layout::azimuth]] * kAzimuthUnit,
                                     a.dip != 0 || a.plunge != 0);
    }
    out.push_back(s);
  }
  return out;
}

Eigen::VectorXd ModelProblem::internal(const std::vector<Structure>& start) const {
  Eigen::VectorXd x = Eigen::VectorXd::Zero(count_);
  auto put = [&x](const Layout& l, int slot, double value) {
    if (l.index[slot] >= 0) x[l.index[slot]] = value;
  };
  for (std::size_t k = 0; k < layouts_.size(); ++k) {
    const Layout& l = layouts_[k];
    const Structure& s = start[k];
    put(l, Layout::nu, s.nu);
    put(l, Layout::exponent, s.exponent);
    put(l, Layout::range, s.range / distance_scale_);
    put(l, Layout::along, s.range / distance_scale_);
    put(l, Layout::across, s.range * s.anisotropy.ratio / distance_scale_);
    put(l, Layout::vertical, s.range * s.anisotropy.ratio2 / distance_scale_);
    put(l, Layout::ratio, s.anisotropy.ratio);
    put(l, Layout::ratio2, s.anisotropy.ratio2);
    put(l, Layout::azimuth, s.anisotropy.azimuth / kAzimuthUnit);
  }
  return x.cwiseMax(lower_).cwiseMin(upper_);
}

CompiledStructure ModelProblem::compile_cached(const Structure& s) const {
  if (s.family != Family::matern) return compile(s);
  // The matern scale needs a bisection on Bessel functions: once per nu.
  auto it = matern_.find(s.nu);
  if (it == matern_.end()) {
    const CompiledStructure full = compile(s);
    it = matern_.emplace(s.nu, std::make_pair(full.matern_factor, full.matern_scale)).first;
  }
  Structure shape = s;  // the rotation and ranges alone, without the bisection
  shape.family = Family::exponential;
  shape.nu = 0;
  CompiledStructure c = compile(shape);
  c.family = Family::matern;
  c.nu = s.nu;
  c.matern_factor = it->second.first;
  c.matern_scale = it->second.second;
  return c;
}

Eigen::MatrixXd ModelProblem::columns(const std::vector<Structure>& shapes) const {
  const Eigen::Index n = static_cast<Eigen::Index>(classes_.size());
  const Eigen::Index m = static_cast<Eigen::Index>(shapes.size());
  Eigen::MatrixXd g(n, m);
  for (Eigen::Index k = 0; k < m; ++k) {
    const Structure& sk = shapes[static_cast<std::size_t>(k)];
    const CompiledStructure c = compile_cached(sk);
    const double scale = sk.family == Family::power ? std::pow(distance_scale_, -sk.exponent) : 1.0;
    for (Eigen::Index i = 0; i < n; ++i) {
      const ClassData& cl = classes_[static_cast<std::size_t>(i)];
      double sum = 0;
      for (const auto& h : cl.lags) {
        double r2 = 0;
        for (const auto& row : c.reduce) {
          const double v = row[0] * h[0] + row[1] * h[1] + row[2] * h[2];
          r2 += v * v;
        }
        sum += unit_variogram(c, std::sqrt(r2));
      }
      g(i, k) = scale * sum / static_cast<double>(cl.lags.size());
    }
  }
  return g;
}

Eigen::VectorXd ModelProblem::sills(const std::vector<Structure>& shapes,
                                    const Eigen::MatrixXd& g) const {
  const Eigen::Index n = g.rows();
  const Eigen::Index m = g.cols();
  // Coefficients z with gamma = g z: the user sill, or for power the slope times L^exponent.
  auto factor = [this, &shapes](Eigen::Index k) {
    const Structure& s = shapes[static_cast<std::size_t>(k)];
    return s.family == Family::power ? std::pow(distance_scale_, s.exponent) : 1.0;
  };
  Eigen::VectorXd z = Eigen::VectorXd::Zero(m);
  Eigen::VectorXd b = target_;
  std::vector<Eigen::Index> free;
  for (Eigen::Index k = 0; k < m; ++k) {
    if (layouts_[static_cast<std::size_t>(k)].sill_free) {
      free.push_back(k);
    } else {
      z[k] = shapes[static_cast<std::size_t>(k)].sill * factor(k);
      b -= g.col(k) * z[k];
    }
  }
  b = root_weights_.cwiseProduct(b);
  // Non-negative least squares by trying every set of positive sills: there
  // are at most 6 structures (FitOptions::is_valid), so at most 64 sets. On a
  // tie (collinear columns) the set met first -- the fewest, earliest
  // structures -- is kept.
  const std::size_t f = free.size();
  double best = b.squaredNorm();  // every free sill 0
  for (std::size_t set = 1; set < (std::size_t{1} << f); ++set) {
    std::vector<Eigen::Index> used;
    for (std::size_t k = 0; k < f; ++k)
      if (set & (std::size_t{1} << k)) used.push_back(free[k]);
    Eigen::MatrixXd a(n, static_cast<Eigen::Index>(used.size()));
    for (std::size_t c = 0; c < used.size(); ++c)
      a.col(static_cast<Eigen::Index>(c)) = root_weights_.cwiseProduct(g.col(used[c]));
    const Eigen::VectorXd solution = a.colPivHouseholderQr().solve(b);
    if (!solution.allFinite() || (solution.array() < 0).any()) continue;
    const double cost = (a * solution - b).squaredNorm();
    if (cost < best * (1 - kTie)) {
      best = cost;
      for (Eigen::Index k : free) z[k] = 0;
      for (std::size_t c = 0; c < used.size(); ++c)
        z[used[c]] = solution[static_cast<Eigen::Index>(c)];
    }
  }
  for (Eigen::Index k = 0; k < m; ++k) z[k] /= factor(k);  // back to user sills
  return z;
}

std::vector<Structure> ModelProblem::structures(const Eigen::VectorXd& x) const {
  std::vector<Structure> s = shapes(x);
  const Eigen::VectorXd c = sills(s, columns(s));
  for (std::size_t k = 0; k < s.size(); ++k) s[k].sill = c[static_cast<Eigen::Index>(k)];
  return s;
}

Eigen::VectorXd ModelProblem::values(const Eigen::VectorXd& x) const {
  const std::vector<Structure> s = shapes(x);
  const Eigen::MatrixXd g = columns(s);
  Eigen::VectorXd c = sills(s, g);
  for (std::size_t k = 0; k < s.size(); ++k)  // user sills back to coefficients of g
    if (s[k].family == Family::power)
      c[static_cast<Eigen::Index>(k)] *= std::pow(distance_scale_, s[k].exponent);
  return g * c;
}

void ModelProblem::residuals(const Eigen::VectorXd& x, Eigen::VectorXd* r) const {
  *r = root_weights_.cwiseProduct(values(x) - target_);
}

void ModelProblem::jacobian(const Eigen::VectorXd& x, const Eigen::VectorXd& r,
                            Eigen::MatrixXd* jacobian) const {
  // Central differences of the residuals with their best sills (the full
  // derivative of the projected problem), one-sided at a bound.
  jacobian->resize(r.size(), count_);
  for (Eigen::Index j = 0; j < count_; ++j) {
    const double h = kDifferenceStep * std::max(std::fabs(x[j]), 1e-2);
    Eigen::VectorXd forward = x, backward = x;
    forward[j] += h;
    backward[j] -= h;
    const bool can_forward = forward[j] <= upper_[j];
    const bool can_backward = backward[j] >= lower_[j];
    Eigen::VectorXd rf, rb;
    if (can_forward && can_backward) {
      residuals(forward, &rf);
      residuals(backward, &rb);
      jacobian->col(j) = (rf - rb) / (forward[j] - backward[j]);
    } else if (can_forward) {
      residuals(forward, &rf);
      jacobian->col(j) = (rf - r) / (forward[j] - x[j]);
    } else {
      residuals(backward, &rb);
      jacobian->col(j) = (r - rb) / (x[j] - backward[j]);
    }
  }
}

}  // namespace sillstone::detail
