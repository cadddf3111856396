// A Workspace belongs to the model it was built for, and the inputs of a phase reach the
// dynamics only as an argument.
#include <catch2/catch.hpp>
#include <string>

#include "../support/close_to.hpp"
#include "../support/pendulum.hpp"
#include "swaybound/chaos/ftle.hpp"

using namespace swaybound;
using namespace swaybound::testing;

namespace {

/// Runs `call` and returns the message of the ArgumentError it throws (empty when none).
template <class Call>
std::string argument_error(Call&& call) {
  try {
    call();
  } catch (const ArgumentError& e) {
    return e.what();
  }
  return {};
}
}  // namespace

TEST_CASE("a workspace used with another model is an argument error that says so", "[dynamics][workspace]") {
  const Model two = model_from_yaml(kBraking);
  const Model three = model_from_yaml(R"(
swaybound: 1
name: three links
links:
  - {name: a, length: 3, mass: 20}
  - {name: b, length: 1, mass: 150}
  - {name: c, length: 2, mass: 900}
cases: {duration: 1 s, initial: [{single: {theta: [0]}}]}
)");
  const Model two_again = model_from_yaml(kBraking);  // same shape, another model
  Workspace ws(two);
  std::vector<double> x(static_cast<std::size_t>(three.state_size()), 0.0), dxdt(x.size());

  const std::string wrong_size =
      argument_error([&] { evaluate(three, ws, three.scenarios[0].phases[0], x.data(), 0.0, dxdt.data()); });
  CHECK_THAT(wrong_size, Catch::Contains("built for another model") && Catch::Contains("2 links") &&
                             Catch::Contains("3 links") && Catch::Contains("one Workspace per model"));
  CHECK_THAT(argument_error([&] { simulate_case(three, ws, 0, {}, settings(1, 1e-8, 1e-10, 0)); }),
             Catch::Contains("built for another model"));
  FtleSettings fs;
  fs.horizon = 1;
  CHECK_THAT(argument_error([&] { chain_ftle(three, ws, 0, {}, fs); }), Catch::Contains("built for another model"));
  CHECK_THAT(argument_error([&] { ChainSystem(two_again, ws, 0); }), Catch::Contains("built for another model"));

  // Its own model, and a copy of it (the same model), are fine.
  const Model copy = two;
  CHECK(argument_error([&] { simulate_case(copy, ws, 0, {}, settings(1, 1e-8, 1e-10, 0)); }).empty());
}

TEST_CASE("the phase passed to evaluate sets the base motion and nothing else does", "[dynamics][workspace]") {
  const Model model = model_from_yaml(kBraking);
  const auto& phases = model.scenarios[0].phases;
  REQUIRE(phases.size() == 2);  // braking for 1.5 s, then coasting at rest
  Workspace ws(model);
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0), braking(x.size()), coasting(x.size());
  // The same state and time under each phase: the base acceleration is that phase's.
  evaluate(model, ws, phases[0], x.data(), 1.0, braking.data());
  CHECK(ws.base_ax == phases[0].ax);
  CHECK_THAT(ws.base_vx, IsCloseTo(1 - 0.6667, 1e-15, 0));
  evaluate(model, ws, phases[1], x.data(), 1.0, coasting.data());
  CHECK(ws.base_ax == 0.0);
  // Hanging straight down at rest: braking sets the chain swinging, coasting leaves it at rest.
  CHECK(braking[2] != 0.0);
  CHECK(coasting[2] == 0.0);
  CHECK(coasting[3] == 0.0);
}
