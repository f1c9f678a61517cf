// Nearest-neighbour distances for n = 1e4 .. 1e6 uniform points: stipple's grid index
// against a Boost.Geometry rtree (the alternative the design considered).

#include <benchmark/benchmark.h>

#include <boost/geometry.hpp>
#include <boost/geometry/index/rtree.hpp>

#include "stipple/geometry/spatial_index.hpp"
#include "stipple/simulate/point_process.hpp"

namespace {

std::vector<stipple::Point> uniform_points(std::size_t n) {
  stipple::Engine engine(stipple::derive_seed(1, "bench/nn"));
  const double side = std::sqrt(static_cast<double>(n)) * 10.0;  // 10 m mean spacing
  return stipple::simulate_binomial(stipple::Window::rectangle(0, 0, side, side), n, engine);
}

void NearestNeighbourGrid(benchmark::State& state) {
  const auto points = uniform_points(static_cast<std::size_t>(state.range(0)));
  for (auto _ : state) {
    const stipple::PointGrid grid(points);  // building the index is part of the cost
    benchmark::DoNotOptimize(grid.nearest_neighbour_distances());
  }
  state.SetItemsProcessed(state.iterations() * state.range(0));
  state.SetComplexityN(state.range(0));
}
BENCHMARK(NearestNeighbourGrid)
    ->RangeMultiplier(10)
    ->Range(10'000, 1'000'000)
    ->Unit(benchmark::kMillisecond)
    ->Complexity(benchmark::oN);

void NearestNeighbourRtree(benchmark::State& state) {
  namespace bg = boost::geometry;
  namespace bgi = boost::geometry::index;
  using P = bg::model::d2::point_xy<double>;
  using Value = std::pair<P, std::size_t>;
  const auto points = uniform_points(static_cast<std::size_t>(state.range(0)));
  for (auto _ : state) {
    std::vector<Value> values;
    values.reserve(points.size());
    for (std::size_t i = 0; i < points.size(); ++i) values.emplace_back(P(points[i].x, points[i].y), i);
    const bgi::rtree<Value, bgi::quadratic<16>> tree(values.begin(), values.end());
    std::vector<double> d(points.size());
    for (std::size_t i = 0; i < points.size(); ++i) {
      for (auto it = tree.qbegin(bgi::nearest(values[i].first, 2)); it != tree.qend(); ++it)
        if (it->second != i) d[i] = bg::distance(it->first, values[i].first);
    }
    benchmark::DoNotOptimize(d);
  }
  state.SetItemsProcessed(state.iterations() * state.range(0));
}
BENCHMARK(NearestNeighbourRtree)->RangeMultiplier(10)->Range(10'000, 1'000'000)->Unit(benchmark::kMillisecond);

}  // namespace
