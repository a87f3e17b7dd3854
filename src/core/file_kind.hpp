// What a path is, in words, for messages that refuse special files.
#pragma once

#include <filesystem>
#include <string>

namespace sillstone::detail {

/// "a regular file", "a folder", "a FIFO (named pipe)", "a character device"...
inline std::string file_kind(const std::filesystem::file_status& status) {
  namespace fs = std::filesystem;
  switch (status.type()) {
    case fs::file_type::regular:
      return "a regular file";
    case fs::file_type::directory:
      return "a folder";
    case fs::file_type::symlink:
      return "a symbolic link";
    case fs::file_type::fifo:
      return "a FIFO (named pipe)";
    case fs::file_type::socket:
      return "a socket";
    case fs::file_type::character:
      return "a character device";
    case fs::file_type::block:
      return "a block device";
    default:
      return "a special file";
  }
}

}  // namespace sillstone::detail
