// Fuzz target: a batch run file (TOML) through `stipple batch --run-file`, exactly as the
// command line reads it. The inputs folder does not exist, so a run file that parses ends in
// that refusal; every other answer must be an InputError or a parse error, never a crash.

#include <cstdint>
#include <string>

#include <CLI/CLI.hpp>

#include "cli/commands.hpp"
#include "fuzz_support.hpp"
#include "stipple/error.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const stipple::fuzz::BytesFile file(data, size, ".toml");
  CLI::App app;
  const stipple::cli::Action batch = stipple::cli::add_batch_command(app);
  try {
    app.parse("batch /nonexistent-stipple-fuzz/inputs --out /nonexistent-stipple-fuzz/out --quiet --run-file " +
              file.path());
    (void)batch();
  } catch (const stipple::InputError&) {
  } catch (const stipple::AnalysisError&) {
  } catch (const CLI::ParseError&) {
  }
  return 0;
}
