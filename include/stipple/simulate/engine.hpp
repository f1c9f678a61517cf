#pragma once
/// The random engine every stochastic function takes, and per-task seed derivation.

#include <cstdint>
#include <initializer_list>
#include <random>
#include <string>
#include <string_view>

namespace stipple {

/// 64-bit Mersenne Twister: its output sequence is fixed by the C++ standard, so a seed
/// reproduces on every platform. Distributions come from Boost.Random for the same reason.
using Engine = std::mt19937_64;

/// The seed used when the user gives none; echoed in every output.
inline constexpr std::uint64_t default_seed = 42;

/// The key naming a task from its parts (plot id, species, what is simulated, index): each
/// part is written as its length, ':' and its bytes, so two different lists of parts never
/// give the same key (plot "a/b" with species "c" and plot "a" with species "b/c" differ),
/// and keys joined end to end stay distinct.
[[nodiscard]] std::string seed_key(std::initializer_list<std::string_view> parts);

/// A seed for one task (plot, species, simulation block) derived from the user's seed
/// and the task's `seed_key`, so results never depend on thread count or order.
/// FNV-1a (64-bit) over the key, mixed with the seed by SplitMix64 (Steele, Lea & Flood
/// 2014): splitmix64(splitmix64(seed) xor fnv1a(key)).
[[nodiscard]] std::uint64_t derive_seed(std::uint64_t seed, std::string_view key);

}  // namespace stipple
