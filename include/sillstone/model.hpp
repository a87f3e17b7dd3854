// sillstone/model.hpp -- covariance models: sums of structures with geometric anisotropy.
//
// The fitted model of the pipeline, read by cross-validation and kriging. A
// model is written the way the textbooks write it (docs/models.md):
//
//   auto m = sillstone::parse_model_spec(
//       "0.2 nugget + 1.1 spherical(range=450) + 0.4 exponential(range=2000, azimuth=30,
//       ratio=0.5)");
//   double g = m.variogram(100.0, 50.0);        // 2D lag (dx, dy)
//   double c = m.covariance(100.0, 50.0, -5.0); // 3D lag (dx, dy, dz)
//   std::string spec = sillstone::to_spec(m);   // parse_model_spec(spec) == m
//
// Conventions (docs/models.md has the formulas and a worked example):
//  - `range` is the practical range a, in distance units of the coordinates:
//    exponential c(1 - exp(-3h/a)), gaussian c(1 - exp(-3h^2/a^2)); spherical
//    and cubic reach c at h = a; matern has correlation exactly 0.05 at h = a.
//  - Lags are (dx, dy, dz) with x east, y north, z up. Azimuth in degrees
//    clockwise from north; dip in degrees, positive down.
//  - power is intrinsic: gamma(h) = c h^exponent, h in distance units along the
//    major axis, so its `sill` is a slope in value^2 / distance^exponent.
//
// Thread safety: a CovarianceModel is immutable once built; all its const
// methods may be called from several threads at once. They do not allocate.
#pragma once

#include <array>
#include <string>
#include <vector>

#include "sillstone/transform.hpp"

namespace sillstone {

/// The covariance families. References for each formula are in docs/models.md.
enum class Family : int {
  nugget,       ///< 0 at h = 0, c for h > 0
  spherical,    ///< c (1.5 r - 0.5 r^3) for r = h/a < 1, c beyond
  exponential,  ///< c (1 - exp(-3 r))
  gaussian,     ///< c (1 - exp(-3 r^2))
  cubic,        ///< c (7 r^2 - 35/4 r^3 + 7/2 r^5 - 3/4 r^7) for r < 1, c beyond
  matern,       ///< c (1 - rho_nu(h / theta)), theta such that rho = 0.05 at h = a
  power,        ///< c h^exponent (intrinsic: no sill, no range)
};

/// Geometric anisotropy of one structure: its ranges in all directions form an
/// ellipse (2D) or ellipsoid (3D) whose longest axis has the structure's range.
/// The defaults are isotropic. 2D data use azimuth and ratio only; a structure
/// that sets dip, plunge or ratio2 describes 3D continuity.
struct Anisotropy {
  double azimuth = 0;  ///< degrees clockwise from north of the major axis, in [-360, 360]
  double ratio = 1;   ///< minor / major range, in (0, 1]; the minor axis is horizontal at azimuth +
                      ///< 90 before plunge
  double dip = 0;     ///< degrees below horizontal of the major axis, in [-90, 90]
  double plunge = 0;  ///< degrees of rotation about the major axis, in [-90, 90]; positive tips the
                      ///< minor axis down
  double ratio2 = 1;  ///< third (vertical before dip and plunge) / major range, in (0, 1]

  /// True when all directions have the same range (ratio == ratio2 == 1).
  bool is_isotropic() const { return ratio == 1 && ratio2 == 1; }
  bool operator==(const Anisotropy& o) const;
};

/// One structure of a model: a family, its partial sill and its shape.
/// Parameters a family does not use stay at their defaults (0, isotropic).
struct Structure {
  Family family = Family::nugget;
  double sill = 0;        ///< partial sill c >= 0; power: the slope c of c h^exponent
  double range = 0;       ///< practical range a > 0 along the major axis; 0 for nugget and power
  double nu = 0;          ///< matern smoothness, 0.05 <= nu <= 20; 0 for the other families
  double exponent = 0;    ///< power exponent, 0 < exponent < 2; 0 for the other families
  Anisotropy anisotropy;  ///< isotropic for nugget

  /// True when the parameters are within the rules of docs/models.md;
  /// otherwise `why` (when not null) says which parameter is wrong and why.
  bool is_valid(std::string* why) const;
  bool operator==(const Structure& o) const;
};

namespace detail {
/// A structure prepared for evaluation (built once by CovarianceModel).
struct CompiledStructure {
  Family family = Family::nugget;
  double sill = 0;
  double reduce[3][3] = {};  ///< lag (dx, dy, dz) -> reduced lag; |reduced lag| = r
  double inverse_range = 1;  ///< r = distance * inverse_range on the isotropic path
  double exponent = 0;       ///< power
  double nu = 0;             ///< matern
  double matern_scale = 0;   ///< matern: t = r * matern_scale, with rho_nu(matern_scale) = 0.05
  double matern_factor = 0;  ///< matern: 2^(1-nu) / Gamma(nu)
};
}  // namespace detail

/// A covariance model: the sum of its structures. The variogram is
/// gamma(h) = sum_i c_i g_i(r_i(h)); when every structure has a sill the
/// covariance is C(h) = total_sill - gamma(h) and the correlation C(h) / C(0).
class CovarianceModel {
 public:
  /// A model without structures (variogram 0 everywhere): a placeholder only.
  CovarianceModel() = default;
  /// Prepares `structures` for evaluation. Throws InputError("model", ...)
  /// when `is_valid(structures, &why)` fails.
  explicit CovarianceModel(std::vector<Structure> structures);

