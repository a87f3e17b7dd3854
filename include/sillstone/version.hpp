// sillstone/version.hpp -- the library's version string.
#pragma once

#include <string>

namespace sillstone {

/// The version of the library, e.g. "0.1.0". Written into every output's metadata.
std::string version();

}  // namespace sillstone
