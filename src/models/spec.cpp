// The SPEC syntax of models (grammar in docs/models.md):
//   spec      = structure { "+" structure }
//   structure = number family [ "(" [ parameter { "," parameter } ] ")" ]
//   parameter = key "=" number
// Blanks are allowed between all tokens. Every error quotes the spec and
// names the 1-based column where the fault starts.
#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "models/model_detail.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"

namespace sillstone {
namespace {

std::string joined(const std::vector<std::string>& items) {
  std::string out;
  for (const auto& item : items) out += (out.empty() ? "" : ", ") + item;
  return out;
}

// One parsed structure and where its parts start in the spec (0-based).
struct Located {
  Structure structure;
  std::size_t sill_at = 0, family_at = 0;
  std::map<std::string, std::size_t> value_at;  // parameter key -> start of its value
};

class SpecParser {
 public:
  explicit SpecParser(const std::string& spec) : spec_(spec) {}

  CovarianceModel parse() {
    std::vector<Located> parsed;
    skip_blanks();
    if (at_end()) fail(pos_, "empty model: write e.g. 1 spherical(range=100)");
    while (true) {
      parsed.push_back(structure());
      skip_blanks();
      if (at_end()) break;
      if (spec_[pos_] != '+')
        fail(pos_, "expected '+' before the next structure or the end of the model, found '" +
                       token() + "'");
      ++pos_;
    }
    std::vector<Structure> structures;
    for (const auto& p : parsed) structures.push_back(p.structure);
    std::size_t index = 0;
    if (const auto fault = detail::check_model(structures, &index)) {
      if (index == parsed.size()) fail(0, fault->message);
      const Located& p = parsed[index];
      if (fault->key.empty()) fail(p.family_at, fault->message);
      const auto value = p.value_at.find(fault->key);
      const auto at = fault->key == "sill"        ? p.sill_at
                      : value != p.value_at.end() ? value->second
                                                  : p.family_at;
      fail(at, fault->key + " " + fault->message);
    }
    return CovarianceModel(std::move(structures));
  }

 private:
  Located structure() {
    Located out;
    skip_blanks();
    out.sill_at = pos_;
    if (starts_word()) {
      const std::string name = word();
      fail(out.sill_at, "missing the sill before '" + name + "' (write e.g. 1 " + name + ")");
    }
    out.structure.sill = number("the sill of a structure");
    skip_blanks();
    out.family_at = pos_;
    const std::string name = word();
    if (name.empty()) fail(pos_, "expected a family name after the sill, found '" + token() + "'");
    const auto families = names_of<Family>();
    if (std::find(families.begin(), families.end(), name) == families.end())
      fail(out.family_at, "unknown family '" + name + "' (families: " + joined(families) + ")");
    out.structure.family = parse_name<Family>(name, "model");

    std::vector<std::string> required;
    const auto keys = detail::parameter_keys(out.structure.family, &required);
    skip_blanks();
    if (!at_end() && spec_[pos_] == '(') parameters(name, keys, &out);
    for (const auto& key : required)
      if (!out.value_at.count(key))
        fail(out.family_at, name + " needs " + key + "=... (parameters: " + joined(keys) + ")");
    return out;
  }

  void parameters(const std::string& family, const std::vector<std::string>& keys, Located* out) {
    ++pos_;  // '('
    skip_blanks();
    if (!at_end() && spec_[pos_] == ')') {
      ++pos_;
      return;
    }
    while (true) {
      skip_blanks();
      const std::size_t key_at = pos_;
      const std::string key = word();
      if (key.empty()) fail(pos_, "expected a parameter name, found '" + token() + "'");
      if (std::find(keys.begin(), keys.end(), key) == keys.end())
        fail(key_at, "unknown parameter '" + key + "' for " + family + " (" +
                         (keys.empty() ? family + " takes none" : "parameters: " + joined(keys)) +
                         ")");
      if (out->value_at.count(key)) fail(key_at, "duplicate parameter '" + key + "'");
      skip_blanks();
      if (at_end() || spec_[pos_] != '=') fail(pos_, "expected '=' after '" + key + "'");
      ++pos_;
      skip_blanks();
      out->value_at[key] = pos_;
      detail::set_parameter(&out->structure, key, number("a number for " + key));
      skip_blanks();
      if (at_end()) fail(pos_, "missing ')' to close the parameters of " + family);
      if (spec_[pos_] == ')') break;
      if (spec_[pos_] != ',') fail(pos_, "expected ',' or ')', found '" + token() + "'");
      ++pos_;
    }
    ++pos_;  // ')'
  }

