#pragma once
/// The library's version.

#include <string_view>

namespace stipple {

/// "MAJOR.MINOR.PATCH" of the library as built (the project version in CMakeLists.txt).
[[nodiscard]] std::string_view version() noexcept;

}  // namespace stipple
