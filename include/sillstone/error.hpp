// sillstone/error.hpp -- the project's one error policy.
//
// Bad input (files, values, arguments, model specs) throws sillstone::InputError.
// Its message starts with the component that found the fault and names the
// file, the row (a CSV line number or a feature id) and the column when the
// fault is in the data. The command-line tool prints it after "error: " and
// exits with status 2. Any other std::exception is a failure of ours or of the
// system (exit status 1). Convergence trouble and numerical warnings are not
// thrown: they are reported in the Summary of the computation.
#pragma once

#include <stdexcept>
#include <string>

namespace sillstone {

/// Where in an input a fault was found. Empty fields are left out of messages.
struct InputLocation {
  std::string file;    ///< path as the user gave it
  std::string row;     ///< e.g. "line 14" (CSV) or "feature 7" (other sources)
  std::string column;  ///< column (field) name
};

/// A refusal caused by the user's input or arguments (exit status 2).
class InputError : public std::runtime_error {
 public:
  /// `component` names the part of sillstone that refused ("samples", "model", ...).
  InputError(const std::string& component, const std::string& message);
  InputError(const std::string& component, const InputLocation& where, const std::string& message);

  const std::string& component() const noexcept { return component_; }

 private:
  std::string component_;
};

/// "file, line 14, column 'lead'" -- the common way of naming a place in an input.
std::string describe(const InputLocation& where);

}  // namespace sillstone
