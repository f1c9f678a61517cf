// A full randomness run on one group: 10,000 points in 1 km2, 999 CSR simulations,
// quadrat + Clark-Evans + all summary functions with envelopes and global tests.

#include <benchmark/benchmark.h>

#include "stipple/randomness/analysis.hpp"
#include "stipple/simulate/point_process.hpp"

namespace {

void FullRandomnessRun(benchmark::State& state) {
  const auto n = static_cast<std::size_t>(state.range(0));
  const stipple::Window window = stipple::Window::rectangle(0, 0, 1000, 1000);
  stipple::Engine engine(stipple::derive_seed(1, "bench/full"));
  const auto points = stipple::simulate_binomial(window, n, engine);
  stipple::RandomnessOptions options;
  options.simulations = static_cast<std::size_t>(state.range(1));
  for (auto _ : state) {
    benchmark::DoNotOptimize(stipple::analyse_pattern(points, window, options, "bench"));
  }
  state.SetComplexityN(state.range(0));
}
BENCHMARK(FullRandomnessRun)->Args({1'000, 999})->Args({10'000, 999})->Unit(benchmark::kSecond)->Iterations(1);

void RandomLabellingRun(benchmark::State& state) {
  const auto n = static_cast<std::size_t>(state.range(0));
  const stipple::Window window = stipple::Window::rectangle(0, 0, 1000, 1000);
  stipple::Engine engine(stipple::derive_seed(1, "bench/labelling"));
  const auto a = stipple::simulate_binomial(window, n / 2, engine);
  const auto b = stipple::simulate_binomial(window, n / 2, engine);
  stipple::RandomnessOptions options;
  for (auto _ : state) benchmark::DoNotOptimize(stipple::random_labelling_test(a, b, window, options, "bench"));
}
BENCHMARK(RandomLabellingRun)->Arg(10'000)->Unit(benchmark::kSecond)->Iterations(1);

}  // namespace
