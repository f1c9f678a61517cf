#include "stipple/version.hpp"

namespace stipple {

std::string_view version() noexcept {
  return STIPPLE_VERSION;
}

}  // namespace stipple
