// Internals of the covariance models shared by the evaluator, the SPEC parser
// and the JSON reader: what each family takes, the validity rules (with the
// parameter at fault, so that each reader can point at it), and number text.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "sillstone/model.hpp"

namespace sillstone::detail {

/// spherical, exponential, gaussian, cubic and matern take a practical range.
bool takes_range(Family family);
/// "nu" for matern, "exponent" for power, nullptr for the other families.
const char* shape_key(Family family);
/// Every family but nugget takes anisotropy parameters.
inline bool takes_anisotropy(Family family) { return family != Family::nugget; }

/// The anisotropy keys of the SPEC and of model.json, in canonical order.
inline constexpr const char* kAnisotropyKeys[] = {"azimuth", "ratio", "dip", "plunge", "ratio2"};

/// The parameters `family` accepts, in canonical order (range, nu/exponent,
/// anisotropy keys); `required` gets those without a default.
std::vector<std::string> parameter_keys(Family family, std::vector<std::string>* required);

/// Sets the parameter `key` (one of parameter_keys) of `s`.
void set_parameter(Structure* s, const std::string& key, double value);

/// A broken rule: the parameter at fault ("sill", "range", "nu", "exponent" or
/// an anisotropy key; empty for the structure or the model as a whole) and what
/// is wrong, in words that follow the parameter's name ("must be > 0 (got -3)").
struct Fault {
  std::string key;
  std::string message;
};

/// The first rule `s` breaks, if any.
std::optional<Fault> check_structure(const Structure& s);

/// The first rule `structures` breaks and the index of the structure at fault
/// (structures.size() when the fault is the model's as a whole).
std::optional<Fault> check_model(const std::vector<Structure>& structures, std::size_t* index);

/// The shortest text that reads back as exactly `x` ("450", "0.2", "1e-05";
/// format_for_file), for SPEC strings and messages that quote a value; a
/// value that is not finite is spelled as format_for_people does.
std::string number_text(double x);

/// Builds the evaluation form of a valid structure.
CompiledStructure compile(const Structure& s);

/// rho_nu(t) = 2^(1-nu) / Gamma(nu) t^nu K_nu(t), the Matern correlation at
/// t = h / theta, given factor = 2^(1-nu) / Gamma(nu).
double matern_correlation(double nu, double factor, double t);

/// 1 - g(r) and g(r) of one structure at reduced distance r (practical-range
/// units; power: distance units). The correlation is not defined for power.
double unit_correlation(const CompiledStructure& s, double r);
double unit_variogram(const CompiledStructure& s, double r);

}  // namespace sillstone::detail
