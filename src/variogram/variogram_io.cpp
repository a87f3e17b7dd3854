// Variogram tables: CSV and JSON out and back in, and the readable screen.
// The CSV layout is the interface contract; the JSON keys are documented in
// docs/variogram.md.
#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <ostream>

#include <nlohmann/json.hpp>

#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/variogram.hpp"
#include "sillstone/version.hpp"

namespace sillstone {
namespace {

using json = nlohmann::ordered_json;  // keys in the documented order
constexpr const char* kComponent = "variogram";
const char* const kColumns[] = {"azimuth", "dip", "lag_from", "lag_to", "mean_distance", "pairs"};

std::string cell(double x) { return format_for_file(x); }
std::string cell(const std::optional<double>& x) { return x ? cell(*x) : ""; }

json number(double x) { return std::isfinite(x) ? json(x) : json(); }
json number(const std::optional<double>& x) { return x ? json(*x) : json(); }

std::string extension_of(const std::string& path) {
  std::string ext = std::filesystem::path(path).extension().string();
  for (char& c : ext) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return ext;
}

VariogramStatistic statistic_of_column(const std::string& name, const InputLocation& where) {
  for (auto s : {VariogramStatistic::semivariance, VariogramStatistic::covariance,
                 VariogramStatistic::correlogram})
    if (value_column(s) == name) return s;
  throw InputError(kComponent, where,
                   "expected semivariance, covariance or correlation, found '" + name + "'");
}

// Fills the options that a table implies: statistic, directions, lag classes.
void settings_from_rows(EmpiricalVariogram* v) {
  VariogramOptions& o = v->options;
  o.azimuths.clear();
  o.dips.clear();
  auto add_unique = [](std::vector<double>& list, const std::optional<double>& x) {
    if (x && std::find(list.begin(), list.end(), *x) == list.end()) list.push_back(*x);
  };
  for (const auto& r : v->rows) {
    add_unique(o.azimuths, r.azimuth);
    add_unique(o.dips, r.dip);
    if (r.dip) v->dimension = 3;
  }
  if (v->rows.empty()) return;
  const VariogramRow& first = v->rows.front();
  std::size_t n = 0;
  while (n < v->rows.size() && v->rows[n].azimuth == first.azimuth && v->rows[n].dip == first.dip)
    ++n;
  o.lags = static_cast<int>(n);
  o.max_distance = v->rows[n - 1].lag_to;
  o.lag = o.max_distance / static_cast<double>(n);
}

// --- Reading CSV -------------------------------------------------------------

std::vector<std::string> split(const std::string& line) {
  std::vector<std::string> out(1);
  for (char c : line) {
    if (c == ',')
      out.emplace_back();
    else
      out.back() += c;
  }
  for (auto& s : out) {  // trim blanks
    const auto a = s.find_first_not_of(" \t");
    const auto b = s.find_last_not_of(" \t");
    s = a == std::string::npos ? "" : s.substr(a, b - a + 1);
  }
  return out;
}

double parse_number(const std::string& text, const InputLocation& where, bool allow_empty) {
  if (text.empty()) {
    if (allow_empty) return std::nan("");
    throw InputError(kComponent, where, "a number is required here");
  }
  double x = 0;
  const auto result = std::from_chars(text.data(), text.data() + text.size(), x);
  if (result.ec != std::errc() || result.ptr != text.data() + text.size() || !std::isfinite(x))
    throw InputError(kComponent, where, "cannot read '" + text + "' as a number");
  return x;
}

void check_row(const VariogramRow& r, const InputLocation& where) {
  if (!(r.lag_from >= 0 && r.lag_to > r.lag_from))
    throw InputError(kComponent, where, "lag_from must be >= 0 and below lag_to");
}

// The two trailing columns that record the transform (absent in tables of
// earlier versions: then `transform_recorded` is false and `fit` asks).
constexpr const char* kTransformColumns[] = {"transform", "log_offset"};

void read_csv_header(const std::vector<std::string>& f, const InputLocation& where,
                     EmpiricalVariogram* v) {
  for (std::size_t k = 0; k < 6; ++k)
    if (k >= f.size() || f[k] != kColumns[k])
      throw InputError(kComponent, where,
                       "the header must be azimuth,dip,lag_from,lag_to,mean_distance,pairs,"
                       "<semivariance|covariance|correlation>[,transform,log_offset]");
  if (f.size() != 7 && f.size() != 9)
    throw InputError(kComponent, where,
                     "the header must have 7 or 9 columns, it has " + std::to_string(f.size()));
  v->options.statistic = statistic_of_column(f[6], {where.file, where.row, "column 7"});
  v->transform_recorded = f.size() == 9;
  if (v->transform_recorded && (f[7] != kTransformColumns[0] || f[8] != kTransformColumns[1]))
    throw InputError(kComponent, where, "columns 8 and 9 must be transform,log_offset");
}

// Columns 8 and 9 of a data row: the same transform on every row.
void read_csv_transform(const std::vector<std::string>& f, const InputLocation& kind_at,
                        const InputLocation& offset_at, bool first, EmpiricalVariogram* v) {
  Transform kind = Transform::none;
  bool known = false;
  for (const Transform t : {Transform::none, Transform::log, Transform::normal_score})
    if (f[7] == name_of(t)) kind = t, known = true;
  if (!known)
    throw InputError(kComponent, kind_at,
                     "expected none, log or normal-score, found '" + f[7] + "'");
  const double offset = f[8].empty() ? 0.0 : parse_number(f[8], offset_at, false);
  if (kind != Transform::log && offset != 0)
    throw InputError(kComponent, offset_at, "a log_offset is given for transform " + f[7]);
  const InputLocation& where = kind_at;
  if (first) {
    v->options.transform = kind;
    v->options.log_offset = offset;
  } else if (kind != v->options.transform || offset != v->options.log_offset) {
    throw InputError(kComponent, where, "every row must have the same transform and log_offset");
  }
}

EmpiricalVariogram read_csv(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(kComponent, path + ": cannot be opened");
  EmpiricalVariogram v;
  std::string line;
  std::size_t number = 0;
  bool header = false;
  while (std::getline(in, line)) {
    ++number;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.find_first_not_of(" \t") == std::string::npos) continue;
    const std::string row_name = "line " + std::to_string(number);
    const std::vector<std::string> f = split(line);
    if (!header) {
      read_csv_header(f, InputLocation{path, row_name, ""}, &v);
      header = true;
      continue;
    }
    const std::size_t columns = v.transform_recorded ? 9 : 7;
    if (f.size() != columns)
      throw InputError(
          kComponent, InputLocation{path, row_name, ""},
          "expected " + std::to_string(columns) + " fields, found " + std::to_string(f.size()));
    auto at = [&](std::size_t k) {
      return InputLocation{path, row_name,
                           k < 6    ? kColumns[k]
                           : k == 6 ? value_column(v.options.statistic)
                                    : kTransformColumns[k - 7]};
    };
    VariogramRow r;
    const double azimuth = parse_number(f[0], at(0), true), dip = parse_number(f[1], at(1), true);
    if (!std::isnan(azimuth)) r.azimuth = azimuth;
    if (!std::isnan(dip)) r.dip = dip;
    r.lag_from = parse_number(f[2], at(2), false);
    r.lag_to = parse_number(f[3], at(3), false);
    r.mean_distance = parse_number(f[4], at(4), true);
    const double pairs = parse_number(f[5], at(5), false);
    if (pairs < 0 || pairs != std::floor(pairs))
      throw InputError(kComponent, at(5), "the pair count must be a whole number >= 0");
    r.pairs = static_cast<std::uint64_t>(pairs);
    r.value = parse_number(f[6], at(6), true);
    if (v.transform_recorded) read_csv_transform(f, at(7), at(8), v.rows.empty(), &v);
    check_row(r, {path, row_name, ""});
    v.rows.push_back(r);
  }
  if (!header) throw InputError(kComponent, path + ": the file is empty");
  if (v.rows.empty()) throw InputError(kComponent, path + ": holds no variogram rows");
  settings_from_rows(&v);
  return v;
}

// --- Reading JSON ------------------------------------------------------------

EmpiricalVariogram read_json_document(const std::string& path, const json& doc);

// Any JSON fault -- bad syntax, a number beyond double range, a value of the
// wrong type -- is the input's fault: an InputError naming the file.
EmpiricalVariogram read_json(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(kComponent, path + ": cannot be opened");
  try {
    const json doc = json::parse(in);
    return read_json_document(path, doc);
  } catch (const json::exception& e) {
    const std::string what = e.what();  // "[json.exception.type_error.302] type must be ..."
    const auto at = what.find("] ");
    throw InputError(kComponent, path + ": not a valid variogram document (" +
                                     (at == std::string::npos ? what : what.substr(at + 2)) + ")");
  }
}

EmpiricalVariogram read_json_document(const std::string& path, const json& doc) {
  EmpiricalVariogram v;
  auto fail = [&path](const std::string& row, const std::string& key, const std::string& what) {
    return InputError(kComponent, InputLocation{path, row, key}, what);
  };
  if (!doc.is_object() || !doc.contains("rows") || !doc["rows"].is_array())
    throw fail("", "rows", "a variogram document needs a \"rows\" array");
  const json settings = doc.value("settings", json::object());
  if (!settings.is_object()) throw fail("", "settings", "must be an object");
  try {
    v.options.statistic = parse_name<VariogramStatistic>(
        settings.value("statistic", std::string("semivariance")), "statistic");
    v.options.estimator = parse_name<VariogramEstimator>(
        settings.value("estimator", std::string("matheron")), "estimator");
    v.options.transform =
        parse_name<Transform>(settings.value("transform", std::string("none")), "transform");
  } catch (const InputError& e) {
    throw fail("", "settings", e.what());
  } catch (const json::exception&) {
    throw fail("", "settings", "statistic, estimator and transform must be text");
  }
  const std::string key = value_column(v.options.statistic);
  auto read = [&](const json& row, const std::string& name, const std::string& row_name,
                  bool nullable) -> double {
    if (!row.contains(name)) throw fail(row_name, name, "missing");
    const json& x = row[name];
    if (x.is_null() && nullable) return std::nan("");
    if (!x.is_number()) throw fail(row_name, name, "a number is required here");
    return x.get<double>();
  };
  std::size_t k = 0;
  for (const json& row : doc["rows"]) {
    const std::string row_name = "row " + std::to_string(++k);
    if (!row.is_object()) throw fail(row_name, "", "each row must be an object");
    VariogramRow r;
    const double azimuth = read(row, "azimuth", row_name, true);
    const double dip = read(row, "dip", row_name, true);
    if (!std::isnan(azimuth)) r.azimuth = azimuth;
    if (!std::isnan(dip)) r.dip = dip;
    r.lag_from = read(row, "lag_from", row_name, false);
    r.lag_to = read(row, "lag_to", row_name, false);
    r.mean_distance = read(row, "mean_distance", row_name, true);
    if (!row.contains("pairs") || !row["pairs"].is_number_unsigned())
      throw fail(row_name, "pairs", "the pair count must be a whole number >= 0");
    r.pairs = row["pairs"].get<std::uint64_t>();
    r.value = read(row, key, row_name, true);
    check_row(r, {path, row_name, ""});
    v.rows.push_back(r);
  }
  if (v.rows.empty()) throw fail("", "rows", "holds no variogram rows");
  settings_from_rows(&v);
  auto setting = [&settings, &fail](const char* name, double* target) {
    const auto it = settings.find(name);
    if (it == settings.end() || it->is_null()) return;
    if (!it->is_number()) throw fail("settings", name, "a number is required here");
    *target = it->get<double>();
  };
  setting("angle_tolerance", &v.options.angle_tolerance);
  setting("bandwidth", &v.options.bandwidth);
  setting("dip_tolerance", &v.options.dip_tolerance);
  setting("vertical_bandwidth", &v.options.vertical_bandwidth);
  setting("log_offset", &v.options.log_offset);
  v.dimension = doc.value("dimension", v.dimension);
  if (v.dimension != 2 && v.dimension != 3) throw fail("", "dimension", "must be 2 or 3");
  v.summary.samples = doc.value("samples", std::size_t{0});
  if (doc.contains("mean") && doc["mean"].is_number()) v.summary.mean = doc["mean"].get<double>();
  if (doc.contains("variance") && doc["variance"].is_number())
    v.summary.variance = doc["variance"].get<double>();
  v.source = doc.value("source", std::string());
  v.value = doc.value("value", std::string());
  v.options.value = v.value;
  if (const auto ns = doc.find("normal_score_table"); ns != doc.end() && ns->is_object()) {
    v.normal_scores.values = ns->value("values", std::vector<double>{});
    v.normal_scores.scores = ns->value("scores", std::vector<double>{});
    if (v.normal_scores.values.size() != v.normal_scores.scores.size())
      throw fail("", "normal_score_table", "values and scores must have the same length");
  }
  return v;
}

// Stops at the first top-level key: "rows" means a variogram document.
class TopLevelKeys : public nlohmann::json_sax<json> {
 public:
  bool variogram = false;
  bool null() override { return true; }
  bool boolean(bool) override { return true; }
  bool number_integer(number_integer_t) override { return true; }
  bool number_unsigned(number_unsigned_t) override { return true; }
  bool number_float(number_float_t, const string_t&) override { return true; }
  bool string(string_t&) override { return true; }
  bool binary(binary_t&) override { return true; }
  bool start_object(std::size_t) override {
    ++depth_;
    return true;
  }
  bool end_object() override {
    --depth_;
    return true;
  }
  bool start_array(std::size_t) override {
    return depth_++ > 0;  // a top-level array is not a variogram document: stop
  }
  bool end_array() override {
    --depth_;
    return true;
  }
  bool key(string_t& k) override {
    if (depth_ != 1) return true;
    if (k == "rows") variogram = true;
    return !(variogram || k == "type" || k == "features");  // decided: stop reading
  }
  bool parse_error(std::size_t, const std::string&, const nlohmann::detail::exception&) override {
    return false;
  }

