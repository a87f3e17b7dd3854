// What each family takes and the validity rules of structures and models
// (docs/models.md, "Validity rules").
#include <cmath>
#include <string>

#include "models/model_detail.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"

namespace sillstone {
namespace detail {

bool takes_range(Family family) { return family != Family::nugget && family != Family::power; }

const char* shape_key(Family family) {
  if (family == Family::matern) return "nu";
  if (family == Family::power) return "exponent";
  return nullptr;
}

std::vector<std::string> parameter_keys(Family family, std::vector<std::string>* required) {
  std::vector<std::string> keys;
  if (takes_range(family)) keys.push_back("range");
  if (const char* shape = shape_key(family)) keys.push_back(shape);
  *required = keys;  // range and the shape parameter have no default
  if (takes_anisotropy(family))
    for (const char* key : kAnisotropyKeys) keys.push_back(key);
  return keys;
}

void set_parameter(Structure* s, const std::string& key, double value) {
  Anisotropy& a = s->anisotropy;
  double* target = key == "range"      ? &s->range
                   : key == "nu"       ? &s->nu
                   : key == "exponent" ? &s->exponent
                   : key == "azimuth"  ? &a.azimuth
                   : key == "ratio"    ? &a.ratio
                   : key == "dip"      ? &a.dip
                   : key == "plunge"   ? &a.plunge
                                       : &a.ratio2;
  *target = value;
}

std::string number_text(double x) {
  return std::isfinite(x) ? format_for_file(x) : format_for_people(x);
}

namespace {

std::optional<Fault> fault(const char* key, const std::string& message) {
  return Fault{key, message};
}

// "must be in (0, 1] (got 1.5)" when x is outside [lo, hi] (or (lo, hi] etc.).
std::optional<Fault> outside(const char* key, double x, double lo, bool lo_open, double hi,
                             bool hi_open) {
  const bool ok = std::isfinite(x) && (lo_open ? x > lo : x >= lo) && (hi_open ? x < hi : x <= hi);
  if (ok) return std::nullopt;
  return fault(key, std::string("must be in ") + (lo_open ? "(" : "[") + number_text(lo) + ", " +
                        number_text(hi) + (hi_open ? ")" : "]") + " (got " + number_text(x) + ")");
}

std::optional<Fault> unused(const char* key, Family family) {
  return fault(key, "is not a parameter of " + std::string(name_of(family)));
}

}  // namespace

std::optional<Fault> check_structure(const Structure& s) {
  if (!std::isfinite(s.sill) || s.sill < 0)
    return fault("sill", "must be >= 0 (got " + number_text(s.sill) + ")");
  if (takes_range(s.family)) {
    if (!std::isfinite(s.range) || s.range <= 0)
      return fault("range", "must be > 0 (got " + number_text(s.range) + ")");
  } else if (s.range != 0) {
    return unused("range", s.family);
  }
  if (s.family == Family::matern) {
    // The bounds keep the scale and t^nu K_nu(t) well within double range
    // (evaluate.cpp): as nu -> 0 the distance where the correlation falls to
    // 0.05 shrinks towards 0 (a nugget in disguise), and large nu is
    // indistinguishable from the gaussian.
    if (auto f = outside("nu", s.nu, 0.05, false, 20, false)) return f;
  } else if (s.nu != 0) {
    return unused("nu", s.family);
  }
  if (s.family == Family::power) {
    // gamma = c h^p is a valid variogram only for 0 < p < 2 (Chiles & Delfiner 2012).
    if (auto f = outside("exponent", s.exponent, 0, true, 2, true)) return f;
  } else if (s.exponent != 0) {
    return unused("exponent", s.family);
  }
  const Anisotropy& a = s.anisotropy;
  if (!takes_anisotropy(s.family)) {
    const Anisotropy isotropic;
    if (a.azimuth != isotropic.azimuth) return unused("azimuth", s.family);
    if (a.ratio != isotropic.ratio) return unused("ratio", s.family);
    if (a.dip != isotropic.dip) return unused("dip", s.family);
    if (a.plunge != isotropic.plunge) return unused("plunge", s.family);
    if (a.ratio2 != isotropic.ratio2) return unused("ratio2", s.family);
    return std::nullopt;
  }
  if (auto f = outside("azimuth", a.azimuth, -360, false, 360, false)) return f;
  if (auto f = outside("ratio", a.ratio, 0, true, 1, false)) return f;
  if (auto f = outside("dip", a.dip, -90, false, 90, false)) return f;
  if (auto f = outside("plunge", a.plunge, -90, false, 90, false)) return f;
  if (auto f = outside("ratio2", a.ratio2, 0, true, 1, false)) return f;
  return std::nullopt;
}

std::optional<Fault> check_model(const std::vector<Structure>& structures, std::size_t* index) {
  *index = structures.size();
  if (structures.empty()) return fault("", "a model needs at least one structure");
  bool nugget_seen = false, some_sill = false;
  double total = 0;
  for (std::size_t i = 0; i < structures.size(); ++i) {
    *index = i;
    if (auto f = check_structure(structures[i])) return f;
    if (structures[i].family == Family::nugget) {
      if (nugget_seen) return fault("", "a second nugget structure (a model has at most one)");
      nugget_seen = true;
    }
    some_sill = some_sill || structures[i].sill > 0;
    total += structures[i].sill;
  }
  *index = structures.size();
  if (!some_sill) return fault("", "the sills add up to 0");
  // A total beyond double range would make covariances inf - inf = NaN.
  if (!std::isfinite(total)) return fault("", "the sills add up to more than a double can hold");
  return std::nullopt;
}

}  // namespace detail

bool Anisotropy::operator==(const Anisotropy& o) const {
  return azimuth == o.azimuth && ratio == o.ratio && dip == o.dip && plunge == o.plunge &&
         ratio2 == o.ratio2;
}

bool Structure::operator==(const Structure& o) const {
  return family == o.family && sill == o.sill && range == o.range && nu == o.nu &&
         exponent == o.exponent && anisotropy == o.anisotropy;
}

bool Structure::is_valid(std::string* why) const {
  const auto f = detail::check_structure(*this);
  if (f && why) *why = std::string(name_of(family)) + " " + f->key + " " + f->message;
  return !f;
}

}  // namespace sillstone
