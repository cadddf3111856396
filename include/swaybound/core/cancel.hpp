#pragma once
// Cooperative cancellation: a signal handler (or a test) requests it; long loops poll it and stop
// by throwing Interrupted, which the command line turns into an "interrupted" exit status after
// cleaning up half-written output.
#include <string>

#include "swaybound/core/error.hpp"

namespace swaybound {

class Interrupted : public RunError {
 public:
  explicit Interrupted(int signal_number)
      : RunError(signal_number > 0 ? "interrupted by signal " + std::to_string(signal_number) : "interrupted"),
        signal_(signal_number) {}
  int signal_number() const { return signal_; }

 private:
  int signal_;
};

/// Async-signal-safe: records the request (and the signal number, 0 for none).
void request_cancel(int signal_number) noexcept;
bool cancel_requested() noexcept;
int cancel_signal() noexcept;
void clear_cancel() noexcept;
/// Throws Interrupted when cancellation was requested.
void throw_if_cancelled();
/// Installs handlers for SIGINT and SIGTERM that call request_cancel.
void install_cancel_handlers();

}  // namespace swaybound
