// Shared helpers for the unit tests: scratch folders, small files, and a
// synthetic-sample generator with fixed seeds (results repeat run to run).
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "sillstone/samples.hpp"

namespace sillstone::test {

/// A fresh folder under the system temp dir, removed when the object dies.
class ScratchDir {
 public:
  ScratchDir();
  ~ScratchDir();
  ScratchDir(const ScratchDir&) = delete;
  ScratchDir& operator=(const ScratchDir&) = delete;
  /// Path of `name` inside the folder.
  std::string path(const std::string& name) const;
  /// Writes `text` byte for byte to `name` and returns its path.
  std::string write(const std::string& name, const std::string& text) const;

 private:
  std::filesystem::path dir_;
};

/// Synthetic samples: uniform locations in [0, size)^2 and values from a
/// deterministic pseudo-random sequence (std::mt19937_64 with `seed`).
struct Synthetic {
  std::vector<Point> points;
  std::vector<double> a, b;  ///< two correlated variables
};
Synthetic make_synthetic(std::size_t n, std::uint64_t seed, double size = 1000.0);

/// Writes point features with attribute "value" (and "id") through OGR.
/// `driver` is an OGR short name ("GPKG", "GeoJSON"); `epsg` 0 for no CRS.
void write_points(const std::string& path, const std::string& driver, int epsg,
                  const std::vector<Point>& points, const std::vector<double>& values);

}  // namespace sillstone::test
