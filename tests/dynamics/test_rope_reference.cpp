// Chains with elastic, variable-length rope links against an independent derivation with SymPy
// (tests/reference/sympy_rope_chain.py: Lagrange's equations with rheonomic constraints, Greenwood,
// Principles of Dynamics, 2nd ed., sec. 6.2-6.4; reactions by Newton's second law for each
// sub-chain). At 200 random taut states: the accelerations of every coordinate, the rope tension
// and the pivot reactions to 1e-9 relative, the chain's energy, and the engine's power bookkeeping
// (dissipation, work of the base and the drum) against the reference's energy rate.
#include <catch2/catch.hpp>

#include <chrono>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include <unistd.h>

#include <nlohmann/json.hpp>

#include "../support/componentwise.hpp"
#include "../support/process.hpp"
#include "../support/python_reference.hpp"
#include "../support/rope.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/model/model.hpp"

using namespace swaybound;
using swaybound::testing::RopeChain;
using swaybound::testing::check_close;

namespace {

struct Reference {
  std::vector<double> qdd, tension, reaction;
  double energy = 0, energy_rate = 0;
};


/// Runs the SymPy reference (tests/reference/sympy_rope_chain.py); FAILs (not skips) when it cannot run. `ell`, `ell_rate`: per link (used
/// for elastic links).
std::vector<Reference> sympy_reference(const RopeChain& d, const std::vector<double>& ell,
                                       const std::vector<double>& ell_rate,
                                       const std::vector<std::vector<double>>& states) {
  nlohmann::json in;
  in["g"] = d.g;
  in["ax"] = d.ax;
  in["ay"] = d.ay;
  in["vxb"] = d.vx;
  in["vyb"] = d.vy;
  in["links"] = nlohmann::json::array();
  for (std::size_t k = 0; k < d.links.size(); ++k) {
    const auto& l = d.links[k];
    nlohmann::json j{{"m", l.m}, {"L", l.L}, {"c", l.c}, {"I", l.I}, {"C", l.C}, {"elastic", nullptr}};
    if (l.ea > 0)
      j["elastic"] = {{"phi", l.c / l.L}, {"I0", l.I},       {"parts", l.parts},  {"EA", l.ea},
                      {"c_axial", l.c_axial}, {"ell", ell[k]}, {"ell_dot", ell_rate[k]}};
    in["links"].push_back(j);
  }
  in["states"] = states;
  const nlohmann::json res = swaybound::testing::run_python_reference("sympy_rope_chain.py", in);
  std::vector<Reference> out(states.size());
  for (std::size_t s = 0; s < states.size(); ++s) {
    out[s].qdd = res["qdd"][s].get<std::vector<double>>();
    out[s].tension = res["tension"][s].get<std::vector<double>>();
    out[s].reaction = res["reaction"][s].get<std::vector<double>>();
    out[s].energy = res["energy"][s].get<double>();
    out[s].energy_rate = res["energy_rate"][s].get<double>();
  }
  return out;
}

void compare_with_reference(const RopeChain& d, std::uint64_t seed) {
  const Model model = build_model(d.spec());
  Workspace ws(model);
  // The drum winds rope link 0 at a given instant: hauled in s, speed v (ell = L - s / n, ell' = -v / n).
  Phase phase = model.scenarios[0].phases[0];
  phase.drum_link = 0;
  phase.drum_s0 = 0.8;
  phase.drum_v0 = 0.9;
  phase.drum_a0 = 0.3;
  const int n = model.n, f = model.dof;
  std::vector<double> ell(static_cast<std::size_t>(n)), ell_rate(static_cast<std::size_t>(n));
  for (int k = 0; k < n; ++k) {
    const double parts = d.links[static_cast<std::size_t>(k)].parts;
    ell[static_cast<std::size_t>(k)] = d.links[static_cast<std::size_t>(k)].L - (k == 0 ? phase.drum_s0 / parts : 0.0);
    ell_rate[static_cast<std::size_t>(k)] = k == 0 ? -phase.drum_v0 / parts : 0.0;
  }
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> angle(-std::numbers::pi, std::numbers::pi), rate(-2.0, 2.0),
      strain(1e-4, 5e-3), strain_rate(-0.3, 0.3);
  std::vector<std::vector<double>> states;
  for (int s = 0; s < 200; ++s) {
    std::vector<double> q(static_cast<std::size_t>(2 * f));
    for (int k = 0; k < n; ++k) {
      q[static_cast<std::size_t>(k)] = angle(rng);
      q[static_cast<std::size_t>(f + k)] = rate(rng);
    }
    for (int k : model.elastic_links) {
      const auto c = static_cast<std::size_t>(model.length_coordinate[static_cast<std::size_t>(k)]);
      q[c] = ell[static_cast<std::size_t>(k)] * (1 + strain(rng));
      q[static_cast<std::size_t>(f) + c] = ell_rate[static_cast<std::size_t>(k)] + strain_rate(rng);
    }
    states.push_back(q);
  }
  const std::vector<Reference> ref = sympy_reference(d, ell, ell_rate, states);
  for (std::size_t s = 0; s < states.size(); ++s) {
    INFO("state " << s);
    std::vector<double> x = states[s], dxdt(static_cast<std::size_t>(model.state_size()));
    x.push_back(0.0);
    x.push_back(0.0);
    evaluate(model, ws, phase, x.data(), phase.t0, dxdt.data());
    finish_reactions(model, ws);
    std::vector<double> qdd(dxdt.begin() + f, dxdt.begin() + 2 * f), reaction;
    for (int k = 0; k < n; ++k) {
      reaction.push_back(ws.reaction_x[static_cast<std::size_t>(k)]);
      reaction.push_back(ws.reaction_y[static_cast<std::size_t>(k)]);
    }
    check_close(qdd, ref[s].qdd, 1e-9, "q''");
    check_close(ws.rope_force, ref[s].tension, 1e-9, "tension");
    check_close(reaction, ref[s].reaction, 1e-9, "reaction");
    const double chain_energy = mechanical_energy(model, ws) - ws.strain_energy;
    CHECK(std::fabs(chain_energy - ref[s].energy) <= 1e-10 * std::max(1.0, std::fabs(ref[s].energy)));
    // Power balance: d(E_chain + U)/dt + dissipated - input = 0, with dE_chain/dt from the reference
    // and dU/dt = k delta delta' + 1/2 k' delta^2, k' = -k ell'/ell, from the definition of U.
    double strain_rate_sum = 0, scale = std::fabs(ref[s].energy_rate) + ws.dissipated_power + std::fabs(ws.input_power);
    for (std::size_t r = 0; r < model.elastic_links.size(); ++r) {
      const double k = ws.stiffness[r], delta = ws.stretch[r], delta_rate = ws.stretch_rate[r];
      const double k_rate = -k * ws.unstretched_rate[r] / ws.unstretched[r];
      strain_rate_sum += k * delta * delta_rate + 0.5 * k_rate * delta * delta;
      scale += std::fabs(k * delta * delta_rate);
    }
    const double balance = ref[s].energy_rate + strain_rate_sum + ws.dissipated_power - ws.input_power;
    INFO("dE/dt " << ref[s].energy_rate << ", dU/dt " << strain_rate_sum << ", dissipated " << ws.dissipated_power
                  << ", input " << ws.input_power);
    CHECK(std::fabs(balance) <= 1e-9 * scale);
  }
}

}  // namespace

