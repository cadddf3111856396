// The generic ordered runner (cases/runner.hpp): results reach the consumer in index order whatever
// the thread count and the cost of each item, each thread keeps its own state, no item starts more
// than `window` items ahead of the consumer, and a failure, an exception or a cancellation stops
// the run with every thread joined.
#include <catch2/catch.hpp>
#include <atomic>
#include <chrono>
#include <mutex>
#include <set>
#include <stdexcept>
#include <string>
#include <thread>
#include <vector>

#include "swaybound/cases/runner.hpp"
#include "swaybound/core/cancel.hpp"

using namespace swaybound;

namespace {

/// A result that is not a case: a label and a payload whose size depends on the index.
struct Item {
  long index = -1;
  std::string label;
  std::vector<double> payload;
};

/// Uneven cost: every 7th item sleeps 2 ms, every 3rd 200 us, the others not at all.
void uneven_pause(long i) {
  if (i % 7 == 0)
    std::this_thread::sleep_for(std::chrono::milliseconds(2));
  else if (i % 3 == 0)
    std::this_thread::sleep_for(std::chrono::microseconds(200));
}

/// Counts work calls in progress (to show none is left running after the runner returns).
struct ActiveGuard {
  std::atomic<int>& active;
  explicit ActiveGuard(std::atomic<int>& a) : active(a) { ++active; }
  ~ActiveGuard() { --active; }
};

}  // namespace

TEST_CASE("run_ordered consumes results in index order with uneven item costs on several threads",
          "[cases][runner]") {
  for (int jobs : {1, 2, 4}) {
    for (long window : {1L, 3L, 1024L}) {
      std::vector<Item> got;
      RunnerOptions options;
      options.jobs = jobs;
      options.window = window;
      run_ordered<Item>(
          150, options,
          [](long i) {
            uneven_pause(i);
            return Item{i, "item-" + std::to_string(i), std::vector<double>(static_cast<std::size_t>(i % 5), 0.5 * i)};
          },
          [&](Item&& item) { got.push_back(std::move(item)); });
      REQUIRE(got.size() == 150);
      for (long i = 0; i < 150; ++i) {
        const Item& item = got[static_cast<std::size_t>(i)];
        CHECK(item.index == i);
        CHECK(item.label == "item-" + std::to_string(i));
        REQUIRE(item.payload.size() == static_cast<std::size_t>(i % 5));
        for (double v : item.payload) CHECK(v == 0.5 * i);
      }
    }
  }
}

TEST_CASE("run_ordered gives each thread its own state", "[cases][runner]") {
  struct State {
    std::thread::id owner = std::this_thread::get_id();
    long items = 0;
  };
  std::atomic<int> states{0};
  std::atomic<long> foreign{0};
  long total = 0;
  RunnerOptions options;
  options.jobs = 3;
  run_ordered<long>(
      60, options,
      [&] {
        ++states;
        return State{};
      },
      [&](long i, State& state) {
        if (state.owner != std::this_thread::get_id()) ++foreign;
        uneven_pause(i);
        return ++state.items;
      },
      [&](long&& n) { total += n > 0; });
  CHECK(total == 60);
  CHECK(foreign == 0);
  CHECK(states >= 1);
  CHECK(states <= 3);
}

TEST_CASE("run_ordered starts no item more than `window` items ahead of the consumer", "[cases][runner]") {
  for (long window : {1L, 2L, 5L}) {
    std::atomic<long> consumed{0};  // consume calls that have returned
    std::atomic<long> violations{0}, lead{0};
    RunnerOptions options;
    options.jobs = 4;
    options.window = window;
    run_ordered<long>(
        80, options,
        [&](long i) {
          const long ahead = i - consumed.load();
          if (ahead >= window) ++violations;
          long seen = lead.load();
          while (ahead > seen && !lead.compare_exchange_weak(seen, ahead)) {
          }
          return i;
        },
        [&](long&&) {
          // A slow consumer: the workers would run far ahead without the window.
          std::this_thread::sleep_for(std::chrono::microseconds(300));
          ++consumed;
        });
    CHECK(consumed == 80);
    CHECK(violations == 0);
    CHECK(lead <= window - 1);
  }
}

TEST_CASE("an exception in work or in consume propagates after every thread has stopped", "[cases][runner]") {
  std::atomic<int> active{0};
  std::atomic<long> calls{0};
  std::vector<long> order;
  RunnerOptions options;
  options.jobs = 4;
  options.window = 8;
  const auto work = [&](long i) {
    ActiveGuard guard(active);
    ++calls;
    uneven_pause(i);
    if (i == 37) throw std::runtime_error("item 37 failed");
    return i;
  };
  CHECK_THROWS_WITH(run_ordered<long>(200, options, work, [&](long&& i) { order.push_back(i); }), "item 37 failed");
  CHECK(active == 0);
  const long after = calls;
  std::this_thread::sleep_for(std::chrono::milliseconds(20));
  CHECK(calls == after);  // nothing runs on once the runner has returned
  REQUIRE(order.size() <= 37);
  for (std::size_t k = 0; k < order.size(); ++k) CHECK(order[k] == static_cast<long>(k));

  order.clear();
  calls = 0;
  const auto plain = [&](long i) {
    ActiveGuard guard(active);
    ++calls;
    uneven_pause(i);
    return i;
  };
  CHECK_THROWS_WITH(run_ordered<long>(200, options, plain,
                                      [&](long&& i) {
                                        order.push_back(i);
                                        if (i == 5) throw std::logic_error("consumer refused item 5");
                                      }),
                    "consumer refused item 5");
  CHECK(active == 0);
  CHECK(order.size() == 6);
  CHECK(calls <= 6 + options.window);

  // An exception while building a thread's state propagates the same way.
  CHECK_THROWS_WITH(run_ordered<long>(
                        10, options, []() -> int { throw std::runtime_error("no state"); },
                        [](long i, int&) { return i; }, [](long&&) {}),
                    "no state");
}

TEST_CASE("run_ordered stops with Interrupted when cancellation is requested", "[cases][runner]") {
  clear_cancel();
  std::atomic<int> active{0};
  long consumed = 0;
  RunnerOptions options;
  options.jobs = 2;
  options.window = 4;
  CHECK_THROWS_AS(run_ordered<long>(
                      1000, options,
                      [&](long i) {
                        ActiveGuard guard(active);
                        uneven_pause(i);
                        return i;
                      },
                      [&](long&& i) {
                        ++consumed;
                        if (i == 10) request_cancel(0);
                      }),
                  Interrupted);
  clear_cancel();
  CHECK(active == 0);
  CHECK(consumed >= 11);
  CHECK(consumed <= 11 + options.window);
}

TEST_CASE("run_ordered reports progress up to the total and refuses a window below 1", "[cases][runner]") {
  std::vector<Progress> seen;
  RunnerOptions options;
  options.jobs = 2;
  options.progress = [&](const Progress& p) { seen.push_back(p); };
  run_ordered<int>(20, options, [](long i) { return static_cast<int>(i); }, [](int&&) {});
  REQUIRE_FALSE(seen.empty());
  CHECK(seen.back().done == 20);
  CHECK(seen.back().total == 20);
  options.window = 0;
  CHECK_THROWS_AS(run_ordered<int>(20, options, [](long i) { return static_cast<int>(i); }, [](int&&) {}),
                  ArgumentError);
}
