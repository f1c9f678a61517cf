#include "stipple/io/gdal_session.hpp"

#include <mutex>

#include <cpl_error.h>
#include <gdal.h>

#include "detail/gdal_util.hpp"

namespace stipple {

void register_gdal_drivers() {
  static std::once_flag once;
  std::call_once(once, [] { GDALAllRegister(); });
}

namespace io_detail {

GdalScope::GdalScope() {
  register_gdal_drivers();
  CPLPushErrorHandler(CPLQuietErrorHandler);
}

GdalScope::~GdalScope() {
  CPLPopErrorHandler();
}

}  // namespace io_detail

}  // namespace stipple
