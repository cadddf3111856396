#include "swaybound/core/cancel.hpp"

#include <atomic>
#include <csignal>

namespace swaybound {

namespace {
std::atomic<int> g_signal{-1};  // -1: no request; 0: requested without a signal; > 0: the signal
static_assert(std::atomic<int>::is_always_lock_free, "the flag must be usable from a signal handler");

extern "C" void on_signal(int signal_number) { request_cancel(signal_number); }
}  // namespace

void request_cancel(int signal_number) noexcept { g_signal.store(signal_number, std::memory_order_relaxed); }
bool cancel_requested() noexcept { return g_signal.load(std::memory_order_relaxed) >= 0; }
int cancel_signal() noexcept { return g_signal.load(std::memory_order_relaxed); }
void clear_cancel() noexcept { g_signal.store(-1, std::memory_order_relaxed); }

void throw_if_cancelled() {
  if (cancel_requested()) throw Interrupted(cancel_signal());
}

void install_cancel_handlers() {
  struct sigaction action {};
  action.sa_handler = on_signal;
  sigemptyset(&action.sa_mask);
  sigaction(SIGINT, &action, nullptr);
  sigaction(SIGTERM, &action, nullptr);
}

}  // namespace swaybound
