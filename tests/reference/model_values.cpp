// Test-only helper for the reference checks (not installed, not a CLI verb):
// prints the variogram, covariance and correlation of a model at given lags.
//
// Usage: sillstone_model_values "SPEC" < lags
// Each input line holds one lag "dx dy dz"; each output line holds
// "variogram covariance correlation" with 17 significant digits ("nan" for
// the covariance and correlation of a model without a sill).
#include <cstdio>
#include <exception>
#include <iostream>
#include <limits>

#include "sillstone/model.hpp"

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: sillstone_model_values SPEC < lags\n";
    return 2;
  }
  try {
    const sillstone::CovarianceModel model = sillstone::parse_model_spec(argv[1]);
    const double nan = std::numeric_limits<double>::quiet_NaN();
    const bool sill = model.has_sill();
    double dx = 0, dy = 0, dz = 0;
    while (std::cin >> dx >> dy >> dz)
      std::printf("%.17g %.17g %.17g\n", model.variogram(dx, dy, dz),
                  sill ? model.covariance(dx, dy, dz) : nan,
                  sill ? model.correlation(dx, dy, dz) : nan);
  } catch (const std::exception& e) {
    std::cerr << "error: " << e.what() << "\n";
    return 2;
  }
  return 0;
}