 private:
  int depth_ = 0;
};

std::string direction_label(const VariogramRow& r) {
  if (!r.azimuth && !r.dip) return "omnidirectional";
  std::string label;
  if (r.azimuth) label = "azimuth " + cell(*r.azimuth);
  if (r.dip) label += (label.empty() ? "" : ", ") + std::string("dip ") + cell(*r.dip);
  return label;
}

}  // namespace

std::string variogram_to_csv(const EmpiricalVariogram& v) {
  std::string out;
  for (const char* c : kColumns) out += std::string(c) + ",";
  out += value_column(v.options.statistic) + ",";
  out += std::string(kTransformColumns[0]) + "," + kTransformColumns[1] + "\n";
  const Transform kind = v.options.transform;
  const std::string transform =
      std::string(name_of(kind)) + "," + (kind == Transform::log ? cell(v.options.log_offset) : "");
  for (const auto& r : v.rows)
    out += cell(r.azimuth) + "," + cell(r.dip) + "," + cell(r.lag_from) + "," + cell(r.lag_to) +
           "," + cell(r.mean_distance) + "," + std::to_string(r.pairs) + "," + cell(r.value) + "," +
           transform + "\n";
  return out;
}

std::string variogram_to_json(const EmpiricalVariogram& v) {
  const VariogramOptions& o = v.options;
  json j;
  j["sillstone"] = version();
  j["source"] = v.source;
  j["value"] = v.value;
  j["dimension"] = v.dimension;
  j["samples"] = v.summary.samples;
  j["mean"] = number(v.summary.mean);
  j["variance"] = number(v.summary.variance);
  j["settings"] = {
      {"statistic", name_of(o.statistic)},
      {"estimator", name_of(o.estimator)},
      {"transform", name_of(o.transform)},
      {"log_offset", number(o.transform == Transform::log ? o.log_offset : std::nan(""))},
      {"lag", o.lag},
      {"lags", o.lags},
      {"max_distance", o.max_distance},
      {"azimuths", o.azimuths},
      {"angle_tolerance", o.azimuths.empty() ? json() : json(o.angle_tolerance)},
      {"bandwidth", number(o.bandwidth)},
      {"dips", o.dips},
      {"dip_tolerance", o.dips.empty() ? json() : json(o.dip_tolerance)},
      {"vertical_bandwidth", number(o.vertical_bandwidth)}};
  json rows = json::array();
  const std::string key = value_column(o.statistic);
  for (const auto& r : v.rows)
    rows.push_back({{"azimuth", number(r.azimuth)},
                    {"dip", number(r.dip)},
                    {"lag_from", r.lag_from},
                    {"lag_to", r.lag_to},
                    {"mean_distance", number(r.mean_distance)},
                    {"pairs", r.pairs},
                    {key, number(r.value)}});
  j["rows"] = rows;
  if (o.transform == Transform::normal_score)
    j["normal_score_table"] = {{"values", v.normal_scores.values},
                               {"scores", v.normal_scores.scores}};
  j["notes"] = v.summary.notes;
  j["warnings"] = v.summary.warnings;
  return j.dump(2);
}

