#pragma once
/// Error hierarchy shared by every module. Only the command-line front end catches.

#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace stipple {

/// Root of every error stipple throws on purpose. The message speaks in the library's
/// own terms: a parameter is named as the member of the options struct that holds it
/// (`confidence`, `species_field`, `plots.layer` for the layer of the plots source), and
/// `parameters()` lists the ones the message names, so a front end can say them in its
/// own words (the command line says `--confidence`, `--species-field`, `--plots-layer`).
class Error : public std::runtime_error {
 public:
  explicit Error(const std::string& message, std::vector<std::string> parameters = {})
      : std::runtime_error(message), parameters_(std::move(parameters)) {}
  /// The parameters the message names, each as written in the message.
  [[nodiscard]] const std::vector<std::string>& parameters() const noexcept { return parameters_; }

 private:
  std::vector<std::string> parameters_;
};

/// Something the user can fix: a file, layer, field, feature, value or parameter.
/// The message names the offending item, e.g.
/// `plots.gpkg: layer 'plots': feature 17: polygon is self-intersecting`, or
/// `confidence must lie strictly between 0 and 1 (got 1.5)`.
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
  interrupted = 130,  ///< stopped by Ctrl-C or SIGTERM (128 + SIGINT, the shells' convention)
};

}  // namespace stipple
