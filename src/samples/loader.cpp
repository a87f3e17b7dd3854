// The sample reader: one OGR layer -> SampleSet.
//
// Order of work: open read-only, pick the layer, resolve the columns, apply
// the attribute filter, settle the CRS, read every feature (parsing each cell
// with parse_value so that errors name row and column), reproject, then
// detect duplicate locations and apply the duplicate policy.
#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <memory>
#include <mutex>
#include <numeric>

#include "core/capped_list.hpp"
#include "samples/csv_lines.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/samples.hpp"

namespace sillstone {
namespace {

// Column names reach JSON outputs, which must be UTF-8: a name that is not
// valid UTF-8 (a Latin-1 header such as "Zn_\xb5g") is read as Latin-1,
// whose bytes are the first 256 code points. Valid UTF-8 is kept as it is.
std::string as_utf8(const std::string& text) {
  std::size_t i = 0;
  bool valid = true;
  while (i < text.size() && valid) {
    const auto c = static_cast<unsigned char>(text[i]);
    const std::size_t len = c < 0x80         ? 1
                            : (c >> 5) == 6  ? 2
                            : (c >> 4) == 14 ? 3
                            : (c >> 3) == 30 ? 4
                                             : 0;
    valid = len > 0 && i + len <= text.size() && (len != 2 || c >= 0xC2);
    for (std::size_t k = 1; valid && k < len; ++k)
      valid = (static_cast<unsigned char>(text[i + k]) >> 6) == 2;
    i += len;
  }
  if (valid) return text;
  std::string out;
  for (const char ch : text) {
    const auto c = static_cast<unsigned char>(ch);
    if (c < 0x80) {
      out += ch;
    } else {
      out += static_cast<char>(0xC0 | (c >> 6));
      out += static_cast<char>(0x80 | (c & 0x3F));
    }
  }
  return out;
}

constexpr const char* kComponent = "samples";

void register_gdal_once() {
  static std::once_flag flag;
  std::call_once(flag, [] { GDALAllRegister(); });
}

// GDAL reports trouble through a global error state; keep it off stderr and
// quote it in our own messages instead.
struct QuietGdalErrors {
  QuietGdalErrors() {
    CPLPushErrorHandler(CPLQuietErrorHandler);
    CPLErrorReset();
  }
  ~QuietGdalErrors() { CPLPopErrorHandler(); }
  QuietGdalErrors(const QuietGdalErrors&) = delete;
  QuietGdalErrors& operator=(const QuietGdalErrors&) = delete;
};

std::string gdal_message() {
  std::string msg = CPLGetLastErrorMsg();
  return msg.empty() ? "" : " (" + msg + ")";
}

std::string list_fields(OGRFeatureDefn* defn) {
  std::string out;
  for (int i = 0; i < defn->GetFieldCount(); ++i)
    out += (i ? ", " : "") + std::string(defn->GetFieldDefn(i)->GetNameRef());
  return out;
}

// OGR lookups are case-insensitive; an exact match wins over a case-folded one.
int find_field(OGRFeatureDefn* defn, const std::string& name, const std::string& file,
               const std::string& option) {
  for (int i = 0; i < defn->GetFieldCount(); ++i)
    if (name == defn->GetFieldDefn(i)->GetNameRef()) return i;
  for (int i = 0; i < defn->GetFieldCount(); ++i)  // a Latin-1 header named in UTF-8
    if (name == as_utf8(defn->GetFieldDefn(i)->GetNameRef())) return i;
  const int i = defn->GetFieldIndex(name.c_str());
  if (i < 0)
    throw InputError(kComponent, InputLocation{file, "", name},
                     "no such column (" + option + "); the columns are: " + list_fields(defn));
  return i;
}

std::unique_ptr<OGRSpatialReference> make_srs(const std::string& text, const std::string& option) {
  auto srs = std::make_unique<OGRSpatialReference>();
  if (srs->SetFromUserInput(text.c_str()) != OGRERR_NONE)
    throw InputError(kComponent,
                     option + " '" + text + "' is not a CRS that GDAL/PROJ knows" + gdal_message());
  srs->SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  return srs;
}

std::string srs_authority(const OGRSpatialReference& srs) {
  const char* name = srs.GetAuthorityName(nullptr);
  const char* code = srs.GetAuthorityCode(nullptr);
  if (name && code) return std::string(name) + ":" + code;
  return "";
}

// How one row is named in messages, and which number identifies it.
struct RowNamer {
  bool csv = false;
  std::vector<std::int64_t> lines;  // CSV record -> line
  std::pair<std::string, std::int64_t> operator()(GIntBig fid) const {
    if (csv) {
      // OGR's CSV driver numbers records from 1, skipping blank lines.
      if (fid >= 1 && static_cast<std::size_t>(fid) <= lines.size()) {
        const std::int64_t line = lines[static_cast<std::size_t>(fid - 1)];
        return {"line " + std::to_string(line), line};
      }
      return {"record " + std::to_string(fid), fid};
    }
    return {"feature " + std::to_string(fid), fid};
  }
};

struct RawRow {
  Point p;
  std::string id;
  std::int64_t number = 0;
  std::vector<double> values;
  std::vector<unsigned char> censored;
};

double read_coordinate(OGRFeature& f, int field, const InputLocation& where) {
  if (!f.IsFieldSetAndNotNull(field)) return std::nan("");
  const OGRFieldType type = f.GetFieldDefnRef(field)->GetType();
  if (type == OFTReal || type == OFTInteger || type == OFTInteger64) {
    const double v = f.GetFieldAsDouble(field);
    if (!std::isfinite(v)) throw InputError(kComponent, where, "the coordinate is not finite");
    return v;
  }
  const std::string text = f.GetFieldAsString(field);
  const ParsedValue pv = parse_value(text);
  if (pv.kind == ParsedValue::Kind::missing) return std::nan("");
  if (pv.kind != ParsedValue::Kind::number)
    throw InputError(kComponent, where, "cannot read '" + text + "' as a coordinate");
  return pv.value;
}

// OGR's CSV driver takes the first line for the header; when it is blank it
// does not recognise the file at all. Say so, and where, rather than pass on
// its generic refusal.
void refuse_leading_blank_lines(const std::string& file) {
  std::string extension = std::filesystem::path(file).extension().string();
  for (char& c : extension) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (extension != ".csv") return;
  std::ifstream in(file, std::ios::binary);
  std::string line;
  int blank = 0;
  while (blank < 1000 && std::getline(in, line)) {
    if (blank == 0 && line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);  // byte-order mark
    if (line.find_first_not_of(" \t\r") != std::string::npos) break;
    ++blank;
  }
  if (blank > 0 && in)
    throw InputError(kComponent, InputLocation{file, "line 1", ""},
                     "the file starts with " + std::to_string(blank) +
                         " blank line(s); the header (the column names) must be the first "
                         "line: delete the blank line(s) above it");
}

// A samples path that is not a GDAL virtual path must be a readable,
// non-empty file (or a .gdb folder). A FIFO or device is refused before
// anything opens it (opening a FIFO waits for a writer).
void check_input_path(const std::string& file) {
  namespace fs = std::filesystem;
  refuse_special_input(file, kComponent, "SAMPLES");
  if (is_gdal_virtual_path(file)) return;
  std::error_code ec;
  const fs::file_status status = fs::status(file, ec);
  if (!fs::exists(status)) throw InputError(kComponent, file + ": no such file");
  if (fs::is_directory(status) && fs::path(file).extension() != ".gdb")
    throw InputError(kComponent, file + ": is a folder, not a samples file");
  if (fs::is_regular_file(status) && fs::file_size(file, ec) == 0)
    throw InputError(kComponent, file + ": the file is empty");
  refuse_leading_blank_lines(file);
}

// The source opened read-only, its layer (filtered by --where) and the
// columns the options name.
struct OpenLayer {
  std::unique_ptr<GDALDataset> ds;
  OGRLayer* layer = nullptr;
  bool csv = false;
  bool from_fields = false;  // coordinates from columns, not from geometries
  int fx = -1, fy = -1, fz = -1;
  std::vector<int> value_fields;
};

OGRLayer* pick_layer(GDALDataset& ds, const SampleOptions& options) {
  const std::string& file = options.path;
  if (options.layer.empty()) {
    if (ds.GetLayerCount() < 1) throw InputError(kComponent, file + ": holds no layer");
    return ds.GetLayer(0);
  }
  OGRLayer* layer = ds.GetLayerByName(options.layer.c_str());
  if (layer) return layer;
  std::string names;
  for (int i = 0; i < ds.GetLayerCount(); ++i)
    names += (i ? ", " : "") + std::string(ds.GetLayer(i)->GetName());
  throw InputError(kComponent,
                   file + ": no layer '" + options.layer + "'; the layers are: " + names);
}

OpenLayer open_layer(const SampleOptions& options) {
  const std::string& file = options.path;
  OpenLayer in;
  in.ds.reset(GDALDataset::Open(file.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY, nullptr, nullptr,
                                nullptr));
  if (!in.ds)
    throw InputError(kComponent,
                     file + ": cannot be read as a vector data source" + gdal_message());
  in.csv = EQUAL(in.ds->GetDriver()->GetDescription(), "CSV");
  in.layer = pick_layer(*in.ds, options);
  OGRFeatureDefn* defn = in.layer->GetLayerDefn();
  for (const auto& v : options.values)
    in.value_fields.push_back(find_field(defn, v, file, "--value"));
  in.from_fields = !options.x.empty();
  if (in.from_fields) {
    in.fx = find_field(defn, options.x, file, "--x");
    in.fy = find_field(defn, options.y, file, "--y");
  } else if (in.layer->GetGeomType() == wkbNone) {
    throw InputError(kComponent, file +
                                     ": the layer has no geometry; name the coordinate "
                                     "columns with --x and --y (columns: " +
                                     list_fields(defn) + ")");
  }
  if (!options.z.empty()) in.fz = find_field(defn, options.z, file, "--z");
  if (!options.where.empty() && in.layer->SetAttributeFilter(options.where.c_str()) != OGRERR_NONE)
    throw InputError(kComponent, file + ": --where \"" + options.where +
                                     "\" is not a valid attribute filter" + gdal_message());
  return in;
}

// The CRS of the source (its own, or --crs), and the reprojection to
// --to-crs when asked. The analysis CRS must be projected.
struct CrsPlan {
  std::unique_ptr<OGRSpatialReference> source, target;
  std::unique_ptr<OGRCoordinateTransformation> transform;
  const OGRSpatialReference* analysis() const { return target ? target.get() : source.get(); }
};

CrsPlan plan_crs(const SampleOptions& options, const OpenLayer& in) {
  const std::string& file = options.path;
  CrsPlan plan;
  if (const OGRSpatialReference* s = in.from_fields ? nullptr : in.layer->GetSpatialRef()) {
    plan.source.reset(s->Clone());
    plan.source->SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  }
  if (!options.crs.empty()) {
    auto assigned = make_srs(options.crs, "--crs");
    if (plan.source && !plan.source->IsSame(assigned.get()))
      throw InputError(kComponent, file + ": the source already has a CRS (" +
                                       std::string(plan.source->GetName()) +
                                       "); --crs only assigns one to sources without a CRS, "
                                       "use --to-crs to reproject");
    plan.source = std::move(assigned);
  }
  if (!options.to_crs.empty()) {
    if (!plan.source)
      throw InputError(kComponent, file +
                                       ": --to-crs needs the source's CRS; the source has "
                                       "none, so give it with --crs");
    plan.target = make_srs(options.to_crs, "--to-crs");
    plan.transform.reset(OGRCreateCoordinateTransformation(plan.source.get(), plan.target.get()));
    if (!plan.transform)
      throw InputError(kComponent, "no coordinate transformation from " +
                                       std::string(plan.source->GetName()) + " to " +
                                       options.to_crs + gdal_message());
  }
  const OGRSpatialReference* analysis = plan.analysis();
  if (analysis && analysis->IsGeographic())
    throw InputError(kComponent, file + ": coordinates are in a geographic CRS (" +
                                     std::string(analysis->GetName()) +
                                     ", degrees); distances need a projected CRS: add "
                                     "--to-crs EPSG:NNNN (e.g. the local UTM zone)");
  return plan;
}

// The location of one feature; false when a coordinate is missing (the row
// is then dropped). Throws for a geometry that is not a point.
bool read_location(OGRFeature& feature, const OpenLayer& in, const SampleOptions& options,
                   const std::string& row_name, Point* p) {
  const std::string& file = options.path;
  bool missing = false;
  if (in.from_fields) {
    p->x = read_coordinate(feature, in.fx, {file, row_name, options.x});
    p->y = read_coordinate(feature, in.fy, {file, row_name, options.y});
    missing = std::isnan(p->x) || std::isnan(p->y);
  } else {
    const OGRGeometry* g = feature.GetGeometryRef();
    if (!g || g->IsEmpty()) {
      missing = true;
    } else {
      const OGRPoint* pt = nullptr;
      const auto type = wkbFlatten(g->getGeometryType());
      if (type == wkbPoint) {
        pt = g->toPoint();
      } else if (type == wkbMultiPoint && g->toMultiPoint()->getNumGeometries() == 1) {
        pt = g->toMultiPoint()->getGeometryRef(0);
      } else {
        throw InputError(
            kComponent, InputLocation{file, row_name, ""},
            std::string("the geometry is a ") + g->getGeometryName() + "; samples must be points");
      }
      p->x = pt->getX();
      p->y = pt->getY();
      if (!std::isfinite(p->x) || !std::isfinite(p->y))
        throw InputError(kComponent, InputLocation{file, row_name, ""},
                         "the point's coordinates are not finite");
    }
  }
  if (in.fz >= 0 && !missing) {
    p->z = read_coordinate(feature, in.fz, {file, row_name, options.z});
    missing = std::isnan(p->z);
  }
  return !missing;
}

// One value cell, parsed; throws naming row and column for what is neither a
// number, a non-detect (<DL) nor a missing marker.
ParsedValue read_cell(OGRFeature& feature, int field, const InputLocation& where) {
  ParsedValue pv;
  if (!feature.IsFieldSetAndNotNull(field)) {
    pv.kind = ParsedValue::Kind::missing;
    return pv;
  }
  const OGRFieldType type = feature.GetFieldDefnRef(field)->GetType();
  if (type == OFTReal || type == OFTInteger || type == OFTInteger64) {
    pv.kind = ParsedValue::Kind::number;
    pv.value = feature.GetFieldAsDouble(field);
    if (!std::isfinite(pv.value)) throw InputError(kComponent, where, "the value is not finite");
    return pv;
  }
  const std::string text = feature.GetFieldAsString(field);
  pv = parse_value(text);
  if (pv.kind == ParsedValue::Kind::invalid)
    throw InputError(
        kComponent, where,
        "cannot read '" + text + "' as a number, a non-detect (<DL) or a missing marker");
  return pv;
}

// The value a non-detect with limit `limit` takes under the policy.
double substitute(BelowDetection policy, double limit) {
  switch (policy) {
    case BelowDetection::half:
      return limit / 2;
    case BelowDetection::limit:
      return limit;
    case BelowDetection::zero:
      return 0;
    case BelowDetection::drop:
      break;
  }
  return std::nan("");
}

// The values of one feature into `row`, counted in `sum`; returns how many
// are present. Every cell is checked, even on rows dropped for their
// coordinates, so that a bad cell is never hidden.
std::size_t read_values(OGRFeature& feature, const OpenLayer& in, const SampleOptions& options,
                        const std::string& row_name, RawRow* row, LoadSummary* sum) {
  const std::size_t nv = options.values.size();
  row->values.assign(nv, std::nan(""));
  row->censored.assign(nv, 0);
  std::size_t present = 0;
  for (std::size_t k = 0; k < nv; ++k) {
    const ParsedValue pv =
        read_cell(feature, in.value_fields[k], {options.path, row_name, options.values[k]});
    if (pv.kind == ParsedValue::Kind::number) {
      row->values[k] = pv.value;
      ++present;
    } else if (pv.kind == ParsedValue::Kind::missing) {
      ++sum->missing[k];
    } else if (pv.kind == ParsedValue::Kind::below_detection) {
      ++sum->below_detection[k];
      row->censored[k] = 1;
      row->values[k] = substitute(options.below_detection, pv.value);
      if (!std::isnan(row->values[k])) ++present;
    }
  }
  return present;
}

// Every feature with a location and at least one value, in source order.
std::vector<RawRow> read_rows(const SampleOptions& options, const OpenLayer& in, LoadSummary* sum) {
  const std::string& file = options.path;
  RowNamer namer;
  namer.csv = in.csv;
  if (in.csv) namer.lines = detail::csv_record_lines(file);
  std::vector<RawRow> rows;
  in.layer->ResetReading();
  for (auto& feature : *in.layer) {
    ++sum->rows_read;
    const auto [row_name, row_number] = namer(feature->GetFID());
    RawRow row;
    row.id = row_name;
    row.number = row_number;
    const bool located = read_location(*feature, in, options, row_name, &row.p);
    const std::size_t present = read_values(*feature, in, options, row_name, &row, sum);
    if (!located) {
      ++sum->dropped_no_coordinate;
    } else if (present == 0) {
      ++sum->dropped_no_value;
    } else {
      rows.push_back(std::move(row));
    }
  }
  if (CPLGetLastErrorType() == CE_Failure)
    throw InputError(kComponent, file + ": reading failed" + gdal_message());
  if (rows.empty()) {
    if (sum->rows_read == 0)
      throw InputError(kComponent, file + ": holds no data rows" +
                                       (options.where.empty() ? "" : " that pass --where"));
    throw InputError(kComponent, file + ": none of the " + std::to_string(sum->rows_read) +
                                     " rows has both coordinates and a value");
  }
  return rows;
}

void reproject(const CrsPlan& crs, const SampleOptions& options, bool three_d,
               std::vector<RawRow>* rows) {
  if (!crs.transform) return;
  for (auto& r : *rows) {
    double x = r.p.x, y = r.p.y, z = r.p.z;
    if (!crs.transform->Transform(1, &x, &y, &z) || !std::isfinite(x) || !std::isfinite(y))
      throw InputError(kComponent, InputLocation{options.path, r.id, ""},
                       "the point cannot be transformed to " + options.to_crs);
    r.p.x = x;
    r.p.y = y;
    if (three_d) r.p.z = z;
  }
}

// The mean of each value over rows[order[i..j)], into the first of them.
void average_rows(const std::vector<std::size_t>& order, std::size_t i, std::size_t j,
                  std::vector<RawRow>* rows) {
  RawRow& first = (*rows)[order[i]];
  for (std::size_t v = 0; v < first.values.size(); ++v) {
    double total = 0;
    std::size_t n = 0, censored = 0;
    for (std::size_t k = i; k < j; ++k) {
      const RawRow& r = (*rows)[order[k]];
      if (std::isnan(r.values[v])) continue;
      total += r.values[v];
      ++n;
      censored += r.censored[v];
    }
    first.values[v] = n ? total / static_cast<double>(n) : std::nan("");
    first.censored[v] = n > 0 && censored == n;
  }
}

// Rows at one location are merged by the duplicate policy (or refused);
// returns which rows are kept. The first row of a location (in source order)
// stands for it.
std::vector<char> merge_duplicates(const SampleOptions& options, std::vector<RawRow>* rows,
                                   LoadSummary* sum) {
  const std::vector<RawRow>& r = *rows;
  std::vector<std::size_t> order(r.size());
  std::iota(order.begin(), order.end(), 0);
  auto key_less = [&r](std::size_t a, std::size_t b) {
    const Point &p = r[a].p, &q = r[b].p;
    if (p.x != q.x) return p.x < q.x;
    if (p.y != q.y) return p.y < q.y;
    if (p.z != q.z) return p.z < q.z;
    return a < b;
  };
  auto same = [&r](std::size_t a, std::size_t b) {
    return r[a].p.x == r[b].p.x && r[a].p.y == r[b].p.y && r[a].p.z == r[b].p.z;
  };
  std::sort(order.begin(), order.end(), key_less);
  std::vector<char> keep(r.size(), 1);
  for (std::size_t i = 0; i < order.size();) {
    std::size_t j = i + 1;
    while (j < order.size() && same(order[i], order[j])) ++j;
    if (j - i > 1) {
      ++sum->duplicate_locations;
      sum->duplicate_rows_removed += j - i - 1;
      // A few of the rows by name, the rest counted (a location may hold millions).
      std::vector<std::string> ids;
      for (std::size_t k = i; k < j && ids.size() < detail::kListedEntries; ++k)
        ids.push_back(r[order[k]].id);
      const std::string note = detail::capped_join(ids, j - i, " = ", "rows");
      if (options.duplicates == DuplicatePolicy::error)
        throw InputError(kComponent, options.path + ": several samples at one location (" + note +
                                         "); choose --duplicates average or first");
      if (sum->duplicate_examples.size() < detail::kListedEntries)
        sum->duplicate_examples.push_back(note);
      // order[i] is the lowest source index of the location, thanks to the tie-break.
      if (options.duplicates == DuplicatePolicy::average) average_rows(order, i, j, rows);
      for (std::size_t k = i + 1; k < j; ++k) keep[order[k]] = 0;
    }
    i = j;
  }
  return keep;
}

// The CRS the coordinates are in, or a warning that there is none.
void record_crs(const OGRSpatialReference* srs, SampleSet* set) {
  if (!srs) {
    set->summary.warnings.push_back(
        "the samples have no CRS: coordinates are taken as local "
        "projected units and outputs will carry no CRS (give one with --crs)");
    return;
  }
  char* wkt = nullptr;
  const char* wkt_options[] = {"FORMAT=WKT2_2019", nullptr};
  if (srs->exportToWkt(&wkt, wkt_options) == OGRERR_NONE && wkt) set->crs_wkt = wkt;
  CPLFree(wkt);
  set->crs_name = srs->GetName() ? srs->GetName() : "";
  set->crs_authority = srs_authority(*srs);
}

// Warnings for what was repaired: non-detects substituted, blanks skipped,
// rows dropped, duplicates merged.
void add_repair_warnings(const SampleOptions& options, LoadSummary* sum) {
  const std::string policy(name_of(options.below_detection));
  const char* replacement = options.below_detection == BelowDetection::half    ? "DL/2"
                            : options.below_detection == BelowDetection::limit ? "DL"
                            : options.below_detection == BelowDetection::zero  ? "0"
                                                                              : "nothing (dropped)";
  for (std::size_t v = 0; v < options.values.size(); ++v) {
    if (sum->below_detection[v])
      sum->warnings.push_back(std::to_string(sum->below_detection[v]) + " value(s) of '" +
                              options.values[v] + "' are below detection (<DL); replaced by " +
                              replacement + " (--below-detection " + policy + ")");
    if (sum->missing[v])
      sum->warnings.push_back(std::to_string(sum->missing[v]) + " value(s) of '" +
                              options.values[v] + "' are blank or marked missing; skipped");
  }
  if (sum->dropped_no_coordinate)
    sum->warnings.push_back(std::to_string(sum->dropped_no_coordinate) +
                            " row(s) without coordinates were dropped");
  if (sum->dropped_no_value)
    sum->warnings.push_back(std::to_string(sum->dropped_no_value) +
                            " row(s) without any value were dropped");
  if (sum->duplicate_locations) {
    const std::string examples =
        detail::capped_join(sum->duplicate_examples, sum->duplicate_locations, "; ", "locations");
    sum->warnings.push_back(
        std::to_string(sum->duplicate_locations) + " location(s) hold more than one sample (" +
        examples + "); " +
        (options.duplicates == DuplicatePolicy::average ? "values averaged" : "first row kept") +
        " (--duplicates " + std::string(name_of(options.duplicates)) + ")");
  }
}

}  // namespace

bool SampleOptions::is_valid(std::string* why) const {
  auto fail = [why](const std::string& text) {
    if (why) *why = text;
    return false;
  };
  if (path.empty()) return fail("no samples file was given");
  if (values.empty()) return fail("no value column was given (--value COLUMN)");
  for (const auto& v : values)
    if (v.empty()) return fail("an empty value column name was given");
  if (x.empty() != y.empty()) return fail("--x and --y go together");
  if (!z.empty() && x.empty()) return fail("--z needs --x and --y");
  return true;
}

SampleSet load_samples(const SampleOptions& options) {
  std::string why;
  if (!options.is_valid(&why)) throw InputError(kComponent, why);
  register_gdal_once();
  QuietGdalErrors quiet;
  // GDAL virtual paths (/vsizip/...) go to GDAL as they are.
  check_input_path(options.path);
  const OpenLayer in = open_layer(options);
  const CrsPlan crs = plan_crs(options, in);

  SampleSet set;
  set.source = options.path;
  set.layer = in.layer->GetName();
  set.dimension = in.fz >= 0 ? 3 : 2;
  for (const auto& name : options.values) set.value_names.push_back(as_utf8(name));
  set.below_detection = options.below_detection;
  set.duplicates = options.duplicates;
  LoadSummary& sum = set.summary;
  const std::size_t nv = options.values.size();
  sum.missing.assign(nv, 0);
  sum.below_detection.assign(nv, 0);

  std::vector<RawRow> rows = read_rows(options, in, &sum);
  reproject(crs, options, set.dimension == 3, &rows);
  sum.rows_kept = rows.size();
  const std::vector<char> keep = merge_duplicates(options, &rows, &sum);

  // Assembled in source order.
  set.values.assign(nv, {});
  set.censored.assign(nv, {});
  for (std::size_t i = 0; i < rows.size(); ++i) {
    if (!keep[i]) continue;
    set.points.push_back(rows[i].p);
    set.ids.push_back(rows[i].id);
    set.row_numbers.push_back(rows[i].number);
    for (std::size_t v = 0; v < nv; ++v) {
      set.values[v].push_back(rows[i].values[v]);
      set.censored[v].push_back(rows[i].censored[v]);
    }
  }
  record_crs(crs.analysis(), &set);
  add_repair_warnings(options, &sum);
  return set;
}

void require_variation(const SampleSet& samples, std::size_t column, const std::string& component) {
  if (column >= samples.values.size()) return;
  const std::vector<double>& v = samples.values[column];
  std::size_t count = 0;
  double first = std::nan("");
  bool varies = false;
  for (double x : v) {
    if (std::isnan(x)) continue;
    if (count++ == 0)
      first = x;
    else if (x != first)
      varies = true;
  }
  if (varies || count == 0) return;
  throw InputError(component, InputLocation{samples.source, "", samples.value_names[column]},
                   "all " + std::to_string(count) + " values are equal (" +
                       format_for_people(first, 10) +
                       "): with zero variance there is no spatial variation to fit a model to");
}

std::size_t first_extreme_value(const SampleSet& samples, std::size_t column) {
  if (column >= samples.values.size()) return samples.size();
  const std::vector<double>& v = samples.values[column];
  for (std::size_t i = 0; i < v.size(); ++i)
    if (std::abs(v[i]) > kMaxValueMagnitude) return i;  // NaN (missing) compares false
  return samples.size();
}

void require_moderate_values(const SampleSet& samples, std::size_t column,
                             const std::string& component) {
  const std::size_t i = first_extreme_value(samples, column);
  if (i >= samples.size()) return;
  std::ostringstream value;
  value.precision(10);
  value << samples.values[column][i];
  throw InputError(component,
                   InputLocation{samples.source, i < samples.ids.size() ? samples.ids[i] : "",
                                 samples.value_names[column]},
                   value.str() +
                       " is beyond +-1e100: squares and squared differences of such "
                       "values overflow double precision; check the units or the "
                       "value");
}

}  // namespace sillstone
