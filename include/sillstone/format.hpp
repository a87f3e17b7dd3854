// sillstone/format.hpp -- the one way numbers become text.
//
// Two spellings, one for files and one for people:
//   format_for_file(0.1 + 0.2)        // "0.30000000000000004": reads back to the same double
//   format_for_people(125.44980254)   // "125.4": 4 significant digits
// Files (CSV cells, SPEC strings) get the shortest decimal text that reads
// back to exactly the same double (std::to_chars), so nothing is lost and no
// noise such as 5712035.8799999999 appears. People (tables on stdout,
// messages, the report) get a fixed number of significant digits, printf's
// %g form (exponent when it is below -4 or at least the digits asked for).
//
// Not-a-number has one spelling for each: an empty cell in files (a CSV cell
// that holds no value, as the layouts of docs/ say; JSON writers write null)
// and "nan" for people (as C's printf, numpy and the messages that quote a
// bad value spell it). Files have no infinity either (an infinite value is
// an empty cell too, and counted by the writer's warnings); people see "inf"
// and "-inf".
//
// Thread safety: both functions are re-entrant (no locale, no shared state).
#pragma once

#include <string>
#include <string_view>

namespace sillstone {

/// How files spell a value that is not a finite number: an empty cell.
inline constexpr std::string_view kMissingInFiles = "";
/// How people read a value that is not a number (NaN): in tables and messages.
inline constexpr std::string_view kMissingForPeople = "nan";

/// The shortest decimal text that std::strtod reads back to exactly `value`
/// ("450", "0.2", "1e-05", "5e-324"); kMissingInFiles for NaN and infinities.
std::string format_for_file(double value);

/// `value` rounded to `significant` significant digits (1..17, clamped), in
/// printf's %g form without trailing zeros ("0.6249", "125.4", "1.235e+06");
/// kMissingForPeople for NaN, "inf" / "-inf" for infinities.
std::string format_for_people(double value, int significant = 4);

}  // namespace sillstone