void write_variogram_text(std::ostream& out, const EmpiricalVariogram& v) {
  const VariogramOptions& o = v.options;
  out << "Variogram of '" << v.value << "'";
  if (!v.source.empty()) out << " (" << v.source << ")";
  out << "\n";
  out << "Statistic  " << name_of(o.statistic);
  if (o.statistic == VariogramStatistic::semivariance)
    out << ", " << name_of(o.estimator) << " estimator";
  out << "; transform " << v.summary.transform << "\n";
  out << "Samples    " << v.summary.samples << " (" << v.dimension << "D), mean "
      << format_for_people(v.summary.mean, 6) << ", variance "
      << format_for_people(v.summary.variance, 6) << "\n";
  out << "Lags       " << o.lags << " classes of " << cell(o.lag) << " to " << cell(o.max_distance)
      << "\n";
  if (v.summary.threads > 0)
    out << "Pairs      " << v.summary.pairs << " counted in "
        << format_for_people(v.summary.seconds, 3) << " s on " << v.summary.threads
        << " thread(s)\n";
  if (!o.azimuths.empty()) {
    out << "Directions angle tolerance " << cell(o.angle_tolerance);
    if (std::isfinite(o.bandwidth)) out << ", bandwidth " << cell(o.bandwidth);
    out << "\n";
  }
  if (!o.dips.empty()) {
    out << "Dips       dip tolerance " << cell(o.dip_tolerance);
    if (std::isfinite(o.vertical_bandwidth))
      out << ", vertical bandwidth " << cell(o.vertical_bandwidth);
    out << "\n";
  }
  const std::string key = value_column(o.statistic);
  std::string current = "\x01";
  for (const auto& r : v.rows) {
    const std::string label = direction_label(r);
    if (label != current) {
      current = label;
      out << "\n"
          << label << "\n"
          << std::right << std::setw(12) << "lag_from" << std::setw(12) << "lag_to" << std::setw(15)
          << "mean_distance" << std::setw(10) << "pairs" << std::setw(15) << key << "\n";
    }
    auto fmt = [](double x) { return format_for_people(x, 6); };
    out << std::setw(12) << fmt(r.lag_from) << std::setw(12) << fmt(r.lag_to) << std::setw(15)
        << fmt(r.mean_distance) << std::setw(10) << r.pairs << std::setw(15) << fmt(r.value)
        << "\n";
  }
}

