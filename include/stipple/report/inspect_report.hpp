#pragma once
/// What `stipple inspect` prints.

#include <string>

#include "stipple/io/inspect.hpp"

namespace stipple {

/// A readable summary of a vector source, areas in `ha`.
[[nodiscard]] std::string inspect_table(const SourceSummary& source);
/// The same as JSON.
[[nodiscard]] std::string inspect_json(const SourceSummary& source);

}  // namespace stipple
