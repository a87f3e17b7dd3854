// sillstone/outputs.hpp -- writing outputs without ever losing anything.
//
// Every output is written under a temporary name in its own folder and
// renamed to the final name only when complete, so an interrupted run leaves
// either the previous file or no file under the final name, never a
// truncated one. Existing outputs are replaced only with `overwrite`.
// Temporary files are removed on SIGINT and SIGTERM (exit status 130 / 143)
// once install_interrupt_cleanup() has run. A core helper: every stage that
// writes a file writes through it (src/core/pending_output.cpp).
//
// Example:
//   sillstone::check_output_path("out/model.json", overwrite);  // before any work
//   sillstone::PendingOutput out("out/model.json", overwrite);
//   write_everything_to(out.temp_path());
//   out.commit();
#pragma once

#include <functional>
#include <string>

namespace sillstone {

/// Refuses (InputError, component "output") an output whose folder does not
/// exist, which is a folder itself, or which exists while `overwrite` is false.
/// Call it for every output before any long work starts.
void check_output_path(const std::string& path, bool overwrite);

/// One output being written. Not copyable; movable.
class PendingOutput {
 public:
  /// Checks the path (see check_output_path) and reserves a temporary name
  /// ".<name>.tmp-<pid>-<n>" beside it.
  PendingOutput(std::string final_path, bool overwrite);
  ~PendingOutput();  ///< removes the temporary file unless committed
  PendingOutput(PendingOutput&& other) noexcept;
  PendingOutput& operator=(PendingOutput&&) = delete;
  PendingOutput(const PendingOutput&) = delete;
  PendingOutput& operator=(const PendingOutput&) = delete;

  /// Where to write. Has the same extension as the final path (GDAL and OGR
  /// pick drivers by it).
  const std::string& temp_path() const { return temp_; }
  const std::string& final_path() const { return final_; }

  /// Renames the temporary file to the final name (atomic on one filesystem).
  void commit();

 private:
  std::string final_, temp_;
  int slot_ = -1;  // registry slot for interrupt cleanup
  bool committed_ = false;
};

/// Writes `text` to `path` through a PendingOutput.
void write_text_output(const std::string& path, const std::string& text, bool overwrite);

/// Calls write(temporary) with the temporary path of a PendingOutput for
/// `path`, then commits it. If `write` throws, the temporary is removed and
/// the exception passes on; `path` is left as it was.
void write_atomically(const std::string& path, bool overwrite,
                      const std::function<void(const std::string& temporary)>& write);

/// Installs SIGINT/SIGTERM handlers that delete pending temporary files and
/// exit with 128 + signal number. Call once at program start.
void install_interrupt_cleanup();

}  // namespace sillstone