void write_variogram(const std::string& path, const EmpiricalVariogram& v, bool overwrite) {
  const std::string ext = extension_of(path);
  if (ext != ".csv" && ext != ".json")
    throw InputError(kComponent, path + ": the variogram is written as .csv or .json");
  const std::string text = ext == ".csv" ? variogram_to_csv(v) : variogram_to_json(v) + "\n";
  write_atomically(path, overwrite, [&text](const std::string& temporary) {
    std::ofstream out(temporary, std::ios::binary);
    out << text;
    out.close();
    if (!out) throw std::runtime_error(temporary + ": writing failed");
  });
}

bool is_variogram_table(const std::string& path) {
  refuse_special_input(path, kComponent, "INPUT");  // before the read that a FIFO would block
  std::ifstream in(path, std::ios::binary);
  if (!in) return false;
  char c = 0;
  while (in.get(c) && std::isspace(static_cast<unsigned char>(c))) {
  }
  if (!in) return false;
  if (c == '{') {
    in.unget();
    TopLevelKeys keys;
    json::sax_parse(in, &keys);
    return keys.variogram;
  }
  in.unget();
  std::string line;
  std::getline(in, line);
  if (!line.empty() && line.back() == '\r') line.pop_back();
  const std::vector<std::string> f = split(line);
  for (std::size_t k = 0; k < 6; ++k)
    if (k >= f.size() || f[k] != kColumns[k]) return false;
  return true;
}

EmpiricalVariogram read_variogram(const std::string& path) {
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec))
    throw InputError(kComponent, path + ": no such file");
  const std::string ext = extension_of(path);
  if (ext == ".csv") return read_csv(path);
  if (ext == ".json") return read_json(path);
  throw InputError(kComponent, path + ": a variogram file is .csv or .json");
}

}  // namespace sillstone
