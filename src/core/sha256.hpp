// SHA-256 (FIPS 180-4) of files, for the audit trail in run.json.
#pragma once

#include <string>

namespace sillstone::detail {

/// Lower-case hex SHA-256 of the bytes of `text`.
std::string sha256_hex(const std::string& text);

/// Lower-case hex SHA-256 of a file's bytes; throws std::runtime_error if unreadable.
std::string sha256_file(const std::string& path);

}  // namespace sillstone::detail
