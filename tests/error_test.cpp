// The error hierarchy: what a front end can rely on.

#include "stipple/error.hpp"

#include <functional>

#include <gtest/gtest.h>

namespace stipple {
namespace {

TEST(Error, CarriesItsMessageAndTheParametersItNames) {
  const InputError e("species_field 'sp' is not a field; name it with species_field", {"species_field"});
  EXPECT_STREQ(e.what(), "species_field 'sp' is not a field; name it with species_field");
  EXPECT_EQ(e.parameters(), std::vector<std::string>{"species_field"});
  EXPECT_TRUE(AnalysisError("too few points").parameters().empty());
}

TEST(Error, BothKindsAreCaughtAsErrorAndAsStdException) {
  const auto kind = [](const std::function<void()>& f) -> std::string {
    try {
      f();
    } catch (const InputError&) {
      return "input";
    } catch (const AnalysisError&) {
      return "analysis";
    } catch (const Error&) {
      return "error";
    }
    return "none";
  };
  EXPECT_EQ(kind([] { throw InputError("x"); }), "input");
  EXPECT_EQ(kind([] { throw AnalysisError("x"); }), "analysis");
  EXPECT_EQ(kind([] { throw Error("x"); }), "error");
  EXPECT_THROW(throw AnalysisError("x"), std::runtime_error);
  // The exit codes the command line documents (README "Exit codes").
  EXPECT_EQ(static_cast<int>(ExitCode::bad_input), 2);
  EXPECT_EQ(static_cast<int>(ExitCode::some_inputs_failed), 1);
  EXPECT_EQ(static_cast<int>(ExitCode::output_error), 74);
}

}  // namespace
}  // namespace stipple
