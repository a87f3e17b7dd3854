// Inputs that are not files: refused before anything opens them.
#include <filesystem>

#include "core/file_kind.hpp"
#include "sillstone/error.hpp"
#include "sillstone/samples.hpp"

namespace sillstone {

bool is_gdal_virtual_path(const std::string& path) { return path.rfind("/vsi", 0) == 0; }

void refuse_special_input(const std::string& path, const std::string& component,
                          const std::string& role) {
  if (path.empty() || is_gdal_virtual_path(path)) return;
  std::error_code ec;
  const std::filesystem::file_status status = std::filesystem::status(path, ec);  // stat(2)
  if (!std::filesystem::exists(status) || std::filesystem::is_regular_file(status) ||
      std::filesystem::is_directory(status))
    return;
  throw InputError(component, path + ": is " + detail::file_kind(status) + ", not a file (" + role +
                                  "); sillstone reads inputs from regular files, folders or "
                                  "GDAL /vsi paths only");
}

}  // namespace sillstone
