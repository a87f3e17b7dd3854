// model.json: reading, writing, and the `--model` option (layout in docs/models.md).
// Unknown keys are refused, like those of study files, so that a misspelt
// "ratio" never silently becomes an isotropic model. The "fit" object belongs
// to the fit stage and is kept as it is.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <filesystem>  // std::filesystem::is_regular_file for --model
#include <fstream>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include <nlohmann/json.hpp>  // ordered_json: keys are written in the documented order

#include "models/model_detail.hpp"
#include "sillstone/error.hpp"
#include "sillstone/names.hpp"
#include "sillstone/samples.hpp"

namespace sillstone {
namespace {

using Json = nlohmann::ordered_json;

std::string joined(const std::vector<std::string>& items) {
  std::string out;
  for (const auto& item : items) out += (out.empty() ? "" : ", ") + item;
  return out;
}

bool contains(const std::vector<std::string>& items, const std::string& item) {
  return std::find(items.begin(), items.end(), item) != items.end();
}

class JsonModelReader {
 public:
  explicit JsonModelReader(const std::string& source) : source_(source) {}

  ModelFile read(const std::string& text) const {
    Json doc;
    try {
      doc = Json::parse(text);
    } catch (const Json::exception& e) {  // bad syntax, or a number beyond double range
      const std::string what =
          e.what();  // "[json.exception.parse_error.101] parse error at line ..."
      fail("", "not valid JSON: " + what.substr(what.find(']') + 2));
    }
    if (!doc.is_object()) fail("", "expected a JSON object with a \"structures\" array");
    refuse_unknown(doc, {"structures", "transform", "fit"}, "");
    if (!doc.contains("structures")) fail("", "missing \"structures\"");
    const Json& list = doc["structures"];
    if (!list.is_array() || list.empty())
      fail("structures", "expected a non-empty array of structures");

    std::vector<Structure> structures;
    for (std::size_t i = 0; i < list.size(); ++i)
      structures.push_back(structure(list[i], path_of(i)));
    std::size_t index = 0;
    if (const auto fault = detail::check_model(structures, &index)) {
      if (index == structures.size()) fail("structures", fault->message);
      const bool anisotropy = contains(anisotropy_keys(), fault->key);
      fail(path_of(index) +
               (fault->key.empty() ? ""
                : anisotropy       ? ".anisotropy."
                                   : ".") +
               fault->key,
           fault->message);
    }

    ModelFile out;
    out.model = CovarianceModel(std::move(structures));
    if (doc.contains("transform")) {
      out.transform = transform(doc["transform"], &out.notes);
      out.transform_recorded = true;
    } else {
      out.notes.push_back(source_ +
                          " does not record a transform (an older model file): it is read as "
                          "describing untransformed values");
    }
    if (doc.contains("fit")) {
      if (!doc["fit"].is_object()) fail("fit", "expected an object");
      out.fit = doc["fit"].dump();
    }
    return out;
  }

 private:
  static std::string path_of(std::size_t i) { return "structures[" + std::to_string(i) + "]"; }

  static std::vector<std::string> anisotropy_keys() {
    return {std::begin(detail::kAnisotropyKeys), std::end(detail::kAnisotropyKeys)};
  }

  Structure structure(const Json& object, const std::string& path) const {
    if (!object.is_object()) fail(path, "expected an object with \"family\" and \"sill\"");
    if (!object.contains("family")) fail(path, "missing \"family\"");
    Structure s;
    s.family = name_value<Family>(object["family"], path + ".family");
    const std::string family(name_of(s.family));

    std::vector<std::string> required;
    const auto parameters = detail::parameter_keys(s.family, &required);
    std::vector<std::string> keys{"family", "sill"};
    for (const auto& key : parameters)
      if (!contains(anisotropy_keys(), key)) keys.push_back(key);
    if (detail::takes_anisotropy(s.family)) keys.push_back("anisotropy");
    refuse_unknown(object, keys, path, " of " + family);

    required.insert(required.begin(), "sill");
    for (const auto& key : required)
      if (!object.contains(key)) fail(path, family + " needs \"" + key + "\"");
    s.sill = number(object["sill"], path + ".sill");
    for (const auto& key : parameters)
      if (object.contains(key))
        detail::set_parameter(&s, key, number(object[key], path + "." + key));

    if (object.contains("anisotropy")) {
      const Json& a = object["anisotropy"];
      const std::string where = path + ".anisotropy";
      if (!a.is_object()) fail(where, "expected an object");
      refuse_unknown(a, anisotropy_keys(), where);
      for (const auto& key : anisotropy_keys())
        if (a.contains(key)) detail::set_parameter(&s, key, number(a[key], where + "." + key));
    }
    return s;
  }

  // {"kind": "none"}, {"kind": "log", "offset": C}, {"kind": "normal-score",
  // "table": [[value, score], ...], "tails": {...}}; the text form of older
  // files ("none", "log", "normal-score") is read with a note.
  ValueTransform transform(const Json& value, std::vector<std::string>* notes) const {
    ValueTransform t;
    if (value.is_string()) {
      t.kind = name_value<Transform>(value, "transform");
      if (t.kind != Transform::none)
        notes->push_back(source_ + ": \"transform\": \"" + value.get<std::string>() +
                         "\" (an older model file) is read as " + t.describe() +
                         ", with no offset");
      if (t.kind == Transform::normal_score)
        fail("transform",
             "a normal-score model needs its table: {\"kind\": \"normal-score\", "
             "\"table\": [[value, score], ...]} (refit the variogram)");
      return t;
    }
    if (!value.is_object()) fail("transform", "expected an object such as {\"kind\": \"log\"}");
    if (!value.contains("kind")) fail("transform", "missing \"kind\"");
    t.kind = name_value<Transform>(value["kind"], "transform.kind");
    switch (t.kind) {
      case Transform::none:
        refuse_unknown(value, {"kind"}, "transform", " of none");
        break;
      case Transform::log:
        refuse_unknown(value, {"kind", "offset"}, "transform", " of log");
        if (value.contains("offset")) t.log_offset = number(value["offset"], "transform.offset");
        if (!std::isfinite(t.log_offset)) fail("transform.offset", "must be finite");
        break;
      case Transform::normal_score:
        refuse_unknown(value, {"kind", "table", "tails"}, "transform", " of normal-score");
        t.table = score_table(value);
        break;
    }
    return t;
  }

