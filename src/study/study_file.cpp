// The study file reader (TOML through toml++). Every key is looked up in a
// table of known keys per section, so a misspelt key is an error with its
// line rather than a silently ignored setting.
#include <toml++/toml.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>
#include <limits>
#include <map>
#include <sstream>

#include <nlohmann/json.hpp>

#include "sillstone/error.hpp"
#include "sillstone/names.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/study.hpp"

namespace sillstone {
namespace {

namespace fs = std::filesystem;

class Reader {
 public:
  explicit Reader(std::string file) : file_(std::move(file)) {}

  [[noreturn]] void fail(const toml::node& node, const std::string& key,
                         const std::string& what) const {
    throw InputError("study", file_ + ", line " + std::to_string(node.source().begin.line) +
                                  ", key '" + key + "': " + what);
  }

  std::string string(const toml::node& n, const std::string& key) const {
    if (auto v = n.value<std::string>()) return *v;
    fail(n, key, "expected a string");
  }
  double number(const toml::node& n, const std::string& key) const {
    if (n.is_integer() || n.is_floating_point()) {
      const double v = *n.value<double>();
      if (!std::isfinite(v)) fail(n, key, "expected a finite number");
      return v;
    }
    fail(n, key, "expected a number");
  }
  // A number whose absence means "unlimited", "suggested" or "the default":
  // 0 or a negative number would otherwise pass for "not given".
  double positive(const toml::node& n, const std::string& key) const {
    const double v = number(n, key);
    if (!(v > 0)) fail(n, key, "expected a positive number (leave the key out for its default)");
    return v;
  }
  // A whole number within int's range: a TOML integer, or a float with no
  // fraction (10.0). toml++'s own value<int64_t>() converts any float, and
  // converting one beyond int64's range is undefined behaviour (found by
  // fuzz_study), so the node's type and range are checked here first.
  int integer(const toml::node& n, const std::string& key) const {
    constexpr double lo = std::numeric_limits<int>::min(), hi = std::numeric_limits<int>::max();
    double v = std::nan("");
    if (const auto* i = n.as_integer())
      v = static_cast<double>(i->get());
    else if (const auto* f = n.as_floating_point())
      v = f->get();
    else
      fail(n, key, "expected a whole number");
    if (!(v == std::trunc(v))) fail(n, key, "expected a whole number");
    if (v < lo || v > hi)
      fail(n, key,
           "expected a whole number between " + std::to_string(int(lo)) + " and " +
               std::to_string(int(hi)));
    return static_cast<int>(v);
  }
  bool boolean(const toml::node& n, const std::string& key) const {
    if (auto v = n.value<bool>()) return *v;
    fail(n, key, "expected true or false");
  }
  // A number or an array of numbers.
  std::vector<double> numbers(const toml::node& n, const std::string& key) const {
    std::vector<double> out;
    if (const toml::array* a = n.as_array()) {
      for (const auto& e : *a) out.push_back(number(e, key));
    } else {
      out.push_back(number(n, key));
    }
    return out;
  }
  std::vector<int> integers(const toml::node& n, const std::string& key) const {
    std::vector<int> out;
    if (const toml::array* a = n.as_array()) {
      for (const auto& e : *a) out.push_back(integer(e, key));
    } else {
      out.push_back(integer(n, key));
    }
    return out;
  }
  // A string or an array of strings.
  std::vector<std::string> strings(const toml::node& n, const std::string& key) const {
    std::vector<std::string> out;
    if (const toml::array* a = n.as_array()) {
      for (const auto& e : *a) out.push_back(string(e, key));
    } else {
      out.push_back(string(n, key));
    }
    return out;
  }
  template <class Enum>
  Enum named(const toml::node& n, const std::string& key) const {
    const std::string text = string(n, key);
    try {
      return parse_name<Enum>(text, key);
    } catch (const InputError&) {
      std::string choices;
      for (const auto& c : names_of<Enum>()) choices += (choices.empty() ? "" : ", ") + c;
      fail(n, key, "'" + text + "' is not one of " + choices);
    }
  }

