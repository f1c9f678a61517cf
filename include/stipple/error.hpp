#pragma once
/// Error hierarchy shared by every module. Only the command-line front end catches.

#include <stdexcept>
#include <string>

namespace stipple {

/// Root of every error stipple throws on purpose.
class Error : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

/// Something the user can fix: a file, layer, field, feature, value or option.
/// The message names the offending item, e.g.
/// `plots.gpkg: layer 'plots': feature 17: polygon is self-intersecting`.
class InputError : public Error {
 public:
  using Error::Error;
};

/// The data are valid but the analysis cannot be carried out (too few points, ...).
class AnalysisError : public Error {
 public:
  using Error::Error;
};

/// Exit codes of the command-line tool, in one place.
enum class ExitCode : int {
  ok = 0,
  some_inputs_failed = 1,
  bad_input = 2,
  internal_error = 70,
  output_error = 74,  ///< standard output could not be written (BSD sysexits EX_IOERR)
};

}  // namespace stipple
