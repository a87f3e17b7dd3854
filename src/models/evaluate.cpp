// Evaluation of covariance models: the families' normalised variograms, the
// Matern scale, and the anisotropy rotation (formulas in docs/models.md).
#include <algorithm>  // std::min
#include <cmath>      // std::cyl_bessel_k (C++17 special functions), std::tgamma, std::expm1
#include <limits>
#include <stdexcept>  // std::logic_error for calls that break the documented preconditions
#include <string>
#include <utility>

#include "models/model_detail.hpp"
#include "sillstone/error.hpp"
#include "sillstone/names.hpp"

namespace sillstone {
namespace detail {

namespace {

// The correlation a matern structure has at its practical range (PRODUCT.md, Conventions).
constexpr double kMaternCorrelationAtRange = 0.05;

// The t at which rho_nu(t) = 0.05, by bisection: rho_nu decreases from 1 at
// t = 0 to 0, and bisection needs no derivative of K_nu. About 60 halvings,
// once per structure.
double solve_matern_scale(double nu, double factor) {
  double lo = 0, hi = 1;
  while (matern_correlation(nu, factor, hi) > kMaternCorrelationAtRange) {
    lo = hi;
    hi *= 2;
  }
  for (int i = 0; i < 200 && hi - lo > 1e-16 * hi; ++i) {
    const double mid = 0.5 * (lo + hi);
    if (matern_correlation(nu, factor, mid) > kMaternCorrelationAtRange)
      lo = mid;
    else
      hi = mid;
  }
  return 0.5 * (lo + hi);
}

}  // namespace

double matern_correlation(double nu, double factor, double t) {
  if (t <= 0) return 1;
  // K_nu(700) < 1e-300 and rho < 1e-250 for nu <= 20; libstdc++ also refuses
  // very large arguments.
  if (t >= 700) return 0;
  // Near 0, 1 - rho ~ t^2 / (4 (nu - 1)) for nu > 1 and ~ t^(2 nu) for nu < 1:
  // below t = 1e-20 it is under 1e-19 for nu >= 0.5, and t^nu might underflow.
  if (nu >= 0.5 && t < 1e-20) return 1;
  const double k = std::cyl_bessel_k(nu, t);
  if (std::isinf(k)) return 1;  // large nu and tiny t: 1 - rho is far below 1e-19 again
  // factor * k <= k: no overflow in this order. Rounding can put the product
  // a few units in the last place above 1 near t = 0; a correlation never is.
  return std::min(1.0, factor * k * std::pow(t, nu));
}

CompiledStructure compile(const Structure& s) {
  CompiledStructure c;
  c.family = s.family;
  c.sill = s.sill;
  c.exponent = s.exponent;
  c.nu = s.nu;
  // Reduced distances are in units of the practical range; power has no
  // range and keeps distance units along its major axis.
  const double major = takes_range(s.family) ? s.range : 1.0;
  c.inverse_range = 1 / major;

  // Unit vectors of the ellipsoid's axes in (x east, y north, z up):
  // u1 at the azimuth, dipping down by `dip`; u2 horizontal at azimuth + 90;
  // u3 perpendicular to both (up when dip = 0). `plunge` turns u2 and u3
  // about u1, tipping u2 down for positive angles.
  const Anisotropy& a = s.anisotropy;
  const double degree = std::acos(-1.0) / 180;
  const double sa = std::sin(a.azimuth * degree), ca = std::cos(a.azimuth * degree);
  const double sd = std::sin(a.dip * degree), cd = std::cos(a.dip * degree);
  const double sp = std::sin(a.plunge * degree), cp = std::cos(a.plunge * degree);
  const double u1[3] = {sa * cd, ca * cd, -sd};
  const double u2[3] = {ca, -sa, 0};
  const double u3[3] = {sa * sd, ca * sd, cd};
  for (int k = 0; k < 3; ++k) {
    c.reduce[0][k] = u1[k] / major;
    c.reduce[1][k] = (cp * u2[k] - sp * u3[k]) / (major * a.ratio);
    c.reduce[2][k] = (sp * u2[k] + cp * u3[k]) / (major * a.ratio2);
  }

  if (s.family == Family::matern) {
    c.matern_factor = std::pow(2.0, 1 - s.nu) / std::tgamma(s.nu);
    c.matern_scale = solve_matern_scale(s.nu, c.matern_factor);
  }
  return c;
}

double unit_variogram(const CompiledStructure& s, double r) {
  switch (s.family) {
    case Family::nugget:
      return r > 0 ? 1 : 0;
    case Family::spherical:
      return r < 1 ? r * (1.5 - 0.5 * r * r) : 1;
    case Family::exponential:
      return -std::expm1(-3 * r);
    case Family::gaussian:
      return -std::expm1(-3 * r * r);
    case Family::cubic:  // 7 r^2 - 35/4 r^3 + 7/2 r^5 - 3/4 r^7, by Horner's rule
      return r < 1 ? r * r * (7 + r * (-35.0 / 4 + r * r * (7.0 / 2 - 3.0 / 4 * r * r))) : 1;
    case Family::matern:
      return 1 - matern_correlation(s.nu, s.matern_factor, r * s.matern_scale);
    case Family::power:
      return std::pow(r, s.exponent);
  }
  throw std::logic_error("unit_variogram: unknown family");
}

double unit_correlation(const CompiledStructure& s, double r) {
  switch (s.family) {
    case Family::exponential:
      return std::exp(-3 * r);
    case Family::gaussian:
      return std::exp(-3 * r * r);
    case Family::matern:
      return matern_correlation(s.nu, s.matern_factor, r * s.matern_scale);
    case Family::power:
      throw std::logic_error("unit_correlation: the power model has no correlation");
    default:  // nugget, spherical, cubic: polynomials, 1 - g is exact enough
      return 1 - unit_variogram(s, r);
  }
}

}  // namespace detail

namespace {

double reduced_distance(const detail::CompiledStructure& s, double dx, double dy, double dz) {
  double sum = 0;
  for (const auto& row : s.reduce) {
    const double v = row[0] * dx + row[1] * dy + row[2] * dz;
    sum += v * v;
  }
  return std::sqrt(sum);
}

}  // namespace

CovarianceModel::CovarianceModel(std::vector<Structure> structures)
    : structures_(std::move(structures)) {
  std::string why;
  if (!is_valid(structures_, &why)) throw InputError("model", why);
  for (const Structure& s : structures_) {
    compiled_.push_back(detail::compile(s));
    total_sill_ += s.sill;
    if (s.family == Family::nugget) nugget_ = s.sill;
    if (s.family == Family::power) has_sill_ = false;
    isotropic_ = isotropic_ && s.anisotropy.is_isotropic();
  }
  if (!has_sill_) total_sill_ = std::numeric_limits<double>::infinity();
}

bool CovarianceModel::is_valid(const std::vector<Structure>& structures, std::string* why) {
  std::size_t index = 0;
  const auto fault = detail::check_model(structures, &index);
  if (fault && why) {
    *why = index < structures.size()
               ? "structure " + std::to_string(index + 1) + " (" +
                     std::string(name_of(structures[index].family)) +
                     "): " + (fault->key.empty() ? "" : fault->key + " ") + fault->message
               : fault->message;
  }
  return !fault;
}

int CovarianceModel::dimension() const {
  for (const Structure& s : structures_) {
    const Anisotropy& a = s.anisotropy;
    if (a.dip != 0 || a.plunge != 0 || a.ratio2 != 1) return 3;
  }
  return 2;
}

void CovarianceModel::require_sill() const {
  if (!has_sill_) throw std::logic_error("covariance of a model without a sill (power structure)");
}

void CovarianceModel::require_isotropic() const {
  if (!isotropic_) throw std::logic_error("distance-only evaluation of an anisotropic model");
}

double CovarianceModel::variogram(double dx, double dy, double dz) const {
  double total = 0;
  for (const auto& s : compiled_)
    total += s.sill * detail::unit_variogram(s, reduced_distance(s, dx, dy, dz));
  return total;
}

double CovarianceModel::variogram(double distance) const {
  require_isotropic();
  double total = 0;
  for (const auto& s : compiled_)
    total += s.sill * detail::unit_variogram(s, distance * s.inverse_range);
  return total;
}

double CovarianceModel::covariance(double dx, double dy, double dz) const {
  require_sill();
  double total = 0;
  for (const auto& s : compiled_)
    total += s.sill * detail::unit_correlation(s, reduced_distance(s, dx, dy, dz));
  return total;
}

double CovarianceModel::covariance(double distance) const {
  require_sill();
  require_isotropic();
  double total = 0;
  for (const auto& s : compiled_)
    total += s.sill * detail::unit_correlation(s, distance * s.inverse_range);
  return total;
}

double CovarianceModel::correlation(double dx, double dy, double dz) const {
  return covariance(dx, dy, dz) / total_sill_;
}

double CovarianceModel::correlation(double distance) const {
  return covariance(distance) / total_sill_;
}

std::array<double, 9> search_shape(const CovarianceModel& model) {
  std::array<double, 9> m = {1, 0, 0, 0, 1, 0, 0, 0, 1};
  const Structure* longest = nullptr;
  for (const auto& s : model.structures())
    if (s.range > 0 && (!longest || s.range > longest->range)) longest = &s;
  if (!longest) return m;
  const detail::CompiledStructure c = detail::compile(*longest);
  for (int r = 0; r < 3; ++r)
    for (int k = 0; k < 3; ++k)
      m[static_cast<std::size_t>(3 * r + k)] = c.reduce[r][k] * longest->range;
  return m;
}

}  // namespace sillstone
