// Small dense linear algebra on caller-owned buffers, for the kriging hot
// loop: no allocation, column-major storage, n up to a few hundred.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstddef>

namespace sillstone::detail {

/// In-place Cholesky factorisation A = L L' of the n x n symmetric matrix in
/// `a` (column-major, lower triangle read and overwritten by L). Fails when a
/// pivot is not positive or falls below `rel_tol` times its diagonal entry
/// (a cheap, scale-invariant sign of a singular or badly conditioned matrix).
inline bool cholesky(double* a, std::size_t n, double rel_tol) {
  for (std::size_t j = 0; j < n; ++j) {
    double* cj = a + j * n;
    const double diag = cj[j];
    double d = diag;
    for (std::size_t k = 0; k < j; ++k) d -= a[k * n + j] * a[k * n + j];
    if (!(d > rel_tol * std::abs(diag))) return false;
    const double ljj = std::sqrt(d);
    cj[j] = ljj;
    for (std::size_t i = j + 1; i < n; ++i) {
      double s = cj[i];
      for (std::size_t k = 0; k < j; ++k) s -= a[k * n + i] * a[k * n + j];
      cj[i] = s / ljj;
    }
  }
  return true;
}

/// Solves L L' x = b in place (b becomes x), L from cholesky().
inline void cholesky_solve(const double* l, std::size_t n, double* b) {
  for (std::size_t i = 0; i < n; ++i) {  // L y = b
    double s = b[i];
    for (std::size_t k = 0; k < i; ++k) s -= l[k * n + i] * b[k];
    b[i] = s / l[i * n + i];
  }
  for (std::size_t i = n; i-- > 0;) {  // L' x = y
    double s = b[i];
    for (std::size_t k = i + 1; k < n; ++k) s -= l[i * n + k] * b[k];
    b[i] = s / l[i * n + i];
  }
}

/// The 1-norm of the symmetric n x n matrix whose lower triangle is in `a`
/// (column-major): the largest column sum of absolute values. `work` holds n.
inline double symmetric_norm1(const double* a, std::size_t n, double* work) {
  std::fill(work, work + n, 0.0);
  for (std::size_t j = 0; j < n; ++j)
    for (std::size_t i = j; i < n; ++i) {
      const double v = std::abs(a[j * n + i]);
      work[j] += v;
      if (i != j) work[i] += v;
    }
  return n ? *std::max_element(work, work + n) : 0.0;
}

/// Estimate of the reciprocal condition number 1 / (||A||_1 ||A^-1||_1) of
/// the symmetric positive definite A = L L' (L from cholesky()), given
/// `norm1` = ||A||_1 (symmetric_norm1, taken before factorising). ||A^-1||_1
/// is estimated by Hager's method as refined by Higham (1988, ACM TOMS 14,
/// "FORTRAN codes for estimating the one-norm of a real or complex matrix"),
/// the estimator behind LAPACK's xPOCON: at most five pairs of solves, O(n^2)
/// each. The estimate of ||A^-1||_1 is a lower bound, almost always within a
/// factor of 3 of the true value. `x` and `z` hold n each.
inline double cholesky_rcond(const double* l, std::size_t n, double norm1, double* x, double* z) {
  if (n == 0 || !(norm1 > 0)) return 0.0;
  std::fill(x, x + n, 1.0 / static_cast<double>(n));
  double estimate = 0;
  std::size_t last = n;  // the unit vector probed last (n: the first probe, ones / n)
  for (int iteration = 0; iteration < 5; ++iteration) {
    cholesky_solve(l, n, x);  // y = A^-1 probe, in x
    double norm = 0;
    for (std::size_t i = 0; i < n; ++i) norm += std::abs(x[i]);
    if (!std::isfinite(norm)) return 0.0;
    if (iteration > 0 && norm <= estimate) break;
    estimate = norm;
    for (std::size_t i = 0; i < n; ++i) z[i] = x[i] >= 0 ? 1.0 : -1.0;
    cholesky_solve(l, n, z);  // z = A^-T sign(y) = A^-1 sign(y)
    double z_probe = 0;       // z' probe
    if (last == n) {
      for (std::size_t i = 0; i < n; ++i) z_probe += z[i];
      z_probe /= static_cast<double>(n);
    } else {
      z_probe = z[last];
    }
    std::size_t j = 0;
    for (std::size_t i = 1; i < n; ++i)
      if (std::abs(z[i]) > std::abs(z[j])) j = i;
    if (std::abs(z[j]) <= z_probe || j == last) break;
    last = j;
    std::fill(x, x + n, 0.0);
    x[j] = 1.0;
  }
  // Higham's safeguard: an alternating-sign vector catches matrices on which
  // the iteration stalls.
  for (std::size_t i = 0; i < n; ++i)
    x[i] = (i % 2 ? -1.0 : 1.0) * (1.0 + static_cast<double>(i) / static_cast<double>(n > 1 ? n - 1 : 1));
  cholesky_solve(l, n, x);
  double alt = 0;
  for (std::size_t i = 0; i < n; ++i) alt += std::abs(x[i]);
  alt = 2 * alt / (3 * static_cast<double>(n));
  estimate = std::max(estimate, alt);
  if (!std::isfinite(estimate) || !(estimate > 0)) return 0.0;
  return 1.0 / (norm1 * estimate);
}

}  // namespace sillstone::detail
