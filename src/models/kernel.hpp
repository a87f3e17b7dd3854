// The covariance of a model, evaluated in batches for the kriging hot loop.
//
// CovarianceModel::covariance evaluates one lag at a time: for every
// structure a 3 x 3 rotation, a square root and a switch on the family. A
// kriging system of 24 samples needs 300 such values, and on dense data a
// new system is built at almost every node, so that was most of the time
// (docs/performance.md). The kernel evaluates many lags per call instead:
//  - structures with the same anisotropy share one distance per lag (an
//    isotropic model needs one sqrt(dx^2 + dy^2 + dz^2) for all structures);
//  - the family is chosen once per structure and batch, not once per lag,
//    and the loops of the polynomial families (nugget, spherical, cubic)
//    are branch-free so that the compiler can vectorise them.
// Values agree with CovarianceModel::covariance to rounding (a few units in
// the last place: the distance is computed in a different order); the
// structures are summed in the model's order, as there.
//
// Thread safety: immutable after construction; evaluate() may run
// concurrently. It does not allocate.
#pragma once

#include <cstddef>
#include <vector>

#include "sillstone/model.hpp"

namespace sillstone::detail {

class CovarianceKernel {
 public:
  /// Requires model.has_sill() (std::logic_error otherwise).
  explicit CovarianceKernel(const CovarianceModel& model);

  /// out[i] = C(dx[i], dy[i], dz[i]) for i < count. `dz` may be null for 2D
  /// lags (dz = 0).
  void evaluate(std::size_t count, const double* dx, const double* dy, const double* dz,
                double* out) const;

  /// One lag.
  double operator()(double dx, double dy, double dz) const {
    double out;
    evaluate(1, &dx, &dy, &dz, &out);
    return out;
  }

 private:
  // The anisotropy shared by some structures: |m h| is the lag's distance
  // in units of their major axis (the structure's range then scales it).
  struct Shape {
    Anisotropy anisotropy;
    bool isotropic = true;
    double m[3][3] = {};
  };
  struct Term {
    CompiledStructure compiled;  // for families evaluated by the model code (matern)
    int shape = -1;              // index into shapes_, -1 for the nugget
  };
  std::vector<Shape> shapes_;
  std::vector<Term> terms_;  // in the model's order
  // A nugget (or none) and one spherical or cubic structure, isotropic:
  // evaluated in one pass (kernel.cpp, one_structure).
  bool fast_ = false;
  Family fast_family_ = Family::spherical;
  double fast_sill_ = 0, fast_inverse_range_ = 0, fast_nugget_ = 0;

  void distances(const Shape& s, std::size_t count, const double* dx, const double* dy,
                 const double* dz, double* h) const;
};

}  // namespace sillstone::detail
