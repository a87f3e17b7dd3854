// Paths that the SIGINT/SIGTERM handler of install_interrupt_cleanup() removes.
#pragma once

#include <string>

namespace sillstone::detail {

/// Registers a temporary file to unlink on interruption; returns its slot, or
/// -1 when the table is full (the file is then only removed by its owner).
int register_temporary(const std::string& path);
void unregister_temporary(int slot);

/// Registers a folder to rmdir on interruption, after every temporary file is
/// unlinked (rmdir removes only empty folders). Returns a slot or -1.
int register_folder(const std::string& path);
void unregister_folder(int slot);

}  // namespace sillstone::detail