 private:
  std::string file_;
};

using Handler = std::function<void(const toml::node&, const std::string& key)>;

// Reads a study's TOML into a Study: per section, key -> handler (keys are
// the verbs' long options with '_' for '-'); then the alternatives of
// [crossval] also, then the keys every study needs.
class StudyParser {
 public:
  StudyParser(Study& study, const std::string& path) : st(study), r(path) {
    add_samples();
    add_variogram();
    add_model();
    add_crossval();
    add_neighbourhood();
    add_grid();
    add_kriging();
    add_output();
    add_report();
  }

  StudyParser(const StudyParser&) = delete;  // the handlers hold `this`
  StudyParser& operator=(const StudyParser&) = delete;

  void read(const toml::table& doc) {
    read_sections(doc);
    read_alternatives();
    check_required();
  }

 private:
  Study& st;
  const Reader r;
  std::map<std::string, std::map<std::string, Handler>> sections_;
  bool model_given = false;
  const toml::node* also_node = nullptr;

  std::string resolve(const std::string& p) const {
    if (p.empty() || fs::path(p).is_absolute()) return p;
    return (fs::path(st.folder) / p).lexically_normal().string();
  }

  void once(const toml::node& n, const std::string& k) {
    if (model_given) r.fail(n, k, "[model] takes one of spec, fit or auto");
    model_given = true;
  }

  void add_samples() {
    auto& s = sections_["samples"];
    s["path"] = [this](const toml::node& n, const std::string& k) {
      st.samples.path = resolve(r.string(n, k));
    };
    s["layer"] = [this](const toml::node& n, const std::string& k) {
      st.samples.layer = r.string(n, k);
    };
    s["value"] = [this](const toml::node& n, const std::string& k) {
      st.samples.values = r.strings(n, k);
    };
    s["x"] = [this](const toml::node& n, const std::string& k) { st.samples.x = r.string(n, k); };
    s["y"] = [this](const toml::node& n, const std::string& k) { st.samples.y = r.string(n, k); };
    s["z"] = [this](const toml::node& n, const std::string& k) { st.samples.z = r.string(n, k); };
    s["where"] = [this](const toml::node& n, const std::string& k) {
      st.samples.where = r.string(n, k);
    };
    s["crs"] = [this](const toml::node& n, const std::string& k) {
      st.samples.crs = r.string(n, k);
    };
    s["to_crs"] = [this](const toml::node& n, const std::string& k) {
      st.samples.to_crs = r.string(n, k);
    };
    s["below_detection"] = [this](const toml::node& n, const std::string& k) {
      st.samples.below_detection = r.named<BelowDetection>(n, k);
    };
    s["duplicates"] = [this](const toml::node& n, const std::string& k) {
      st.samples.duplicates = r.named<DuplicatePolicy>(n, k);
    };
  }

  void add_variogram() {
    auto& v = sections_["variogram"];
    v["lag"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.lag = r.positive(n, k);
    };
    v["lags"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.lags = r.integer(n, k);
      if (st.variogram.lags < 1)
        r.fail(n, k, "expected at least 1 (leave the key out for the suggested lags)");
    };
    v["max_distance"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.max_distance = r.positive(n, k);
    };
    v["statistic"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.statistic = r.named<VariogramStatistic>(n, k);
    };
    v["azimuths"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.azimuths = r.numbers(n, k);
    };
    v["angle_tolerance"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.angle_tolerance = r.number(n, k);
    };
    v["bandwidth"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.bandwidth = r.number(n, k);
    };
    v["dips"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.dips = r.numbers(n, k);
    };
    v["dip_tolerance"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.dip_tolerance = r.number(n, k);
    };
    v["vertical_bandwidth"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.vertical_bandwidth = r.number(n, k);
    };
    v["estimator"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.estimator = r.named<VariogramEstimator>(n, k);
    };
    v["transform"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.transform = r.named<Transform>(n, k);
    };
    v["log_offset"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.log_offset = r.number(n, k);
    };
    v["surface_cell"] = [this](const toml::node& n, const std::string& k) {
      st.variogram.surface_cell = r.positive(n, k);
    };
  }

