#include "models/kernel.hpp"

#include <algorithm>  // std::min
#include <cmath>      // std::sqrt, std::exp
#include <stdexcept>  // std::logic_error for a model without a sill

#include "models/model_detail.hpp"

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace sillstone::detail {

namespace {
// Lags are processed in blocks of this many, so that the per-block scratch
// (distances) stays on the stack and in L1.
constexpr std::size_t kBlock = 64;

// One pass for the common model "nugget + one spherical or cubic
// structure", isotropic: the distance, the structure and the nugget of
// each lag at once, instead of four passes (zero, nugget, distances,
// structure) over the batch. The same operations as those passes: the
// values are equal bit for bit (with two terms, their sum does not depend
// on the model's order).
template <bool Cubic>
inline double one_value(double h, double ir, double sill) {
  const double r = std::min(h * ir, 1.0);
  return Cubic ? sill * (1 - r * r * (7 + r * (-35.0 / 4 + r * r * (7.0 / 2 - 3.0 / 4 * r * r))))
               : sill * (1 - r * (1.5 - 0.5 * r * r));
}

template <bool Cubic, bool ThreeD>
void one_structure(std::size_t count, const double* x, const double* y, const double* z,
                   double sill, double ir, double nugget, double* o) {
  std::size_t i = 0;
#if defined(__SSE2__)
  // Written out in SSE2 (baseline x86-64): GCC leaves this loop scalar
  // (std::sqrt's errno path, the min and the select count as control
  // flow). The same operations in the same order, so the same values:
  // sqrtpd and minpd round and compare as sqrtsd and std::min do.
  const __m128d vir = _mm_set1_pd(ir), vsill = _mm_set1_pd(sill), vnug = _mm_set1_pd(nugget);
  const __m128d one = _mm_set1_pd(1.0), zero = _mm_setzero_pd();
  for (; i + 2 <= count; i += 2) {
    const __m128d vx = _mm_loadu_pd(x + i), vy = _mm_loadu_pd(y + i);
    __m128d h2 = _mm_add_pd(_mm_mul_pd(vx, vx), _mm_mul_pd(vy, vy));
    __m128d at_zero = _mm_and_pd(_mm_cmpeq_pd(vx, zero), _mm_cmpeq_pd(vy, zero));
    if constexpr (ThreeD) {
      const __m128d vz = _mm_loadu_pd(z + i);
      h2 = _mm_add_pd(h2, _mm_mul_pd(vz, vz));
      at_zero = _mm_and_pd(at_zero, _mm_cmpeq_pd(vz, zero));
    }
    const __m128d r = _mm_min_pd(_mm_mul_pd(_mm_sqrt_pd(h2), vir), one);
    __m128d poly;
    if constexpr (Cubic) {
      const __m128d r2 = _mm_mul_pd(r, r);
      // 7 + r (-35/4 + r^2 (7/2 - 3/4 r^2))
      __m128d t =
          _mm_sub_pd(_mm_set1_pd(7.0 / 2), _mm_mul_pd(_mm_mul_pd(_mm_set1_pd(3.0 / 4), r), r));
      t = _mm_add_pd(_mm_set1_pd(-35.0 / 4), _mm_mul_pd(r2, t));
      t = _mm_add_pd(_mm_set1_pd(7.0), _mm_mul_pd(r, t));
      poly = _mm_sub_pd(one, _mm_mul_pd(r2, t));
    } else {
      // 1 - r (1.5 - 0.5 r^2)
      const __m128d t =
          _mm_sub_pd(_mm_set1_pd(1.5), _mm_mul_pd(_mm_mul_pd(_mm_set1_pd(0.5), r), r));
      poly = _mm_sub_pd(one, _mm_mul_pd(r, t));
    }
    const __m128d c = _mm_mul_pd(vsill, poly);
    _mm_storeu_pd(o + i, _mm_add_pd(_mm_and_pd(at_zero, vnug), c));
  }
#endif
  for (; i < count; ++i) {
    double h2 = x[i] * x[i] + y[i] * y[i];
    if constexpr (ThreeD) h2 += z[i] * z[i];
    const bool at_zero = x[i] == 0 && y[i] == 0 && (!ThreeD || z[i] == 0);
    o[i] = (at_zero ? nugget : 0.0) + one_value<Cubic>(std::sqrt(h2), ir, sill);
  }
}
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
  int structures = 0, nuggets = 0;
  for (const Term& t : terms_) {
    if (t.compiled.family == Family::nugget) {
      ++nuggets;
      fast_nugget_ = t.compiled.sill;
    } else {
      ++structures;
      fast_family_ = t.compiled.family;
      fast_sill_ = t.compiled.sill;
      fast_inverse_range_ = t.compiled.inverse_range;
    }
  }
  fast_ = structures == 1 && nuggets <= 1 && shapes_.size() == 1 && shapes_[0].isotropic &&
          (fast_family_ == Family::spherical || fast_family_ == Family::cubic);
  if (nuggets == 0) fast_nugget_ = 0;
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
  if (fast_) {
    const double sill = fast_sill_, ir = fast_inverse_range_, nugget = fast_nugget_;
    if (fast_family_ == Family::cubic) {
      if (dz)
        one_structure<true, true>(count, dx, dy, dz, sill, ir, nugget, out);
      else
        one_structure<true, false>(count, dx, dy, dz, sill, ir, nugget, out);
    } else {
      if (dz)
        one_structure<false, true>(count, dx, dy, dz, sill, ir, nugget, out);
      else
        one_structure<false, false>(count, dx, dy, dz, sill, ir, nugget, out);
    }
    return;
  }
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
