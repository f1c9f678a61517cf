// Library errors speak in the library's terms; the command line says its own flags.

#include "cli/error_text.hpp"

#include <gtest/gtest.h>

#include "stipple/error.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/randomness/quadrat.hpp"

namespace stipple {
namespace {

TEST(LibraryErrors, NameTheParameterAndTheValueInTheLibrarysTerms) {
  try {
    static_cast<void>(garwood_interval(3, 1.5));
    FAIL() << "a confidence of 1.5 was accepted";
  } catch (const InputError& e) {
    EXPECT_STREQ(e.what(), "confidence must lie strictly between 0 and 1 (got 1.5)");
    EXPECT_EQ(e.parameters(), std::vector<std::string>{"confidence"});
  }
  try {
    static_cast<void>(parse_quadrat_grid("4by4"));
    FAIL() << "'4by4' was accepted";
  } catch (const InputError& e) {
    EXPECT_EQ(std::string(e.what()).find("--"), std::string::npos) << e.what();
    EXPECT_EQ(e.parameters(), std::vector<std::string>{"quadrats"});
  }
}

TEST(ErrorText, SaysTheFlagOfEachParameterOnce) {
  EXPECT_EQ(cli::error_text(InputError("confidence must lie strictly between 0 and 1 (got 1.5)", {"confidence"})),
            "--confidence must lie strictly between 0 and 1 (got 1.5)");
  // Only the first unquoted mention; quoted text is the user's (a field called 'species_field').
  EXPECT_EQ(cli::error_text(InputError("x.csv: no field 'species_field' (fields: a); name it with species_field",
                                       {"species_field"})),
            "x.csv: no field 'species_field' (fields: a); name it with --species-field");
  // A possessive apostrophe opens no quotation.
  EXPECT_EQ(cli::error_text(InputError("the sightings' field 'Name' holds 'A', 'B': assign by location with "
                                       "assignment location, or name it with sighting_plot_field",
                                       {"assignment", "sighting_plot_field"})),
            "the sightings' field 'Name' holds 'A', 'B': assign by location with --assign location, or name it "
            "with --sightings-plot-field");
  // Dotted parameters and a full stop after a parameter.
  EXPECT_EQ(cli::error_text(InputError("3 layers; name one with plots.layer.", {"plots.layer"})),
            "3 layers; name one with --plots-layer.");
  // A parameter the message does not name, or one without a flag, leaves it as it is.
  EXPECT_EQ(cli::error_text(InputError("no transects", {"unknown_thing", "unit"})), "no transects");
  EXPECT_EQ(cli::flag_of("unknown_thing"), "");
  EXPECT_EQ(cli::flag_of("target_crs"), "--crs");
}

}  // namespace
}  // namespace stipple
