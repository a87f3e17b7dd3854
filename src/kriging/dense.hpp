// Small dense linear algebra on caller-owned buffers, for the kriging hot
// loop: no allocation, column-major storage, n up to a few hundred.
#pragma once

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

}  // namespace sillstone::detail