  void add_model() {
    auto& m = sections_["model"];
    m["spec"] = [this](const toml::node& n, const std::string& k) {
      once(n, k);
      st.model.kind = ModelChoice::Kind::spec;
      st.model.spec = r.string(n, k);
      // A model.json beside the study resolves like any path.
      if (st.model.spec.size() > 5 && st.model.spec.substr(st.model.spec.size() - 5) == ".json")
        st.model.spec = resolve(st.model.spec);
    };
    m["auto"] = [this](const toml::node& n, const std::string& k) {
      once(n, k);
      if (!r.boolean(n, k)) r.fail(n, k, "auto = false says nothing; give spec or fit instead");
      st.model.kind = ModelChoice::Kind::automatic;
    };
    m["fit"] = [this](const toml::node& n, const std::string& k) {
      once(n, k);
      st.model.kind = ModelChoice::Kind::fit;
      const toml::table* t = n.as_table();
      if (!t)
        r.fail(n, k, "expected a table, e.g. fit = { structures = [\"nugget\", \"spherical\"] }");
      for (const auto& [key, value] : *t) {
        const std::string name = "fit." + std::string(key.str());
        if (key == "structures")
          st.model.structures = r.strings(value, name);
        else if (key == "weights")
          st.model.weights = r.string(value, name);
        else if (key == "fix")
          st.model.fix = r.strings(value, name);
        else
          r.fail(value, name, "unknown key (keys of fit: structures, weights, fix)");
      }
      if (st.model.structures.empty())
        r.fail(n, k, "fit needs structures, e.g. [\"nugget\", \"spherical\"]");
    };
    m["weights"] = [this](const toml::node& n, const std::string& k) {
      st.model.weights = r.string(n, k);
    };
  }

  void add_crossval() {
    auto& c = sections_["crossval"];
    c["folds"] = [this](const toml::node& n, const std::string& k) {
      st.crossval.folds = r.integer(n, k);
    };
    c["skip"] = [this](const toml::node& n, const std::string& k) {
      st.crossval_enabled = !r.boolean(n, k);
    };
    // Alternatives are read after [kriging], whose options they modify.
    c["also"] = [this](const toml::node& n, const std::string& k) {
      if (!n.is_array())
        r.fail(n, k,
               "expected an array of tables, e.g. [{ label = \"ok\", method = \"ordinary\" }]");
      also_node = &n;
    };
  }

  void add_neighbourhood() {
    auto& nb = sections_["neighbourhood"];
    nb["max_points"] = [this](const toml::node& n, const std::string& k) {
      st.neighbourhood.max_points = r.integer(n, k);
    };
    nb["min_points"] = [this](const toml::node& n, const std::string& k) {
      st.neighbourhood.min_points = r.integer(n, k);
    };
    nb["radius"] = [this](const toml::node& n, const std::string& k) {
      st.neighbourhood.radius = r.positive(n, k);
    };
    nb["sectors"] = [this](const toml::node& n, const std::string& k) {
      st.neighbourhood.sectors = r.integer(n, k);
    };
    nb["max_per_sector"] = [this](const toml::node& n, const std::string& k) {
      st.neighbourhood.max_per_sector = r.integer(n, k);
    };
    nb["global"] = [this](const toml::node& n, const std::string& k) {
      st.neighbourhood.global = r.boolean(n, k);
    };
  }

  void add_grid() {
    auto& g = sections_["grid"];
    g["cell"] = [this](const toml::node& n, const std::string& k) {
      st.grid.cell = r.numbers(n, k);
    };
    g["extent"] = [this](const toml::node& n, const std::string& k) {
      st.grid.extent = r.numbers(n, k);
    };
    g["like"] = [this](const toml::node& n, const std::string& k) {
      st.grid.like = resolve(r.string(n, k));
    };
    g["mask"] = [this](const toml::node& n, const std::string& k) {
      st.mask = resolve(r.string(n, k));
    };
    g["blocks"] = [this](const toml::node& n, const std::string& k) {
      st.blocks = resolve(r.string(n, k));
    };
    g["large_grid"] = [this](const toml::node& n, const std::string& k) {
      st.grid.large_grid = r.boolean(n, k);
    };
  }

  void add_kriging() {
    auto& kr = sections_["kriging"];
    kr["method"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.method = r.named<KrigingMethod>(n, k);
    };
    kr["mean"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.mean = r.number(n, k);
    };
    kr["drift"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.drift = r.named<Drift>(n, k);
    };
    kr["external_drift"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.external_drift = resolve(r.string(n, k));
    };
    kr["block"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.block = r.numbers(n, k);
    };
    kr["discretise"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.discretise = r.integers(n, k);
    };
    kr["transform"] = [this](const toml::node& n, const std::string& k) {
      st.kriging_transform = r.named<Transform>(n, k);
    };
    kr["threshold"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.threshold = r.number(n, k);
    };
    kr["threads"] = [this](const toml::node& n, const std::string& k) {
      st.kriging.threads = r.integer(n, k);
    };
  }

