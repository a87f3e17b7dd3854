// Line numbers of the records of a CSV file, so that errors can name the
// 1-based line a user sees in a text editor (OGR's feature ids skip blank
// lines and count records, not lines).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

namespace sillstone::detail {

/// The starting line of each data record (the header excluded), in order.
/// Blank lines are skipped as OGR's CSV driver skips them; a quoted field may
/// span lines. Returns an empty vector if the file cannot be read.
std::vector<std::int64_t> csv_record_lines(const std::string& path);

}  // namespace sillstone::detail
