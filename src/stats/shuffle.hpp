#pragma once
// Random permutation (internal), the same on every platform: Fisher-Yates (Knuth 1997,
// TAOCP vol. 2, algorithm 3.4.2 P) with Boost.Random's uniform integers, whose output for
// a given engine is fixed, unlike std::shuffle's and std::uniform_int_distribution's.

#include <cstddef>
#include <utility>
#include <vector>

#include <boost/random/uniform_int_distribution.hpp>

#include "stipple/simulate/engine.hpp"

namespace stipple {

template <typename T>
void shuffle(std::vector<T>& values, Engine& engine) {
  for (std::size_t i = values.size(); i > 1; --i) {
    boost::random::uniform_int_distribution<std::size_t> pick(0, i - 1);
    std::swap(values[i - 1], values[pick(engine)]);
  }
}

}  // namespace stipple