  void add_output() {
    auto& o = sections_["output"];
    o["dir"] = [this](const toml::node& n, const std::string& k) {
      st.output_dir = resolve(r.string(n, k));
    };
    o["format"] = [this](const toml::node& n, const std::string& k) { st.format = r.string(n, k); };
    o["overwrite"] = [this](const toml::node& n, const std::string& k) {
      st.overwrite = r.boolean(n, k);
    };
  }

  void add_report() {
    auto& rp = sections_["report"];
    rp["title"] = [this](const toml::node& n, const std::string& k) {
      st.report.title = r.string(n, k);
    };
    rp["units"] = [this](const toml::node& n, const std::string& k) {
      st.report.units = r.string(n, k);
    };
    rp["density"] = [this](const toml::node& n, const std::string& k) {
      st.report.density = r.positive(n, k);
    };
    rp["cutoffs"] = [this](const toml::node& n, const std::string& k) {
      st.report.cutoffs = r.numbers(n, k);
    };
  }

  void read_sections(const toml::table& doc) {
    for (const auto& [section, node] : doc) {
      const std::string name(section.str());
      const auto known = sections_.find(name);
      if (known == sections_.end()) {
        std::string list;
        for (const auto& [k, unused] : sections_)
          list += (list.empty() ? "" : ", ") + ("[" + k + "]");
        r.fail(node, name, "unknown section (sections: " + list + ")");
      }
      const toml::table* table = node.as_table();
      if (!table) r.fail(node, name, "expected a section [" + name + "]");
      for (const auto& [key, value] : *table) {
        const std::string k(key.str());
        const auto h = known->second.find(k);
        if (h == known->second.end()) {
          std::string list;
          for (const auto& [kk, unused] : known->second) list += (list.empty() ? "" : ", ") + kk;
          r.fail(value, name + "." + k, "unknown key (keys of [" + name + "]: " + list + ")");
        }
        h->second(value, name + "." + k);
      }
    }
  }

  void read_alternatives() {
    if (also_node) {
      for (const auto& item : *also_node->as_array()) {
        const toml::table* t = item.as_table();
        if (!t) r.fail(item, "crossval.also", "expected a table { label = ..., method = ... }");
        // An alternative starts from the verbs' defaults, plus only what it
        // names (docs/run.md): nothing of the study's [kriging] is inherited
        // but the thread count.
        KrigingAlternative alt;
        alt.options.threads = st.kriging.threads;
        for (const auto& [key, value] : *t) {
          const std::string name = "crossval.also." + std::string(key.str());
          if (key == "label")
            alt.label = r.string(value, name);
          else if (key == "method")
            alt.options.method = r.named<KrigingMethod>(value, name);
          else if (key == "drift")
            alt.options.drift = r.named<Drift>(value, name);
          else if (key == "external_drift")
            alt.options.external_drift = resolve(r.string(value, name));
          else if (key == "transform")
            alt.transform = r.named<Transform>(value, name);
          else
            r.fail(value, name,
                   "unknown key (keys of an alternative: label, method, drift, external_drift, "
                   "transform)");
        }
        if (alt.label.empty()) r.fail(item, "crossval.also", "each alternative needs a label");
        st.crossval_also.push_back(alt);
      }
    }
  }

