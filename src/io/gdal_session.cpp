#include "stipple/io/gdal_session.hpp"

#include <mutex>

#include <cpl_error.h>
#include <gdal.h>
#include <ogr_api.h>

namespace stipple {

void initialise_gdal() {
  static std::once_flag once;
  std::call_once(once, [] {
    GDALAllRegister();
    CPLSetErrorHandler(CPLQuietErrorHandler);
  });
}

}  // namespace stipple
