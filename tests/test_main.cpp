// Test entry point. Switches to a locale with a decimal comma where the machine has one,
// so any formatting or parsing that leaks the locale fails a test (as PROJ's tests do).

#include <clocale>
#include <locale>

#include <gtest/gtest.h>

#include "stipple/io/gdal_session.hpp"

int main(int argc, char** argv) {
  for (const char* name : {"de_DE.UTF-8", "fr_FR.UTF-8", "nl_NL.UTF-8", "C.UTF-8"}) {
    if (std::setlocale(LC_ALL, name) != nullptr) {
      try {
        std::locale::global(std::locale(name));
      } catch (const std::runtime_error&) {
        // The C library knows the locale but the C++ library does not: keep the C one.
      }
      break;
    }
  }
  stipple::register_gdal_drivers();
  ::testing::InitGoogleTest(&argc, argv);
  return RUN_ALL_TESTS();
}
