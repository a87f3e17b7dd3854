#include "models/kernel.hpp"

#include <algorithm>  // std::min
#include <cmath>      // std::sqrt, std::exp
#include <stdexcept>  // std::logic_error for a model without a sill

#include "models/model_detail.hpp"

namespace sillstone::detail {

namespace {
// Lags are processed in blocks of this many, so that the per-block scratch
// (distances) stays on the stack and in L1.
constexpr std::size_t kBlock = 64;
}  // namespace

CovarianceKernel::CovarianceKernel(const CovarianceModel& model) {
  if (!model.has_sill())
    throw std::logic_error("covariance kernel of a model without a sill (power structure)");
  for (const Structure& s : model.structures()) {
    Term t;
    t.compiled = compile(s);
    if (s.family != Family::nugget) {
      // Structures with equal anisotropy share a Shape: the unit-major
      // rotation and scaling, i.e. the structure compiled with range 1.
      auto same = std::find_if(shapes_.begin(), shapes_.end(),
                               [&](const Shape& sh) { return sh.anisotropy == s.anisotropy; });
      if (same == shapes_.end()) {
        Structure unit = s;
        unit.family = Family::spherical;
        unit.range = 1;
        const CompiledStructure c = compile(unit);
        Shape sh;
        sh.anisotropy = s.anisotropy;
        sh.isotropic = s.anisotropy.is_isotropic();
        for (int r = 0; r < 3; ++r)
          for (int k = 0; k < 3; ++k) sh.m[r][k] = c.reduce[r][k];
        shapes_.push_back(sh);
        same = shapes_.end() - 1;
      }
      t.shape = static_cast<int>(same - shapes_.begin());
    }
    terms_.push_back(t);
  }
}

void CovarianceKernel::distances(const Shape& s, std::size_t count, const double* dx,
                                 const double* dy, const double* dz, double* h) const {
  if (s.isotropic) {  // any rotation of a sphere is the sphere
    if (dz) {
#pragma omp simd
      for (std::size_t i = 0; i < count; ++i)
        h[i] = std::sqrt(dx[i] * dx[i] + dy[i] * dy[i] + dz[i] * dz[i]);
    } else {
#pragma omp simd
      for (std::size_t i = 0; i < count; ++i) h[i] = std::sqrt(dx[i] * dx[i] + dy[i] * dy[i]);
    }
    return;
  }
  const auto& m = s.m;
#pragma omp simd
  for (std::size_t i = 0; i < count; ++i) {
    const double z = dz ? dz[i] : 0.0;
    const double a = m[0][0] * dx[i] + m[0][1] * dy[i] + m[0][2] * z;
    const double b = m[1][0] * dx[i] + m[1][1] * dy[i] + m[1][2] * z;
    const double c = m[2][0] * dx[i] + m[2][1] * dy[i] + m[2][2] * z;
    h[i] = std::sqrt(a * a + b * b + c * c);
  }
}

void CovarianceKernel::evaluate(std::size_t count, const double* dx, const double* dy,
                                const double* dz, double* out) const {
  double h[kBlock];
  for (std::size_t start = 0; start < count; start += kBlock) {
    const std::size_t m = std::min(kBlock, count - start);
    const double* x = dx + start;
    const double* y = dy + start;
    const double* z = dz ? dz + start : nullptr;
    double* o = out + start;
#pragma omp simd
    for (std::size_t i = 0; i < m; ++i) o[i] = 0;
    int have = -1;  // the shape whose distances are in h
    for (const Term& t : terms_) {
      const CompiledStructure& c = t.compiled;
      const double sill = c.sill;
      if (c.family == Family::nugget) {  // C(0) only at a zero lag
#pragma omp simd
        for (std::size_t i = 0; i < m; ++i) {
          const bool zero = x[i] == 0 && y[i] == 0 && (!z || z[i] == 0);
          o[i] += zero ? sill : 0.0;
        }
        continue;
      }
      if (t.shape != have) {
        distances(shapes_[static_cast<std::size_t>(t.shape)], m, x, y, z, h);
        have = t.shape;
      }
      const double ir = c.inverse_range;
      // The formulas of unit_correlation (evaluate.cpp). Clamping r at 1
      // gives exactly 0 beyond the range for spherical and cubic (their
      // polynomials are exactly 1 at r = 1), without a branch.
      switch (c.family) {
        case Family::spherical:
#pragma omp simd
          for (std::size_t i = 0; i < m; ++i) {
            const double r = std::min(h[i] * ir, 1.0);
            o[i] += sill * (1 - r * (1.5 - 0.5 * r * r));
          }
          break;
        case Family::cubic:
#pragma omp simd
          for (std::size_t i = 0; i < m; ++i) {
            const double r = std::min(h[i] * ir, 1.0);
            o[i] +=
                sill * (1 - r * r * (7 + r * (-35.0 / 4 + r * r * (7.0 / 2 - 3.0 / 4 * r * r))));
          }
          break;
        case Family::exponential:
          for (std::size_t i = 0; i < m; ++i) o[i] += sill * std::exp(-3 * (h[i] * ir));
          break;
        case Family::gaussian:
          for (std::size_t i = 0; i < m; ++i) {
            const double r = h[i] * ir;
            o[i] += sill * std::exp(-3 * r * r);
          }
          break;
        default:  // matern: the model's own evaluation (Bessel functions dominate anyway)
          for (std::size_t i = 0; i < m; ++i) o[i] += sill * unit_correlation(c, h[i] * ir);
          break;
      }
    }
  }
}

}  // namespace sillstone::detail