  /// True when each structure is valid, there is at least one, at most one is
  /// a nugget and the sills are not all 0; otherwise `why` says what is wrong.
  static bool is_valid(const std::vector<Structure>& structures, std::string* why);

  const std::vector<Structure>& structures() const { return structures_; }
  /// False when a structure is a power model: then there is no covariance.
  bool has_sill() const { return has_sill_; }
  /// Sum of the partial sills (the variance C(0)); +infinity without a sill.
  double total_sill() const { return total_sill_; }
  /// Sill of the nugget structure, 0 when there is none.
  double nugget() const { return nugget_; }
  /// 3 when a structure sets dip, plunge or ratio2, else 2 (usable in 2D and 3D;
  /// in 3D the vertical range then equals the major range).
  int dimension() const;
  /// True when every structure is isotropic: then values depend on distance only.
  bool is_isotropic() const { return isotropic_; }

  /// Semivariogram at a 2D or 3D lag (dx, dy[, dz]) in coordinate units.
  double variogram(double dx, double dy, double dz = 0) const;
  /// Semivariogram at `distance` >= 0 for an isotropic model (std::logic_error otherwise).
  double variogram(double distance) const;
  /// Covariance total_sill - variogram, computed without cancellation.
  /// Requires has_sill() (std::logic_error otherwise).
  double covariance(double dx, double dy, double dz = 0) const;
  double covariance(double distance) const;
  /// covariance / total_sill, in [0, 1]. Requires has_sill().
  double correlation(double dx, double dy, double dz = 0) const;
  double correlation(double distance) const;

  /// Same structures in the same order, parameter for parameter.
  bool operator==(const CovarianceModel& o) const { return structures_ == o.structures_; }

 private:
  void require_sill() const;
  void require_isotropic() const;

  std::vector<Structure> structures_;
  std::vector<detail::CompiledStructure> compiled_;
  bool has_sill_ = true;
  bool isotropic_ = true;
  double total_sill_ = 0;
  double nugget_ = 0;
};

/// The shape of a search ellipse (ellipsoid) that follows the anisotropy of
/// the model's longest-range structure: a row-major 3 x 3 matrix M such that
/// |M h| is the lag h's distance measured in units of that structure's major
/// axis (|M h| = |h| along the major axis, |h| / ratio along the minor one).
/// The identity when no structure has a range (nugget, power only).
std::array<double, 9> search_shape(const CovarianceModel& model);

/// Reads a model written in the SPEC syntax of docs/models.md, e.g.
/// "0.2 nugget + 1.1 spherical(range=450)". Throws InputError("model", ...)
/// quoting the spec and the 1-based column of the fault.
CovarianceModel parse_model_spec(const std::string& spec);

/// The canonical SPEC of `model`: structures in order, parameters in the order
/// range, nu, exponent, azimuth, ratio, dip, plunge, ratio2, each anisotropy
/// parameter only when it differs from its default, numbers in their shortest
/// exact form. parse_model_spec(to_spec(m)) == m.
std::string to_spec(const CovarianceModel& model);

/// The SPEC of `model` as people read it in tables, messages and the report:
/// as to_spec, each number at `significant` significant digits
/// (format_for_people), e.g. "0.6249 spherical(range=125.4)". It need not
/// read back to exactly `model`: files keep to_spec's full precision.
std::string to_spec_for_people(const CovarianceModel& model, int significant = 4);

/// The contents of a model.json file (layout in docs/models.md).
struct ModelFile {
  CovarianceModel model;
  ValueTransform transform;  ///< of the values the model describes
  /// True when the file says its transform ({"kind": ...}, or the older text
  /// form); false for a SPEC string and for a model.json without "transform".
  bool transform_recorded = false;
  std::vector<std::string> notes;  ///< e.g. that an older file's transform was assumed
  std::string
      fit;  ///< the "fit" object as compact JSON text, written by the fit stage; empty: none
};

/// Reads model.json text. `source_name` (a path as the user gave it) names the
/// input in errors, which also give the JSON path of the fault, e.g.
/// "model: model.json: structures[1].range: must be > 0 (got -3)".
/// Array indices in those paths count from 0.
ModelFile model_from_json(const std::string& text, const std::string& source_name);

/// Writes model.json text (2-space indented, keys in the documented order).
std::string model_to_json(const ModelFile& file);

/// Reads the value of a `--model` option: the path of a JSON model file when
/// such a file exists or the text ends with ".json", otherwise a SPEC string.
ModelFile load_model(const std::string& model_option);

}  // namespace sillstone
