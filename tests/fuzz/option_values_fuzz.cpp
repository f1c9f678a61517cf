// Fuzz target: every option-value parser stipple owns. Each must return a value in its
// stated range or throw InputError; nothing else may escape and nothing may crash.

#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <string>

#include "stipple/batch/batch.hpp"
#include "stipple/error.hpp"
#include "stipple/format.hpp"
#include "stipple/intensity/poisson.hpp"
#include "stipple/randomness/clark_evans.hpp"
#include "stipple/randomness/quadrat.hpp"
#include "stipple/transect/estimate.hpp"

namespace {

template <class Parse>
void expect_value_or_input_error(Parse&& parse) {
  try {
    parse();
  } catch (const stipple::InputError&) {
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  using namespace stipple;
  expect_value_or_input_error([&] {
    const auto [nx, ny] = parse_quadrat_grid(text);
    if (nx < 1 || ny < 1 || nx * ny < 2 || nx * ny > 10000) std::abort();
  });
  expect_value_or_input_error([&] {
    const auto [k, n] = parse_shard(text);
    if (k < 1 || k > n) std::abort();
  });
  expect_value_or_input_error([&] {
    const Truncation t = parse_truncation(text);
    if (t.distance_m && !(*t.distance_m > 0.0)) std::abort();
    if (t.largest_share && !(*t.largest_share >= 0.0 && *t.largest_share < 1.0)) std::abort();
  });
  expect_value_or_input_error([&] {
    const auto edges = parse_bin_edges(text);
    if (!edges.empty() && edges.size() < 2) std::abort();
    for (std::size_t i = 0; i < edges.size(); ++i)
      if (!std::isfinite(edges[i]) || edges[i] < 0.0 || (i > 0 && !(edges[i] > edges[i - 1]))) std::abort();
  });
  expect_value_or_input_error([&] { (void)parse_area_unit(text); });
  expect_value_or_input_error([&] { (void)parse_edge_correction(text); });
  if (const auto whole = parse_whole_number(text)) {
    if (text.empty() || text.find_first_not_of("0123456789") != std::string::npos) std::abort();
    (void)whole;
  }
  if (const auto number = parse_finite_number(text)) {
    if (!std::isfinite(*number)) std::abort();
  }
  (void)repair_utf8(text);
  (void)file_name_safe(text);
  return 0;
}