  // A finite decimal number: optional '-', digits with an optional fraction
  // and exponent. No '+', "inf", "nan" or hexadecimal.
  double number(const std::string& what) {
    const std::size_t start = pos_;
    const auto digit_or_point = [this](std::size_t i) {
      return i < spec_.size() &&
             (std::isdigit(static_cast<unsigned char>(spec_[i])) || spec_[i] == '.');
    };
    if (!(digit_or_point(pos_) || (spec_[pos_] == '-' && digit_or_point(pos_ + 1))))
      fail(pos_, "expected " + what + ", found '" + token() + "'");
    double value = 0;
    const char* first = spec_.data() + pos_;
    const auto [end, ec] = std::from_chars(first, spec_.data() + spec_.size(), value);
    if (ec != std::errc() || !std::isfinite(value))
      fail(start, "'" + token() + "' is not a usable number");
    pos_ += static_cast<std::size_t>(end - first);
    return value;
  }

  bool starts_word() const {
    return !at_end() &&
           (std::isalpha(static_cast<unsigned char>(spec_[pos_])) || spec_[pos_] == '_');
  }

  // [A-Za-z_][A-Za-z0-9_]*, or "" when none starts here.
  std::string word() {
    const std::size_t start = pos_;
    if (!starts_word()) return "";
    while (!at_end() &&
           (std::isalnum(static_cast<unsigned char>(spec_[pos_])) || spec_[pos_] == '_'))
      ++pos_;
    return spec_.substr(start, pos_ - start);
  }

  // The text at the cursor, for messages: up to the next blank, at most 16 characters.
  std::string token() const {
    if (at_end()) return "the end";
    std::size_t end = pos_;
    while (end < spec_.size() && end - pos_ < 16 &&
           !std::isspace(static_cast<unsigned char>(spec_[end])))
      ++end;
    return spec_.substr(pos_, end - pos_);
  }

  void skip_blanks() {
    while (!at_end() && std::isspace(static_cast<unsigned char>(spec_[pos_]))) ++pos_;
  }
  bool at_end() const { return pos_ >= spec_.size(); }

  [[noreturn]] void fail(std::size_t at, const std::string& message) const {
    throw InputError("model",
                     "\"" + spec_ + "\" column " + std::to_string(at + 1) + ": " + message);
  }

  const std::string& spec_;
  std::size_t pos_ = 0;
};

}  // namespace

CovarianceModel parse_model_spec(const std::string& spec) { return SpecParser(spec).parse(); }

namespace {

// The SPEC text of `model` with each number written by `number`.
template <class Number>
std::string spec_text(const CovarianceModel& model, const Number& number) {
  std::string out;
  for (const Structure& s : model.structures()) {
    if (!out.empty()) out += " + ";
    out += number(s.sill) + " " + std::string(name_of(s.family));
    std::vector<std::string> parameters;
    const auto add = [&parameters, &number](const char* key, double value) {
      parameters.push_back(std::string(key) + "=" + number(value));
    };
    if (detail::takes_range(s.family)) add("range", s.range);
    if (s.family == Family::matern) add("nu", s.nu);
    if (s.family == Family::power) add("exponent", s.exponent);
    const Anisotropy& a = s.anisotropy;
    const Anisotropy isotropic;
    if (a.azimuth != isotropic.azimuth) add("azimuth", a.azimuth);
    if (a.ratio != isotropic.ratio) add("ratio", a.ratio);
    if (a.dip != isotropic.dip) add("dip", a.dip);
    if (a.plunge != isotropic.plunge) add("plunge", a.plunge);
    if (a.ratio2 != isotropic.ratio2) add("ratio2", a.ratio2);
    if (!parameters.empty()) out += "(" + joined(parameters) + ")";
  }
  return out;
}

}  // namespace

std::string to_spec(const CovarianceModel& model) {
  return spec_text(model, [](double x) { return detail::number_text(x); });
}

std::string to_spec_for_people(const CovarianceModel& model, int significant) {
  return spec_text(model, [significant](double x) { return format_for_people(x, significant); });
}

}  // namespace sillstone
