#include "sillstone/error.hpp"

namespace sillstone {

std::string describe(const InputLocation& where) {
  std::string out = where.file;
  auto append = [&out](const std::string& part) {
    if (part.empty()) return;
    if (!out.empty()) out += ", ";
    out += part;
  };
  append(where.row);
  if (!where.column.empty()) append("column '" + where.column + "'");
  return out;
}

InputError::InputError(const std::string& component, const std::string& message)
    : std::runtime_error(component + ": " + message), component_(component) {}

InputError::InputError(const std::string& component, const InputLocation& where,
                       const std::string& message)
    : std::runtime_error(component + ": " + describe(where) + ": " + message),
      component_(component) {}

}  // namespace sillstone
