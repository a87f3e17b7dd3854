// sillstone/outputs.hpp -- writing outputs without ever losing anything.
//
// Every output is written under a temporary name in its own folder and
// published under the final name only when complete, so an interrupted run
// leaves either the previous file or no file under the final name, never a
// truncated one. Without `overwrite` a new output is published with link(2),
// which fails when the name is taken, so of two programs writing the same new
// output one wins and the other is refused; with `overwrite` it is renamed
// over the previous file. Only regular files are ever replaced: a symbolic
// link, folder, FIFO, socket or device under the output's name is refused.
// Temporary files (and a run folder being filled) are removed on SIGINT and
// SIGTERM (exit status 130 / 143) once install_interrupt_cleanup() has run.
// A core helper: every stage that writes a file writes through it
// (src/core/pending_output.cpp).
//
// Example:
//   sillstone::check_output_path("out/model.json", overwrite);  // before any work
//   sillstone::PendingOutput out("out/model.json", overwrite);
//   write_everything_to(out.temp_path());
//   out.commit();
#pragma once

#include <functional>
#include <string>
#include <vector>

namespace sillstone {

/// Refuses (InputError, component "output") an output whose folder does not
/// exist; whose name is a symbolic link, a folder, a FIFO, a socket or a
/// device (whatever `overwrite` says); or which exists while `overwrite` is
/// false. Call it for every output before any long work starts.
void check_output_path(const std::string& path, bool overwrite);

/// Refuses (InputError, component "output") an output path whose extension,
/// compared without case, is none of `extensions` (".csv", ".json", ...).
/// The message names `option` (e.g. "-o") and says what `what` is written as.
void check_output_extension(const std::string& path, const std::vector<std::string>& extensions,
                            const std::string& option, const std::string& what);

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

  /// Publishes the temporary file under the final name (atomic on one file
  /// system). Without `overwrite` it is linked to the final name, and an
  /// InputError is thrown when that name was taken meanwhile (by another
  /// program): the file there is left as it was. With `overwrite` it is
  /// renamed over the previous file, after checking again that this is a
  /// regular file.
  void commit();

 private:
  std::string final_, temp_;
  int slot_ = -1;  // registry slot for interrupt cleanup
  bool overwrite_ = false;
  bool committed_ = false;
};

/// The folder of a `run`, checked and created before any output is written.
///
/// Refused (InputError, component "output"): an empty name (component "run");
/// a path that exists and is not a folder; a missing parent folder; the root
/// of the file system (even with `overwrite`); an output of `own_names`
/// already there, or anything else than those names and their temporaries,
/// unless `overwrite` is given. With `overwrite` a folder holding other files
/// is accepted and only the run's own names are replaced; the other files are
/// left alone.
///
/// A folder this object created is removed again (only when empty: nothing
/// else is removed) when the object is destroyed before keep() (a run that
/// failed) or when the program is interrupted by SIGINT or SIGTERM.
class RunFolder {
 public:
  RunFolder(const std::string& dir, const std::vector<std::string>& own_names, bool overwrite);
  ~RunFolder();
  RunFolder(const RunFolder&) = delete;
  RunFolder& operator=(const RunFolder&) = delete;

  /// The folder, normalised ("runs/site/" gives "runs/site").
  const std::string& path() const { return path_; }
  /// Whether this object created the folder.
  bool created() const { return created_; }
  /// The run is complete: the folder stays.
  void keep();

 private:
  std::string path_;
  int slot_ = -1;  // registry slot for interrupt cleanup
  bool created_ = false, kept_ = false;
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
