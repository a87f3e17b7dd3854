// The batched covariance kernel of the kriging hot loop (src/models/kernel.hpp)
// against the model's own one-lag evaluation, which the model tests check
// against the families' formulas.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <vector>

#include "models/kernel.hpp"
#include "sillstone/model.hpp"

using namespace sillstone;

TEST_CASE("the covariance kernel equals CovarianceModel::covariance to rounding", "[kernel]") {
  const char* specs[] = {
      "0.2 nugget + 1.1 spherical(range=450) + 0.4 exponential(range=2000, azimuth=30, ratio=0.5)",
      "1 gaussian(range=300) + 0.5 cubic(range=800, azimuth=45, ratio=0.3, dip=20, plunge=10, "
      "ratio2=0.5) + 0.25 spherical(range=90, azimuth=45, ratio=0.3, dip=20, plunge=10, "
      "ratio2=0.5)",
      "0.3 nugget + 1 matern(range=500, nu=1.5) + 2 cubic(range=250)",
      "0.1 nugget + 0.9 spherical(range=1500)",
      "1.5 cubic(range=300) + 0.05 nugget",
      "2 spherical(range=100)",
  };
  std::mt19937_64 rng(11);  // fixed seed
  std::uniform_real_distribution<double> lag(-1200, 1200);
  for (const char* spec : specs) {
    const CovarianceModel model = parse_model_spec(spec);
    const detail::CovarianceKernel kernel(model);
    for (const bool three_d : {false, true}) {
      // 150 lags: more than one block of the kernel, including zero and
      // tiny lags (the nugget's jump) and lags beyond every range.
      std::vector<double> dx, dy, dz;
      for (int i = 0; i < 150; ++i) {
        const double s = i % 10 == 0 ? 0.0 : i % 10 == 1 ? 1e-9 : i % 10 == 2 ? 20.0 : 1.0;
        dx.push_back(s * lag(rng));
        dy.push_back(s * lag(rng));
        dz.push_back(three_d ? s * lag(rng) : 0.0);
      }
      std::vector<double> out(dx.size());
      kernel.evaluate(dx.size(), dx.data(), dy.data(), three_d ? dz.data() : nullptr, out.data());
      for (std::size_t i = 0; i < dx.size(); ++i) {
        const double expected = model.covariance(dx[i], dy[i], dz[i]);
        INFO(spec << " lag (" << dx[i] << ", " << dy[i] << ", " << dz[i] << ")");
        CHECK(out[i] == Approx(expected).epsilon(1e-13).margin(1e-15 * model.total_sill()));
        CHECK(kernel(dx[i], dy[i], dz[i]) == out[i]);
      }
    }
  }
}

TEST_CASE("the covariance kernel gives the total sill at lag 0 and refuses power models",
          "[kernel]") {
  const CovarianceModel model = parse_model_spec("0.2 nugget + 1.1 spherical(range=450)");
  CHECK(detail::CovarianceKernel(model)(0, 0, 0) == model.total_sill());
  CHECK_THROWS_AS(detail::CovarianceKernel(parse_model_spec("1 power(exponent=1.5)")),
                  std::logic_error);
}
