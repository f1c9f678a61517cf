#pragma once
/// The random engine every stochastic function takes, and per-task seed derivation.

#include <cstdint>
#include <random>
#include <string_view>

namespace stipple {

/// 64-bit Mersenne Twister: its output sequence is fixed by the C++ standard, so a seed
/// reproduces on every platform. Distributions come from Boost.Random for the same reason.
using Engine = std::mt19937_64;

/// The seed used when the user gives none; echoed in every output.
inline constexpr std::uint64_t default_seed = 42;

/// A seed for one task (plot, species, simulation block) derived from the user's seed
/// and a key naming the task, so results never depend on thread count or order.
/// FNV-1a over the key, mixed with the seed by SplitMix64 (Steele, Lea & Flood 2014).
[[nodiscard]] std::uint64_t derive_seed(std::uint64_t seed, std::string_view key);

}  // namespace stipple
