// sillstone/output.hpp -- how every output file is written.
//
// An output is written under a temporary name in its own folder and renamed
// to its final name only when complete, so an interrupted run never leaves a
// half-written file under the final name. An existing file is replaced only
// when the caller says so (`--overwrite`). Refusals are InputErrors
// (component "output"; exit status 2).
#pragma once

#include <functional>
#include <string>

namespace sillstone {

/// Refuses `path` when its folder does not exist, when it names a folder, or
/// when it exists and `overwrite` is false. Call it before long work.
void check_output_path(const std::string& path, bool overwrite);

/// Checks `path`, calls write(temporary) with a new path in the same folder,
/// then renames the temporary to `path`. If `write` throws, the temporary is
/// removed and the exception passes on; `path` is left as it was.
void write_atomically(const std::string& path, bool overwrite,
                      const std::function<void(const std::string& temporary)>& write);

}  // namespace sillstone
