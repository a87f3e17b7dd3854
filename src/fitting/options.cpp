// Options of the fit: `--fix` holds (syntax in docs/fitting.md), their
// resolution against the structures, and FitOptions::is_valid.
#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <optional>
#include <string>
#include <vector>

#include "fitting/fit_detail.hpp"
#include "models/model_detail.hpp"
#include "sillstone/error.hpp"
#include "sillstone/names.hpp"

namespace sillstone {
namespace {

constexpr const char* kComponent = "fit";
constexpr std::size_t kMaxStructures = 6;  // brute-force non-negative sills stay cheap

// The keys a hold may name, in the documented order.
const std::vector<std::string>& hold_keys() {
  static const std::vector<std::string> keys = {"nugget",  "sill",  "range", "nu",     "exponent",
                                                "azimuth", "ratio", "dip",   "plunge", "ratio2"};
  return keys;
}

std::string joined(const std::vector<std::string>& items) {
  std::string out;
  for (const auto& item : items) out += (out.empty() ? "" : ", ") + item;
  return out;
}

std::string trimmed(const std::string& s) {
  const auto a = s.find_first_not_of(" \t");
  if (a == std::string::npos) return "";
  return s.substr(a, s.find_last_not_of(" \t") - a + 1);
}

FixedParameter parse_one(const std::string& item) {
  auto fail = [&item](const std::string& what) {
    return InputError(kComponent, "--fix '" + item + "': " + what);
  };
  const auto equals = item.find('=');
  if (equals == std::string::npos)
    throw fail("expected [N.]KEY=VALUE, e.g. range=450, nugget=0.1 or 2.range=300");
  std::string key = trimmed(item.substr(0, equals));
  const std::string value = trimmed(item.substr(equals + 1));
  FixedParameter f;
  const auto dot = key.find('.');
  if (dot != std::string::npos) {
    const std::string number = key.substr(0, dot);
    int n = 0;
    const auto res = std::from_chars(number.data(), number.data() + number.size(), n);
    if (number.empty() || res.ec != std::errc() || res.ptr != number.data() + number.size() ||
        n < 1)
      throw fail("the structure number before '.' must be a whole number from 1 (got '" + number +
                 "')");
    f.structure = n;
    key = key.substr(dot + 1);
  }
  bool known = false;
  for (const auto& k : hold_keys()) known = known || k == key;
  if (!known)
    throw fail("unknown parameter '" + key + "' (parameters: " + joined(hold_keys()) + ")");
  if (key == "nugget" && f.structure != 0)
    throw fail("write nugget=VALUE, or N.sill=VALUE for structure N");
  f.key = key;
  if (value == "longest") {
    if (key != "azimuth") throw fail("'longest' is a value of azimuth only");
    f.longest = true;
    return f;
  }
  const auto res = std::from_chars(value.data(), value.data() + value.size(), f.value);
  if (value.empty() || res.ec != std::errc() || res.ptr != value.data() + value.size() ||
      !std::isfinite(f.value))
    throw fail("'" + value + "' is not a number" +
               (key == "azimuth" ? " (nor 'longest')" : std::string()));
  return f;
}

// A valid structure of `family` with `key` set to `value`, to check the value
// against the model's own rules (docs/models.md, "Validity rules").
std::optional<detail::Fault> check_value(Family family, const std::string& key, double value) {
  Structure s;
  s.family = family;
  s.sill = 1;
  if (detail::takes_range(family)) s.range = 1;
  if (family == Family::matern) s.nu = 1.5;
  if (family == Family::power) s.exponent = 1;
  if (key == "sill")
    s.sill = value;
  else
    detail::set_parameter(&s, key, value);
  return detail::check_structure(s);
}

}  // namespace

std::string FixedParameter::text() const {
  std::string out = structure > 0 ? std::to_string(structure) + "." : "";
  out += key + "=";
  out += longest ? std::string("longest") : detail::number_text(value);
  return out;
}

std::vector<FixedParameter> parse_fixes(const std::string& text) {
  std::vector<FixedParameter> out;
  std::string item;
  for (std::size_t i = 0; i <= text.size(); ++i) {
    if (i == text.size() || text[i] == ',') {
      const std::string t = trimmed(item);
      if (t.empty()) throw InputError(kComponent, "--fix '" + text + "': an empty item");
      out.push_back(parse_one(t));
      item.clear();
    } else {
      item += text[i];
    }
  }
  return out;
}

namespace detail {

bool resolve_holds(const std::vector<Family>& structures, const std::vector<FixedParameter>& fixed,
                   bool skip_unused, std::vector<StructureHolds>* holds, std::string* why) {
  holds->assign(structures.size(), {});
  auto fail = [why](const std::string& message) {
    if (why) *why = message;
    return false;
  };
  for (const FixedParameter& f : fixed) {
    const std::string what = "--fix " + f.text() + ": ";
    // The key "nugget" is the nugget structure's sill.
    const std::string key = f.key == "nugget" ? "sill" : f.key;
    std::vector<std::size_t> targets;
    if (f.structure > 0) {
      if (static_cast<std::size_t>(f.structure) > structures.size())
        return fail(what + "there are only " + std::to_string(structures.size()) +
                    " structures in --structures");
      targets.push_back(static_cast<std::size_t>(f.structure) - 1);
    } else {
      for (std::size_t i = 0; i < structures.size(); ++i) {
        const Family family = structures[i];
        std::vector<std::string> required;
        const auto keys = parameter_keys(family, &required);
        const bool has = f.key == "nugget" ? family == Family::nugget
                         : key == "sill"   ? family != Family::nugget
                                           : std::find(keys.begin(), keys.end(), key) != keys.end();
        if (has) targets.push_back(i);
      }
      if (targets.empty()) {
        if (skip_unused) continue;
        return fail(what + (f.key == "nugget" ? std::string("--structures has no nugget")
                                              : "no structure in --structures has the parameter '" +
                                                    f.key + "'"));
      }
    }
    for (std::size_t i : targets) {
      const Family family = structures[i];
      const std::string label =
          "structure " + std::to_string(i + 1) + " (" + std::string(name_of(family)) + ")";
      if (!f.longest) {
        if (const auto fault = check_value(family, key, f.value))
          return fail(what + label + ": " + fault->key + " " + fault->message);
      } else if (!takes_anisotropy(family)) {
        return fail(what + label + ": azimuth is not a parameter of " +
                    std::string(name_of(family)));
      }
      if ((*holds)[i].count(key)) return fail(what + label + ": " + key + " is held twice");
      FixedParameter applied = f;
      applied.key = key;
      (*holds)[i][key] = applied;
    }
  }
  return true;
}

}  // namespace detail

bool FitOptions::is_valid(std::string* why) const {
  auto fail = [why](const std::string& message) {
    if (why) *why = message;
    return false;
  };
  if (structures.empty()) return fail("--structures: give at least one structure");
  if (structures.size() > kMaxStructures)
    return fail("--structures: at most " + std::to_string(kMaxStructures) + " structures");
  int nuggets = 0;
  for (Family f : structures) nuggets += f == Family::nugget;
  if (nuggets > 1) return fail("--structures: at most one nugget");
  if (!(matern_nu >= 0.05 && matern_nu <= 20))
    return fail("the matern nu must be in [0.05, 20] (got " + detail::number_text(matern_nu) + ")");
  if (!(max_range_factor >= 1 && std::isfinite(max_range_factor)))
    return fail("the range bound factor must be a finite number >= 1");
  if (max_iterations < 1) return fail("the iteration limit must be 1 or more");
  if (max_weight_rounds < 1) return fail("the number of weighting rounds must be 1 or more");
  for (double t : {function_tolerance, parameter_tolerance, gradient_tolerance})
    if (!(t >= 0 && t < 1)) return fail("tolerances must be in [0, 1)");
  std::vector<detail::StructureHolds> holds;
  if (!detail::resolve_holds(structures, fixed, false, &holds, why)) return false;
  bool some_sill_free = false;
  for (std::size_t i = 0; i < structures.size(); ++i) {
    const auto it = holds[i].find("sill");
    some_sill_free = some_sill_free || it == holds[i].end() || it->second.value > 0;
  }
  if (!some_sill_free) return fail("--fix: every sill is held at 0");
  return true;
}

SpatialDependence spatial_dependence(double ratio) {
  if (std::isnan(ratio)) return SpatialDependence::undefined;
  if (ratio < 0.25) return SpatialDependence::strong;
  if (ratio <= 0.75) return SpatialDependence::moderate;
  return SpatialDependence::weak;
}

std::vector<std::vector<Family>> auto_candidates() {
  using F = Family;
  return {{F::nugget, F::spherical},
          {F::nugget, F::exponential},
          {F::nugget, F::gaussian},
          {F::nugget, F::cubic},
          {F::nugget, F::matern},
          {F::nugget, F::power},
          {F::nugget, F::spherical, F::spherical},
          {F::nugget, F::exponential, F::spherical}};
}

}  // namespace sillstone
