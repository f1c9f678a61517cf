// stipple: command-line front end. Parses options, calls the library, maps errors to
// exit codes (0 ok, 1 some batch inputs failed, 2 bad input or usage, 70 internal error,
// 74 standard output could not be written).

#include <exception>
#include <iostream>
#include <vector>

#include <CLI/CLI.hpp>

#include "commands.hpp"
#include "stipple/error.hpp"
#include "stipple/io/gdal_session.hpp"

int main(int argc, char** argv) {
  using stipple::ExitCode;
  CLI::App app{"stipple: densities and spatial-randomness tests for mapped sightings of plants "
               "and animals"};
  app.set_version_flag("--version", std::string("stipple ") + STIPPLE_VERSION);
  app.require_subcommand(1);
  std::vector<stipple::cli::Action> actions{stipple::cli::add_density_command(app),
                                            stipple::cli::add_randomness_command(app),
                                            stipple::cli::add_transect_command(app),
                                            stipple::cli::add_effort_command(app),
                                            stipple::cli::add_batch_command(app),
                                            stipple::cli::add_merge_command(app),
                                            stipple::cli::add_report_command(app),
                                            stipple::cli::add_surface_command(app),
                                            stipple::cli::add_inspect_command(app)};
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::cerr << "error: " << e.what() << " (see stipple --help)\n";
    return static_cast<int>(ExitCode::bad_input);
  }
  try {
    stipple::initialise_gdal();
    for (const auto& action : actions) {
      const int code = action();
      if (code < 0) continue;
      // A full disk or a closed pipe on standard output is an error, never a silent exit 0.
      std::cout.flush();
      if (!std::cout) {
        std::cerr << "error: standard output: write failed (disk full or pipe closed?)\n";
        return static_cast<int>(ExitCode::output_error);
      }
      return code;
    }
    return static_cast<int>(ExitCode::bad_input);
  } catch (const stipple::InputError& e) {
    std::cerr << "error: " << e.what() << "\n";
    return static_cast<int>(ExitCode::bad_input);
  } catch (const stipple::AnalysisError& e) {
    std::cerr << "error: " << e.what() << "\n";
    return static_cast<int>(ExitCode::bad_input);
  } catch (const std::exception& e) {
    std::cerr << "internal error: " << e.what() << "\n";
    return static_cast<int>(ExitCode::internal_error);
  }
}
