#pragma once
/// Stopping a long computation from outside: the caller owns a flag (set, say, by a signal
/// handler) and passes a token to it in the options; the library polls the token between
/// units of work (simulations, bootstrap replicates, blocks of features read, input files)
/// and throws Cancelled, so outputs in progress are discarded as on any error.

#include <atomic>

#include "stipple/error.hpp"

namespace stipple {

/// Thrown when the caller's cancellation flag is set.
class Cancelled : public Error {
 public:
  Cancelled() : Error("cancelled") {}
};

/// A view of the caller's flag; a default token is never cancelled. The flag must outlive
/// every computation given the token.
class CancelToken {
 public:
  CancelToken() = default;
  explicit CancelToken(const std::atomic<bool>& flag) : flag_(&flag) {}
  [[nodiscard]] bool requested() const noexcept { return flag_ != nullptr && flag_->load(std::memory_order_relaxed); }
  /// Throws Cancelled when requested().
  void check() const {
    if (requested()) throw Cancelled();
  }

 private:
  const std::atomic<bool>* flag_ = nullptr;
};

}  // namespace stipple
