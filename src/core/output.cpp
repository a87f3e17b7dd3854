#include "sillstone/output.hpp"

#include <unistd.h>  // getpid: temporary names unique per process

#include <atomic>
#include <filesystem>

#include "sillstone/error.hpp"

namespace sillstone {

namespace fs = std::filesystem;

void check_output_path(const std::string& path, bool overwrite) {
  if (path.empty()) throw InputError("output", "an empty output path was given");
  const fs::path p(path);
  const fs::path folder = p.has_parent_path() ? p.parent_path() : fs::path(".");
  std::error_code ec;
  if (!fs::is_directory(folder, ec))
    throw InputError("output", path + ": the folder " + folder.string() + " does not exist");
  if (fs::is_directory(p, ec)) throw InputError("output", path + ": is a folder");
  if (fs::exists(p, ec) && !overwrite)
    throw InputError("output", path + ": exists already; add --overwrite to replace it");
}

void write_atomically(const std::string& path, bool overwrite,
                      const std::function<void(const std::string&)>& write) {
  check_output_path(path, overwrite);
  static std::atomic<unsigned> counter{0};
  const fs::path p(path);
  const fs::path temporary =
      p.parent_path() / ("." + p.filename().string() + ".partial-" + std::to_string(getpid()) +
                         "-" + std::to_string(counter++));
  try {
    write(temporary.string());
    check_output_path(path, overwrite);  // it may have appeared meanwhile
    fs::rename(temporary, p);
  } catch (...) {
    std::error_code ec;
    fs::remove(temporary, ec);
    throw;
  }
}

}  // namespace sillstone
