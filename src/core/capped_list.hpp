// Lists in messages and reports name a few entries and count the rest, so
// that two million rows at twenty locations give one short line, not
// megabytes.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

namespace sillstone::detail {

/// Entries named in a message or report list before "and N more".
constexpr std::size_t kListedEntries = 5;

/// `shown` joined by `separator`, then " and N more <noun>" when `total`
/// (the length of the whole list, >= shown.size()) is larger, e.g.
/// "line 2 = line 22 = line 42 and 99997 more rows".
inline std::string capped_join(const std::vector<std::string>& shown, std::size_t total,
                               const std::string& separator, const std::string& noun) {
  std::string out;
  for (const auto& s : shown) out += (out.empty() ? "" : separator) + s;
  if (total > shown.size())
    out +=
        " and " + std::to_string(total - shown.size()) + " more" + (noun.empty() ? "" : " ") + noun;
  return out;
}

/// The first `keep` entries of `items`, then one entry "and N more <noun>"
/// when there are more.
inline std::vector<std::string> capped(const std::vector<std::string>& items, std::size_t keep,
                                       const std::string& noun) {
  if (items.size() <= keep) return items;
  std::vector<std::string> out(items.begin(), items.begin() + static_cast<std::ptrdiff_t>(keep));
  out.push_back("and " + std::to_string(items.size() - keep) + " more" + (noun.empty() ? "" : " ") +
                noun);
  return out;
}

}  // namespace sillstone::detail
