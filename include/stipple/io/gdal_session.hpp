#pragma once
/// GDAL start-up, done once by the program that uses the library.

namespace stipple {

/// Registers GDAL's drivers and routes GDAL's own error printing away from the
/// terminal (stipple reports every failure itself, naming the file and feature).
/// Idempotent and thread-safe; the command-line tool calls it once at start.
void initialise_gdal();

}  // namespace stipple
