// `stipple inspect`: what a vector source holds.

#include <iostream>
#include <memory>

#include "commands.hpp"
#include "stipple/io/inspect.hpp"
#include "stipple/report/inspect_report.hpp"

namespace stipple::cli {

namespace {

struct InspectCommandOptions {
  std::string source;
  InspectOptions inspect;
  std::string x_field;
  std::string y_field;
  std::string assume_crs;
  std::string encoding;
  bool json = false;
};

}  // namespace

Action add_inspect_command(CLI::App& app) {
  auto o = std::make_shared<InspectCommandOptions>();
  CLI::App* command =
      app.add_subcommand("inspect",
                         "Layers, geometry types, fields, CRS, feature and species counts, plots and their "
                         "areas: run it first on a new file");
  command->add_option("SOURCE", o->source, "Any OGR vector source")->required();
  command->add_option("--species-field", o->inspect.species_field, "Species attribute")->capture_default_str();
  command->add_option("--plot-field", o->inspect.plot_field, "Plot-id attribute")->capture_default_str();
  command->add_option("--x-field", o->x_field, "CSV column of x or longitude");
  command->add_option("--y-field", o->y_field, "CSV column of y or latitude");
  command->add_option("--assume-crs", o->assume_crs, "CRS of layers that carry none");
  command->add_option("--encoding", o->encoding,
                      "Text encoding of the attributes, e.g. LATIN1 (default: UTF-8; invalid bytes shown as U+FFFD)");
  command->add_flag("--json", o->json, "Print JSON instead of a table");
  return [command, o] {
    if (!command->parsed()) return -1;
    InspectOptions options = o->inspect;
    if (!o->x_field.empty()) options.x_field = o->x_field;
    if (!o->y_field.empty()) options.y_field = o->y_field;
    if (!o->assume_crs.empty()) options.assume_crs = o->assume_crs;
    if (!o->encoding.empty()) options.encoding = o->encoding;
    const SourceSummary summary = inspect_source(o->source, options);
    std::cout << (o->json ? inspect_json(summary) : inspect_table(summary));
    return 0;
  };
}

}  // namespace stipple::cli
