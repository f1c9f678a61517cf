// stipple: command-line front end. Parses options, calls the library, maps errors to
// exit codes (0 ok, 1 some batch inputs failed, 2 bad input or usage, 70 internal error,
// 74 standard output could not be written, 130 interrupted).

#include <algorithm>
#include <exception>
#include <iostream>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "commands.hpp"
#include "common_options.hpp"
#include "error_text.hpp"
#include "stipple/cancel.hpp"
#include "stipple/error.hpp"
#include "stipple/io/gdal_session.hpp"
#include "stipple/version.hpp"

namespace {

// "unknown command 'densty' (did you mean 'density'?)", or empty for a known command.
std::string unknown_command(const CLI::App& app, const std::string& word) {
  std::vector<std::string> names;
  for (const CLI::App* command : app.get_subcommands([](const CLI::App*) { return true; })) {
    if (command->get_name() == word) return {};
    names.push_back(command->get_name());
  }
  const std::string best = stipple::cli::nearest_name(word, names, 2);
  return "unknown command '" + word + "'" + (best.empty() ? "" : " (did you mean '" + best + "'?)");
}

// "unknown option '--confidnce' (did you mean '--confidence'?)" for the first argument of
// `argv` that starts with "--" and is no option of the chosen subcommand; empty otherwise.
std::string unknown_option(const CLI::App& app, int argc, char** argv) {
  const CLI::App* command = nullptr;
  for (const CLI::App* sub : app.get_subcommands([](const CLI::App*) { return true; }))
    if (argc > 1 && sub->get_name() == argv[1]) command = sub;
  if (command == nullptr) return {};
  std::vector<std::string> names;
  for (const CLI::Option* option : command->get_options())
    for (const std::string& name : option->get_lnames()) names.push_back("--" + name);
  for (int i = 2; i < argc; ++i) {
    std::string word = argv[i];
    if (word.rfind("--", 0) != 0 || word == "--") continue;
    word = word.substr(0, word.find('='));
    if (std::find(names.begin(), names.end(), word) != names.end()) continue;
    const std::string best = stipple::cli::nearest_name(word, names);
    return "unknown option '" + word + "' for stipple " + command->get_name() +
           (best.empty() ? "" : " (did you mean '" + best + "'?)");
  }
  return {};
}

}  // namespace

int main(int argc, char** argv) {
  using stipple::ExitCode;
  CLI::App app{
      "stipple: densities and spatial-randomness tests for mapped sightings of plants "
      "and animals"};
  app.set_version_flag("--version", std::string("stipple ") + std::string(stipple::version()));
  app.require_subcommand(1);
  std::vector<stipple::cli::Action> actions{
      stipple::cli::add_density_command(app),  stipple::cli::add_randomness_command(app),
      stipple::cli::add_transect_command(app), stipple::cli::add_effort_command(app),
      stipple::cli::add_batch_command(app),    stipple::cli::add_merge_command(app),
      stipple::cli::add_report_command(app),   stipple::cli::add_surface_command(app),
      stipple::cli::add_inspect_command(app),  stipple::cli::add_habitat_command(app)};
  if (argc > 1 && argv[1][0] != '-') {
    if (const std::string problem = unknown_command(app, argv[1]); !problem.empty()) {
      std::cerr << "error: " << problem << " (see stipple --help)\n";
      return static_cast<int>(ExitCode::bad_input);
    }
  }
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    const std::string option = unknown_option(app, argc, argv);
    std::cerr << "error: " << (option.empty() ? std::string(e.what()) : option) << " (see stipple "
              << (argc > 1 ? std::string(argv[1]) + " " : std::string()) << "--help)\n";
    return static_cast<int>(ExitCode::bad_input);
  }
  try {
    stipple::register_gdal_drivers();
    stipple::cli::install_interrupt_handler();
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
  } catch (const stipple::Cancelled&) {
    std::cerr << "stipple: interrupted; no outputs were written (a batch removes the figures and surfaces it "
                 "had written)\n";
    return static_cast<int>(ExitCode::interrupted);
  } catch (const stipple::InputError& e) {
    std::cerr << "error: " << stipple::cli::error_text(e) << "\n";
    return static_cast<int>(ExitCode::bad_input);
  } catch (const stipple::AnalysisError& e) {
    std::cerr << "error: " << stipple::cli::error_text(e) << "\n";
    return static_cast<int>(ExitCode::bad_input);
  } catch (const std::exception& e) {
    std::cerr << "internal error: " << e.what() << "\n";
    return static_cast<int>(ExitCode::internal_error);
  }
}
