#pragma once
// Library errors in the command line's words: the parameters an error names
// (`species_field`, `plots.layer`) become the flags that set them (`--species-field`,
// `--plots-layer`).

#include <string>

#include "stipple/error.hpp"

namespace stipple::cli {

/// The command-line flag of a library parameter; empty when the command line has none.
[[nodiscard]] std::string flag_of(const std::string& parameter);

/// The message of `error` with the first unquoted mention of each parameter it names
/// replaced by its flag.
[[nodiscard]] std::string error_text(const Error& error);

}  // namespace stipple::cli
