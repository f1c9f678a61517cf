#include "stipple/simulate/engine.hpp"

namespace stipple {

namespace {

std::uint64_t splitmix64(std::uint64_t x) {
  x += 0x9E3779B97F4A7C15ULL;
  x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9ULL;
  x = (x ^ (x >> 27)) * 0x94D049BB133111EBULL;
  return x ^ (x >> 31);
}

}  // namespace

std::string seed_key(std::initializer_list<std::string_view> parts) {
  std::string key;
  for (const std::string_view part : parts) {
    key += std::to_string(part.size());
    key += ':';
    key += part;
  }
  return key;
}

std::uint64_t derive_seed(std::uint64_t seed, std::string_view key) {
  std::uint64_t hash = 0xCBF29CE484222325ULL;  // FNV-1a 64-bit offset basis
  for (const char c : key) {
    hash ^= static_cast<unsigned char>(c);
    hash *= 0x100000001B3ULL;  // FNV prime
  }
  return splitmix64(splitmix64(seed) ^ hash);
}

}  // namespace stipple
