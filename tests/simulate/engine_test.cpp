// Seed derivation: fixed reference values and collision-free keys.

#include <gtest/gtest.h>

#include <set>
#include <string>

#include "stipple/simulate/engine.hpp"

namespace stipple {
namespace {

TEST(SeedKey, DifferentPartsNeverGiveTheSameKey) {
  // Plot "a/b" with species "c" and plot "a" with species "b/c" joined with '/' would be
  // the same task; with length-prefixed parts they are not.
  EXPECT_EQ(seed_key({"a/b", "c"}), "3:a/b1:c");
  EXPECT_EQ(seed_key({"a", "b/c"}), "1:a3:b/c");
  EXPECT_NE(seed_key({"a/b", "c"}), seed_key({"a", "b/c"}));
  EXPECT_NE(seed_key({"ab", ""}), seed_key({"a", "b"}));
  EXPECT_NE(seed_key({"1:a"}), seed_key({"1", "a"}));
  EXPECT_EQ(seed_key({}), "");
  // Keys joined end to end (a group's key and a simulation's) stay distinct.
  std::set<std::string> keys;
  for (const char* plot : {"a", "a/b", "b"})
    for (const char* species : {"c", "b/c", ""})
      for (int s = 0; s < 3; ++s)
        EXPECT_TRUE(keys.insert(seed_key({plot, species}) + seed_key({"sim", std::to_string(s)})).second);
}

TEST(DeriveSeed, MatchesReferenceValuesOfTheStatedAlgorithm) {
  // splitmix64(splitmix64(seed) xor fnv1a64(key)); references from an independent Python
  // implementation of SplitMix64 (Steele, Lea & Flood 2014) and FNV-1a 64-bit (Fowler,
  // Noll & Vo; offset basis 0xcbf29ce484222325, prime 0x100000001b3), whose own known
  // values it reproduces: splitmix64(0) = 0xe220a8397b1dcdaf, fnv1a64("a") =
  // 0xaf63dc4c8601ec8c (both from memory).
  EXPECT_EQ(derive_seed(42, seed_key({"composition"})), 10101987934022762345ULL);
  EXPECT_EQ(derive_seed(42, seed_key({"group", "north", "species", "birch"})), 8962252726954945635ULL);
  EXPECT_EQ(derive_seed(7, seed_key({"transect-bootstrap", "12"})), 12855506491194314736ULL);
  EXPECT_EQ(derive_seed(0, ""), 6566800829925814604ULL);
}

TEST(DeriveSeed, DependsOnSeedAndKey) {
  EXPECT_NE(derive_seed(42, "x"), derive_seed(43, "x"));
  EXPECT_NE(derive_seed(42, "x"), derive_seed(42, "y"));
  EXPECT_EQ(derive_seed(42, "x"), derive_seed(42, "x"));
}

}  // namespace
}  // namespace stipple
