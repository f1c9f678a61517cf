// The io module scopes its quiet GDAL error handler to its own calls: a host program's
// handler sees none of stipple's GDAL messages and is in place again afterwards.

#include "stipple/io/gdal_session.hpp"

#include <cpl_error.h>
#include <gtest/gtest.h>

#include <atomic>
#include <string>

#include "stipple/error.hpp"
#include "stipple/io/inspect.hpp"

namespace stipple {
namespace {

std::atomic<int> host_messages{0};

void CPL_STDCALL host_handler(CPLErr, CPLErrorNum, const char*) {
  ++host_messages;
}

TEST(GdalScope, AHostHandlerSeesNoneOfStipplesMessagesAndStaysInPlace) {
  register_gdal_drivers();
  const CPLErrorHandler previous = CPLSetErrorHandler(host_handler);
  host_messages = 0;
  // Files GDAL complains about while stipple reads them ("ERROR 1: ... Unterminated
  // string", "fread failed on DBF file" when ogrinfo reads them).
  for (const char* name : {"truncated.geojson", "truncated-dbf.shp"}) {
    const std::string path = std::string(STIPPLE_TEST_DATA_DIR) + "/bad/" + name;
    try {
      static_cast<void>(inspect_source(path, InspectOptions{}));
    } catch (const InputError&) {
      // refused or read with a warning: either way GDAL spoke
    }
  }
  EXPECT_EQ(host_messages.load(), 0);
  // Afterwards GDAL's messages reach the host's handler again.
  CPLError(CE_Warning, CPLE_AppDefined, "a message of the host program");
  EXPECT_EQ(host_messages.load(), 1);
  CPLSetErrorHandler(previous);
}

}  // namespace
}  // namespace stipple