TEST_CASE("an elastic rope over a rigid link matches an independent SymPy derivation", "[dynamics][reference][rope]") {
  RopeChain d;
  d.ax = 0.7;
  d.ay = -0.4;
  d.vx = 0.6;
  d.vy = -0.2;
  // Test data, not a design: a 12 m fall of 4 parts (EA 9e6 N each) over a hook block with a damper.
  d.links = {{.m = 40, .L = 12, .c = 6, .I = 480, .C = 0, .ea = 9e6, .parts = 4, .c_axial = 3e3},
             {.m = 900, .L = 1.5, .c = 0.9, .I = 120, .C = 2e3}};
  compare_with_reference(d, 20261205);
}

TEST_CASE("two elastic ropes in a 3-link chain match an independent SymPy derivation", "[dynamics][reference][rope]") {
  RopeChain d;
  d.ax = -0.5;
  d.ay = 0.3;
  d.vx = -1.1;
  // Test data: a single-part rope, a rigid spreader, a sling as a second elastic rope.
  d.links = {{.m = 25, .L = 8, .c = 3.5, .I = 150, .C = 500, .ea = 2e7, .parts = 1, .c_axial = 1e3},
             {.m = 300, .L = 1.2, .c = 0.5, .I = 40, .C = 800},
             {.m = 5, .L = 2.5, .c = 1.25, .I = 3, .C = 0, .ea = 4e6, .parts = 2, .c_axial = 500}};
  compare_with_reference(d, 51205);
}