  void check_required() const {
    const std::string& path = st.path;
    if (st.samples.path.empty())
      throw InputError("study", path + ": [samples] needs path = \"...\" (the samples file)");
    if (st.samples.values.empty())
      throw InputError("study", path + ": [samples] needs value = \"COLUMN\"");
    std::string why;
    if (!st.samples.is_valid(&why)) throw InputError("study", path + ": [samples]: " + why);
    if (st.grid.cell.empty() && st.grid.like.empty())
      throw InputError("study", path + ": [grid] needs cell = ... (or like = \"template.tif\")");
  }
};

}  // namespace

Study read_study(const std::string& path) {
  std::error_code ec;
  if (!fs::exists(path, ec)) throw InputError("study", path + ": no such file");
  if (fs::is_directory(path, ec))
    throw InputError("study", path + ": is a folder, not a study file");
  refuse_special_input(path, "study", "STUDY");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError("study", path + ": cannot be opened for reading");
  std::ostringstream text;
  text << in.rdbuf();
  return parse_study(text.str(), path);
}

Study parse_study(const std::string& text, const std::string& path) {
  Study st;
  st.path = path;
  st.folder = fs::path(path).has_parent_path() ? fs::path(path).parent_path().string() : ".";
  toml::table doc;
  try {
    doc = toml::parse(text, path);
  } catch (const toml::parse_error& e) {
    throw InputError("study",
                     InputLocation{path, "line " + std::to_string(e.source().begin.line), ""},
                     "not valid TOML: " + std::string(e.description()));
  }
  StudyParser(st, path).read(doc);
  return st;
}

std::string study_settings_json(const Study& st) {
  using nlohmann::json;
  auto num = [](double v) { return std::isfinite(v) ? json(v) : json(); };
  const SampleOptions& so = st.samples;
  const VariogramOptions& vo = st.variogram;
  const KrigingOptions& ko = st.kriging;
  const NeighbourhoodOptions& no = st.neighbourhood;
  json j;
  j["samples"] = {{"path", so.path},
                  {"layer", so.layer},
                  {"value", so.values},
                  {"x", so.x},
                  {"y", so.y},
                  {"z", so.z},
                  {"where", so.where},
                  {"crs", so.crs},
                  {"to_crs", so.to_crs},
                  {"below_detection", name_of(so.below_detection)},
                  {"duplicates", name_of(so.duplicates)}};
  j["variogram"] = {{"lag", vo.lag},
                    {"lags", vo.lags},
                    {"max_distance", vo.max_distance},
                    {"statistic", name_of(vo.statistic)},
                    {"azimuths", vo.azimuths},
                    {"angle_tolerance", vo.angle_tolerance},
                    {"bandwidth", num(vo.bandwidth)},
                    {"dips", vo.dips},
                    {"dip_tolerance", vo.dip_tolerance},
                    {"vertical_bandwidth", num(vo.vertical_bandwidth)},
                    {"estimator", name_of(vo.estimator)},
                    {"transform", name_of(vo.transform)},
                    {"log_offset", vo.log_offset},
                    {"surface_cell", vo.surface_cell}};
  const char* kinds[] = {"spec", "fit", "auto"};
  j["model"] = {{"kind", kinds[static_cast<int>(st.model.kind)]},
                {"spec", st.model.spec},
                {"structures", st.model.structures},
                {"weights", st.model.weights},
                {"fix", st.model.fix}};
  json also = json::array();
  for (const auto& a : st.crossval_also)
    also.push_back({{"label", a.label},
                    {"method", name_of(a.options.method)},
                    {"drift", name_of(a.options.drift)},
                    {"external_drift", a.options.external_drift},
                    {"transform", a.transform ? json(name_of(*a.transform)) : json()}});
  j["crossval"] = {{"folds", st.crossval.folds}, {"skip", !st.crossval_enabled}, {"also", also}};
  j["neighbourhood"] = {
      {"max_points", no.max_points}, {"min_points", no.min_points},         {"radius", no.radius},
      {"sectors", no.sectors},       {"max_per_sector", no.max_per_sector}, {"global", no.global}};
  j["grid"] = {{"cell", st.grid.cell}, {"extent", st.grid.extent},
               {"like", st.grid.like}, {"mask", st.mask},
               {"blocks", st.blocks},  {"large_grid", st.grid.large_grid}};
  j["kriging"] = {
      {"method", name_of(ko.method)},
      {"mean", num(ko.mean)},
      {"drift", name_of(ko.drift)},
      {"external_drift", ko.external_drift},
      {"block", ko.block},
      {"discretise", ko.discretise},
      {"transform", st.kriging_transform ? json(name_of(*st.kriging_transform)) : json()},
      {"threshold", num(ko.threshold)},
      {"threads", ko.threads}};
  j["output"] = {{"dir", st.output_dir}, {"format", st.format}, {"overwrite", st.overwrite}};
  j["report"] = {{"title", st.report.title},
                 {"units", st.report.units},
                 {"density", st.report.density},
                 {"cutoffs", st.report.cutoffs}};
  return j.dump();
}

}  // namespace sillstone
