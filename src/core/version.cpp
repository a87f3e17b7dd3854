#include "sillstone/version.hpp"

namespace sillstone {

std::string version() { return SILLSTONE_VERSION; }

}  // namespace sillstone