  NormalScoreTable score_table(const Json& value) const {
    NormalScoreTable table;
    if (!value.contains("table") || !value["table"].is_array() || value["table"].empty())
      fail("transform.table", "expected a non-empty array of [value, score] pairs");
    const Json& rows = value["table"];
    for (std::size_t i = 0; i < rows.size(); ++i) {
      const std::string where = "transform.table[" + std::to_string(i) + "]";
      if (!rows[i].is_array() || rows[i].size() != 2) fail(where, "expected [value, score]");
      const double v = number(rows[i][0], where), s = number(rows[i][1], where);
      if (i > 0 && !(v > table.values.back() && s > table.scores.back()))
        fail(where, "values and scores must both increase");
      table.values.push_back(v);
      table.scores.push_back(s);
    }
    return table;
  }

  double number(const Json& value, const std::string& path) const {
    if (!value.is_number())
      fail(path, std::string("expected a number, found ") + value.type_name());
    return value.get<double>();
  }

  template <class Enum>
  Enum name_value(const Json& value, const std::string& path) const {
    const auto names = names_of<Enum>();
    if (!value.is_string() || !contains(names, value.get<std::string>()))
      fail(path, "expected one of " + joined(names) + ", found " + value.dump());
    return parse_name<Enum>(value.get<std::string>(), path);
  }

  void refuse_unknown(const Json& object, const std::vector<std::string>& keys,
                      const std::string& path, const std::string& owner = "") const {
    for (const auto& item : object.items())
      if (!contains(keys, item.key()))
        fail((path.empty() ? "" : path + ".") + item.key(),
             "unknown key (keys" + owner + ": " + joined(keys) + ")");
  }

  [[noreturn]] void fail(const std::string& path, const std::string& message) const {
    throw InputError("model", source_ + ": " + (path.empty() ? "" : path + ": ") + message);
  }

  const std::string& source_;
};

// Whole numbers are written without a fraction ("range": 450, as in the docs).
Json number(double x) {
  if (x == std::trunc(x) && std::fabs(x) < 1e15) return static_cast<std::int64_t>(x);
  return x;
}

}  // namespace

ModelFile model_from_json(const std::string& text, const std::string& source_name) {
  try {
    return JsonModelReader(source_name).read(text);
  } catch (const Json::exception& e) {  // a JSON fault the reader's own checks did not name
    const std::string what = e.what();
    const auto at = what.find("] ");
    throw InputError("model",
                     source_name + ": " + (at == std::string::npos ? what : what.substr(at + 2)));
  }
}

std::string model_to_json(const ModelFile& file) {
  Json list = Json::array();
  for (const Structure& s : file.model.structures()) {
    Json o;
    o["family"] = std::string(name_of(s.family));
    o["sill"] = number(s.sill);
    if (detail::takes_range(s.family)) o["range"] = number(s.range);
    if (s.family == Family::matern) o["nu"] = number(s.nu);
    if (s.family == Family::power) o["exponent"] = number(s.exponent);
    const Anisotropy& a = s.anisotropy;
    if (!(a == Anisotropy{})) {
      Json an{{"azimuth", number(a.azimuth)}, {"ratio", number(a.ratio)}};
      if (a.dip != 0 || a.plunge != 0 || a.ratio2 != 1) {
        an["dip"] = number(a.dip);
        an["plunge"] = number(a.plunge);
        an["ratio2"] = number(a.ratio2);
      }
      o["anisotropy"] = an;
    }
    list.push_back(o);
  }
  Json doc;
  doc["structures"] = list;
  Json t{{"kind", std::string(name_of(file.transform.kind))}};
  if (file.transform.kind == Transform::log) t["offset"] = number(file.transform.log_offset);
  if (file.transform.kind == Transform::normal_score) {
    Json rows = Json::array();
    const NormalScoreTable& table = file.transform.table;
    for (std::size_t i = 0; i < table.values.size(); ++i)
      rows.push_back(Json::array({table.values[i], table.scores[i]}));
    t["table"] = rows;
    t["tails"] = {{"below", "first value"}, {"above", "last value"}};
  }
  doc["transform"] = t;
  if (!file.fit.empty()) doc["fit"] = Json::parse(file.fit);
  return doc.dump(2) + "\n";
}

ModelFile load_model(const std::string& model_option) {
  const std::string suffix = ".json";
  const bool json_name =
      model_option.size() >= suffix.size() &&
      model_option.compare(model_option.size() - suffix.size(), suffix.size(), suffix) == 0;
  refuse_special_input(model_option, "model", "--model");  // a FIFO would block the read
  std::error_code ignored;  // an unreadable path is then taken as a SPEC, whose error says more
  if (!json_name && !std::filesystem::is_regular_file(model_option, ignored)) {
    ModelFile out;
    out.model = parse_model_spec(model_option);
    return out;
  }
  std::ifstream in(model_option, std::ios::binary);
  if (!in) throw InputError("model", model_option + ": cannot open the model file");
  std::ostringstream text;
  text << in.rdbuf();
  return model_from_json(text.str(), model_option);
}

}  // namespace sillstone
