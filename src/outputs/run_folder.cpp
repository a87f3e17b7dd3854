// The folder of a `run`: checked before any work, created, and removed again
// when the run that created it fails or is interrupted.
#include <algorithm>
#include <filesystem>
#include <stdexcept>

#include "core/interrupt_registry.hpp"
#include "sillstone/error.hpp"
#include "sillstone/outputs.hpp"

namespace sillstone {
namespace {

namespace fs = std::filesystem;

// Whether `name` is one of the run's outputs, or a temporary of one of them
// (".<stem>.tmp-...", nested ones have more leading dots): those may be in
// the folder from an earlier run of the same study.
bool is_own(const std::string& name, const std::vector<std::string>& own_names) {
  for (const auto& own : own_names) {
    if (name == own) return true;
    const std::size_t dots = name.find_first_not_of('.');
    if (dots == 0 || dots == std::string::npos) continue;
    const std::string prefix = fs::path(own).stem().string() + ".tmp-";
    if (name.compare(dots, prefix.size(), prefix) == 0) return true;
  }
  return false;
}

// Up to five of the names in `folder` that are not the run's, sorted, and
// how many there are.
std::vector<std::string> foreign_files(const fs::path& folder,
                                       const std::vector<std::string>& own_names,
                                       std::size_t* count) {
  std::vector<std::string> names;
  std::error_code ec;
  for (fs::directory_iterator it(folder, ec), end; !ec && it != end; it.increment(ec)) {
    const std::string name = it->path().filename().string();
    if (!is_own(name, own_names)) names.push_back(name);
  }
  if (ec) throw InputError("output", folder.string() + ": cannot be listed: " + ec.message());
  std::sort(names.begin(), names.end());
  *count = names.size();
  if (names.size() > 5) names.resize(5);
  return names;
}

// The root of the file system ("/", "/..", "//", or a link to it) never
// takes a run's outputs: they would be strewn among the system's folders.
bool is_file_system_root(const fs::path& p) {
  std::error_code ec;
  const fs::path resolved = fs::weakly_canonical(fs::absolute(p, ec), ec);
  return !ec && resolved == resolved.root_path();
}

}  // namespace

RunFolder::RunFolder(const std::string& dir, const std::vector<std::string>& own_names,
                     bool overwrite) {
  const char* component = "output";
  if (dir.empty())
    throw InputError("run", "no run folder: give -o DIR or [output] dir = \"...\" in the study");
  fs::path p = fs::path(dir).lexically_normal();
  if (!p.has_filename() && p.has_parent_path() && p != p.root_path())
    p = p.parent_path();  // "runs/site/"
  if (is_file_system_root(p))
    throw InputError(component, dir +
                                    ": is the root of the file system; give the run a folder "
                                    "of its own (e.g. -o runs/site)");
  std::error_code ec;
  const fs::file_status status = fs::status(p, ec);
  if (fs::exists(status) && !fs::is_directory(status))
    throw InputError(component, dir + ": exists and is not a folder");
  const fs::path parent = p.has_parent_path() ? p.parent_path() : fs::path(".");
  if (!fs::is_directory(parent, ec))
    throw InputError(component, dir + ": the folder " + parent.string() + " does not exist");
  path_ = p.string();
  if (fs::exists(status)) {
    for (const auto& name : own_names) check_output_path((p / name).string(), overwrite);
    std::size_t count = 0;
    const auto others = foreign_files(p, own_names, &count);
    if (count > 0 && !overwrite) {
      std::string list;
      for (const auto& n : others) list += (list.empty() ? "" : ", ") + n;
      if (count > others.size()) list += " and " + std::to_string(count - others.size()) + " more";
      throw InputError(component, dir + ": holds files this run does not write (" + list +
                                      "); give a new or empty folder, or add --overwrite to "
                                      "write the run's outputs beside them (only the run's "
                                      "own files are replaced)");
    }
    return;
  }
  const bool made = fs::create_directory(p, ec);  // false: another program made it meanwhile
  if (ec) throw std::runtime_error("cannot create " + dir + ": " + ec.message());
  created_ = made;
  if (created_) slot_ = detail::register_folder(path_);
}

RunFolder::~RunFolder() {
  detail::unregister_folder(slot_);
  if (!created_ || kept_) return;
  std::error_code ec;
  fs::remove(path_, ec);  // fails harmlessly unless empty
}

void RunFolder::keep() {
  kept_ = true;
  detail::unregister_folder(slot_);
  slot_ = -1;
}

}  // namespace sillstone
