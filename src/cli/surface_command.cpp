// `stipple surface`: kernel-smoothed intensity surfaces per species as GeoTIFF.

#include <filesystem>
#include <functional>
#include <iostream>
#include <memory>

#include "commands.hpp"
#include "common_options.hpp"
#include "progress.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/intensity/kernel.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/io/gis_writer.hpp"
#include "stipple/io/output.hpp"
#include "stipple/io/reader.hpp"

namespace stipple::cli {

Action add_surface_command(CLI::App& app) {
  struct Options {
    CommonOptions common;
    std::string out;
    double pixel = 0.0;
    double bandwidth = 0.0;
  };
  auto o = std::make_shared<Options>();
  CLI::App* c =
      app.add_subcommand("surface", "Kernel-smoothed intensity surface per species (and all together) as GeoTIFF");
  add_sighting_options(*c, o->common);
  add_window_options(*c, o->common);
  c->add_option("--unit", o->common.unit, "Area unit of the intensity: m2, ha or km2")
      ->check(CLI::IsMember({"m2", "ha", "km2"}))
      ->capture_default_str();
  c->add_option("--out", o->out, "Output folder for <species>.tif")->required();
  c->add_option("--pixel", o->pixel, "Pixel size, metres (default: 1/200 of the plots' extent)")
      ->check(positive_number());
  c->add_option("--bandwidth", o->bandwidth, "Gaussian kernel bandwidth, metres (default: Scott's rule per plot)")
      ->check(positive_number());
  return [c, o] {
    if (!c->parsed()) return -1;
    const LoadedSurvey survey = load_survey(to_read_options(o->common));
    const double per_unit = square_metres_per(parse_area_unit(o->common.unit));
    const Survey& s = survey.survey;
    // Every surface is computed before the folder is made, so a refusal leaves nothing behind.
    std::vector<std::pair<std::string, IntensityRaster>> rasters;
    // Each species' surface and then all together: every sighting is smoothed twice.
    TerminalProgress bar("stipple surface: sightings smoothed");
    const auto draw = bar.callback();
    const std::size_t all_work = 2 * s.sighting_count();
    std::size_t finished = 0;
    for (std::size_t k = 0; k <= s.species().size(); ++k) {
      const std::optional<std::size_t> species = k < s.species().size() ? std::optional<std::size_t>(k) : std::nullopt;
      std::function<void(std::size_t, std::size_t)> progress;
      std::size_t smoothed = 0;  // sightings of this surface
      if (draw)
        progress = [&](std::size_t done, std::size_t total) {
          smoothed = total;
          draw(finished + done, all_work);
        };
      IntensityRaster raster =
          intensity_surface(s, species, per_unit, o->pixel > 0.0 ? std::optional<double>(o->pixel) : std::nullopt,
                            o->bandwidth > 0.0 ? std::optional<double>(o->bandwidth) : std::nullopt, progress);
      finished += smoothed;
      rasters.emplace_back(species ? file_name_safe(s.species()[k]) : "all-species", std::move(raster));
    }
    make_folder(o->out);
    for (const auto& [name, raster] : rasters) {
      const std::string path = (std::filesystem::path(o->out) / (name + ".tif")).string();
      write_geotiff(path, raster, survey.crs.wkt,
                    "intensity per " + o->common.unit +
                        ", Gaussian kernel, Scott bandwidth per plot, local edge correction (Jones 1993)",
                    input_paths(o->common));
      std::cout << path << "\n";
      for (const auto& w : raster.warnings) std::cerr << "warning: " << name << ": " << w << "\n";
    }
    return 0;
  };
}

}  // namespace stipple::cli
