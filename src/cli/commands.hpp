#pragma once
// One function per subcommand: registers its options and returns the action to run.

#include <functional>

#include <CLI/CLI.hpp>

namespace stipple::cli {

using Action = std::function<int()>;

/// `stipple density`: per-plot and pooled intensities, detection-corrected.
Action add_density_command(CLI::App& app);
/// `stipple randomness`: CSR tests per plot and species, and between species.
Action add_randomness_command(CLI::App& app);
/// `stipple transect`: distance sampling from line or point transects.
Action add_transect_command(CLI::App& app);
/// `stipple effort`: effort needed for a target CV.
Action add_effort_command(CLI::App& app);
/// `stipple batch`, `stipple merge`, `stipple report`.
Action add_batch_command(CLI::App& app);
Action add_merge_command(CLI::App& app);
Action add_report_command(CLI::App& app);
/// `stipple surface`: kernel intensity surfaces as GeoTIFF.
Action add_surface_command(CLI::App& app);
/// `stipple habitat`: log-linear Poisson intensity on raster covariates.
Action add_habitat_command(CLI::App& app);
/// `stipple inspect`: what a vector source holds.
Action add_inspect_command(CLI::App& app);

}  // namespace stipple::cli
