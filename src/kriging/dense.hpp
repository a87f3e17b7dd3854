// Small dense linear algebra on caller-owned buffers, for the kriging hot
// loop: no allocation, n up to a few hundred.
//
// The kriging systems are stored column-major with a leading dimension
// `ld` (column j at a + j * ld), so that a system can grow and shrink
// inside buffers sized once. Their factorisation is right-looking: after
// column k is scaled, each later column j takes the update
// A(j:n, j) -= L(j, k) L(j:n, k), a contiguous axpy that vectorises WITHOUT
// reassociating anything: every entry receives its updates one at a time in
// the order k = 0, 1, ..., as in the textbook scalar loop, so the results
// do not depend on the SIMD width. (The dot-product forms, row-major Crout
// or the column-major cholesky() below, have either strided inner loops or
// sums that must be reordered to vectorise; for 24 samples they were 2-3x
// slower.) The forward solve adds its updates in the same order, so a row
// appended to a factor by forward substitution is exactly the row that a
// full factorisation would give.
// cholesky()/cholesky_solve() (column-major, ld = n) serve the small drift
// systems.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstddef>

namespace sillstone::detail {

/// a'b over n entries. The sum is split over SIMD lanes (so its rounding
/// differs from a left-to-right sum, by the same amount on every run).
inline double dot(const double* a, const double* b, std::size_t n) {
  double s = 0;
#pragma omp simd reduction(+ : s)
  for (std::size_t k = 0; k < n; ++k) s += a[k] * b[k];
  return s;
}

/// y[i] -= alpha x[i], i < n.
inline void axpy_sub(double alpha, const double* x, double* y, std::size_t n) {
#pragma omp simd
  for (std::size_t i = 0; i < n; ++i) y[i] -= alpha * x[i];
}

/// In-place Cholesky factorisation A = L L' of the n x n symmetric matrix in
/// `a` (column-major with leading dimension ld, lower triangle read and
/// overwritten by L), with inv_diag[j] = 1 / L(j, j). Fails when a pivot is
/// not positive or falls below `rel_tol` times its diagonal entry (a cheap,
/// scale-invariant sign of a singular or badly conditioned matrix).
/// `diag` (n entries) is scratch for the original diagonal.
inline bool cholesky_ld(double* a, std::size_t ld, std::size_t n, double* inv_diag, double* diag,
                        double rel_tol) {
  for (std::size_t j = 0; j < n; ++j) diag[j] = a[j * ld + j];
  for (std::size_t k = 0; k < n; ++k) {
    double* ck = a + k * ld;
    const double d = ck[k];
    if (!(d > rel_tol * std::abs(diag[k]))) return false;
    const double lkk = std::sqrt(d);
    const double inv = 1 / lkk;
    ck[k] = lkk;
    inv_diag[k] = inv;
#pragma omp simd
    for (std::size_t i = k + 1; i < n; ++i) ck[i] *= inv;
    for (std::size_t j = k + 1; j < n; ++j) axpy_sub(ck[j], ck + j, a + j * ld + j, n - j);
  }
  return true;
}

/// Solves L y = b in place (L from cholesky_ld()), column by column, four
/// columns per pass over b: each entry still receives its updates one at a
/// time in column order, ((b_i - y_k L_ik) - y_k+1 L_i,k+1) - ..., exactly
/// as one column at a time would give, with a quarter of the loop overhead
/// and of the traffic on b.
inline void forward_solve(const double* l, std::size_t ld, std::size_t n, const double* inv_diag,
                          double* b) {
  std::size_t k = 0;
  for (; k + 3 < n; k += 4) {
    const double* c0 = l + k * ld;
    const double* c1 = c0 + ld;
    const double* c2 = c1 + ld;
    const double* c3 = c2 + ld;
    const double y0 = b[k] *= inv_diag[k];
    const double y1 = b[k + 1] = (b[k + 1] - y0 * c0[k + 1]) * inv_diag[k + 1];
    const double y2 = b[k + 2] = ((b[k + 2] - y0 * c0[k + 2]) - y1 * c1[k + 2]) * inv_diag[k + 2];
    const double y3 = b[k + 3] =
        (((b[k + 3] - y0 * c0[k + 3]) - y1 * c1[k + 3]) - y2 * c2[k + 3]) * inv_diag[k + 3];
#pragma omp simd
    for (std::size_t i = k + 4; i < n; ++i)
      b[i] = (((b[i] - y0 * c0[i]) - y1 * c1[i]) - y2 * c2[i]) - y3 * c3[i];
  }
  for (; k < n; ++k) {
    b[k] *= inv_diag[k];
    axpy_sub(b[k], l + k * ld + k + 1, b + k + 1, n - k - 1);
  }
}

/// Solves L' x = y in place (L from cholesky_ld()).
inline void backward_solve(const double* l, std::size_t ld, std::size_t n, const double* inv_diag,
                           double* b) {
  for (std::size_t i = n; i-- > 0;) {
    const double* ci = l + i * ld;
    double s = b[i];
    for (std::size_t k = i + 1; k < n; ++k) s -= ci[k] * b[k];
    b[i] = s * inv_diag[i];
  }
}

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
    x[i] = (i % 2 ? -1.0 : 1.0) *
           (1.0 + static_cast<double>(i) / static_cast<double>(n > 1 ? n - 1 : 1));
  cholesky_solve(l, n, x);
  double alt = 0;
  for (std::size_t i = 0; i < n; ++i) alt += std::abs(x[i]);
  alt = 2 * alt / (3 * static_cast<double>(n));
  estimate = std::max(estimate, alt);
  if (!std::isfinite(estimate) || !(estimate > 0)) return 0.0;
  return 1.0 / (norm1 * estimate);
}

}  // namespace sillstone::detail
