#pragma once
/// How stipple uses GDAL inside a host program.
///
/// Nothing to call first: every function of the io module registers GDAL's drivers on its
/// first use (GDALAllRegister, once per process) and, while it runs, sends GDAL's messages
/// on its own thread to a quiet handler (CPLPushErrorHandler, popped on return), because
/// stipple reports each failure itself, naming the file, layer and feature. A host
/// program's own GDAL error handler, and GDAL's state on its other threads, stay as they
/// were.

namespace stipple {

/// Registers GDAL's drivers now rather than on first use (optional; idempotent and
/// thread-safe). Changes no error handler.
void register_gdal_drivers();

}  // namespace stipple
