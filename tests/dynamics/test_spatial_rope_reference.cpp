// Spatial chains with a rope of variable length (elastic under a moving drum, inextensible and
// hoisted, or an elastic sling below a rigid link) against an independent derivation with SymPy
// (tests/reference/sympy_spatial_rope_chain.py: Lagrange's equations with rheonomic constraints in
// two swing angles per link plus the rope length, Greenwood, Principles of Dynamics, 2nd ed.,
// sec. 6.2-6.4; reactions by Newton's second law for each sub-chain; self-checked by
// check_sympy_spatial_rope_chain.py). At 200 random taut states per chain, with pivot dampers,
// Coulomb friction, a wind load and a moving base: e_i'', the rope length's acceleration, the rope
// tension or the drum's axial force, the pivot reactions and the energy to 1e-9 relative, and the
// engine's power bookkeeping against the reference's energy rate.
#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <random>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "../support/componentwise.hpp"
#include "../support/python_reference.hpp"
#include "../support/rope.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::max_abs;
using swaybound::testing::RopeChain;

namespace {

/// Test data (not a design): the chain of RopeChain plus what a spatial chain adds.
struct SpatialRopeChain {
  RopeChain chain;          ///< links, gravity, base acceleration and velocity in x and y
  double az = 0, vz = 0;    ///< base acceleration and velocity across the travel
  int friction_link = -1;   ///< a Coulomb friction torque at this link's upper pivot (-1: none)
  double friction_torque = 0, transition_rate = 0.01;
  int wind_link = -1;       ///< a wind load on this link (-1: none)
  double wind_at = 0, wind_speed = 0, wind_direction = 0, drag_area = 0;
  bool drum = true;         ///< a drum winds link 0
  double drum_s = 0, drum_v = 0, drum_a = 0;  ///< the drum at the instant: hauled in, speed, acceleration

  /// The unstretched (elastic) or prescribed length of rope link k (`order` 0), its rate (1) or its
  /// acceleration (2): ell = L - s / parts under the drum, L elsewhere.
  double rope_length(std::size_t k, int order) const {
    const RopeChain::Link& l = chain.links[k];
    const double wound = drum && k == 0 ? 1.0 / l.parts : 0.0;
    return order == 0 ? l.L - wound * drum_s : order == 1 ? -wound * drum_v : -wound * drum_a;
  }

  Spec spec() const {
    Spec s = chain.spec();
    s.motion = Motion::spatial;
    s.scenarios[0].initial_vz = vz;
    if (!s.scenarios[0].accel.empty()) s.scenarios[0].accel[0].az = az;
    if (friction_link >= 0)
      s.links[static_cast<std::size_t>(friction_link)].pivot.friction = FrictionSpec{friction_torque, 0, 0, transition_rate};
    if (wind_link >= 0) {
      WindSpec w;
      w.link = wind_link;
      w.at = wind_at;
      w.at_given = true;
      w.speed = wind_speed;
      w.direction = wind_direction;
      w.drag_area = drag_area;
      w.drag_coefficient = 1.0;
      w.air_density = 1.25;
      s.wind.push_back(w);
    }
    if (drum) {  // the drum winds link 0 (which makes an inextensible rope's length prescribed)
      HoistSpec hoist;
      hoist.link = 0;
      s.scenarios[0].hoist = hoist;
    }
    return s;
  }
};

struct Reference {
  std::vector<double> accel, tension, drum_force, reaction;
  double energy = 0, energy_rate = 0;
};

/// Random states inside the reference's chart: each e_i within 1.3 rad of the downward vertical,
/// e_i' any tangent vector with components up to 3 /s; an elastic rope stretched by 1e-4 to 5e-3 of
/// its unstretched length with a stretch rate of up to 0.3 m/s about that length's rate.
std::vector<std::vector<double>> random_states(const Model& model, const SpatialRopeChain& d, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> cone(0.0, 1.3), azimuth(-std::numbers::pi, std::numbers::pi), rate(-3.0, 3.0),
      strain(1e-4, 5e-3), strain_rate(-0.3, 0.3);
  const int n = model.n, f = model.dof;
  std::vector<std::vector<double>> states;
  for (int s = 0; s < 200; ++s) {
    std::vector<double> x(static_cast<std::size_t>(2 * f), 0.0);
    for (int i = 0; i < n; ++i) {
      const double a = cone(rng), b = azimuth(rng);
      const double e[3] = {std::sin(a) * std::cos(b), -std::cos(a), std::sin(a) * std::sin(b)};
      double v[3] = {rate(rng), rate(rng), rate(rng)};
      const double along = v[0] * e[0] + v[1] * e[1] + v[2] * e[2];
      for (int c = 0; c < 3; ++c) {
        x[static_cast<std::size_t>(3 * i + c)] = e[c];
        x[static_cast<std::size_t>(f + 3 * i + c)] = v[c] - along * e[c];
      }
    }
    for (const int k : model.elastic_links) {
      const auto c = static_cast<std::size_t>(model.length_coordinate[static_cast<std::size_t>(k)]);
      x[c] = d.rope_length(static_cast<std::size_t>(k), 0) * (1 + strain(rng));
      x[static_cast<std::size_t>(f) + c] = d.rope_length(static_cast<std::size_t>(k), 1) + strain_rate(rng);
    }
    states.push_back(x);
  }
  return states;
}

/// The SymPy reference at `states`; FAILs (not skips) when it cannot run.
std::vector<Reference> sympy_reference(const SpatialRopeChain& d, const std::vector<std::vector<double>>& states) {
  const RopeChain& c = d.chain;
  nlohmann::json in;
  in["g"] = c.g;
  in["a_base"] = {c.ax, c.ay, d.az};
  in["v_base"] = {c.vx, c.vy, d.vz};
  if (d.wind_link >= 0)
    in["wind"] = {{"link", d.wind_link},
                  {"at", d.wind_at},
                  {"drag_factor", 0.5 * 1.25 * 1.0 * d.drag_area},
                  {"velocity",
                   {d.wind_speed * std::cos(d.wind_direction), 0.0, d.wind_speed * std::sin(d.wind_direction)}}};
  in["links"] = nlohmann::json::array();
  for (std::size_t k = 0; k < c.links.size(); ++k) {
    const RopeChain::Link& l = c.links[k];
    nlohmann::json j{{"m", l.m}, {"L", l.L}, {"c", l.c}, {"I", l.I}, {"C", l.C}, {"rope", nullptr}};
    if (static_cast<int>(k) == d.friction_link) {
      j["T"] = d.friction_torque;
      j["wt"] = d.transition_rate;
    }
    if (l.ea > 0)
      j["rope"] = {{"elastic",
                    {{"parts", l.parts}, {"EA", l.ea}, {"c_axial", l.c_axial}, {"ell", d.rope_length(k, 0)},
                     {"ell_dot", d.rope_length(k, 1)}}}};
    else if (l.rope)
      j["rope"] = {{"prescribed",
                    {{"l", d.rope_length(k, 0)}, {"l_dot", d.rope_length(k, 1)}, {"l_ddot", d.rope_length(k, 2)}}}};
    in["links"].push_back(j);
  }
  in["states"] = states;
  double seconds = 0;
  const nlohmann::json res = swaybound::testing::run_python_reference("sympy_spatial_rope_chain.py", in, &seconds);
  INFO("reference run " << seconds << " s");
  REQUIRE(res.at("accel").size() == states.size());
  std::vector<Reference> out(states.size());
  for (std::size_t s = 0; s < states.size(); ++s) {
    out[s].accel = res["accel"][s].get<std::vector<double>>();
    out[s].tension = res["tension"][s].get<std::vector<double>>();
    out[s].drum_force = res["drum_force"][s].get<std::vector<double>>();
    out[s].reaction = res["reaction"][s].get<std::vector<double>>();
    out[s].energy = res["energy"][s].get<double>();
    out[s].energy_rate = res["energy_rate"][s].get<double>();
  }
  return out;
}

/// The largest relative difference of a quantity over the states, |a - b| / max(|b|, scale) per
/// component with scale the largest |b| of the quantity at that state (as check_close; absolute
/// where the reference is all zero, as for a residual already divided by its scale), and where.
struct Worst {
  const char* what;
  double ratio = 0;
  std::size_t state = 0, component = 0;
  double got = 0, want = 0;
  void add(const std::vector<double>& a, const std::vector<double>& b, std::size_t s) {
    REQUIRE(a.size() == b.size());
    const double scale = max_abs(b);
    for (std::size_t i = 0; i < a.size(); ++i) {
      const double floor = std::max(std::fabs(b[i]), scale);
      const double r = std::fabs(a[i] - b[i]) / (floor > 0 ? floor : 1.0);  // all zero: absolute
      if (r > ratio) {
        ratio = r;
        state = s;
        component = i;
        got = a[i];
        want = b[i];
      }
    }
  }
  void check(double tolerance) const {
    INFO(what << ": worst relative difference " << ratio << " at state " << state << " component " << component
              << ": engine " << got << ", reference " << want);
    CHECK(ratio <= tolerance);
  }
};

void compare_with_reference(const SpatialRopeChain& d, std::uint64_t seed) {
  const Model model = build_model(d.spec());
  REQUIRE(model.spatial);
  // The one rope link: elastic (its length a coordinate) or prescribed (by the drum).
  std::size_t rope = 0;
  while (d.chain.links[rope].ea <= 0 && !d.chain.links[rope].rope) ++rope;
  const bool elastic = d.chain.links[rope].ea > 0;
  REQUIRE(model.length_kind[rope] == (elastic ? LengthKind::elastic : LengthKind::prescribed));
  Workspace ws(model);
  Phase phase = model.scenarios[0].phases[0];
  REQUIRE(phase.drum_link == (d.drum ? 0 : -1));
  phase.drum_s0 = d.drum_s;
  phase.drum_v0 = d.drum_v;
  phase.drum_a0 = d.drum_a;
  const auto states = random_states(model, d, seed);
  const std::vector<Reference> ref = sympy_reference(d, states);
  const int f = model.dof;
  Worst accel{"e'' and the rope length's acceleration"}, axial{elastic ? "rope tension" : "drum's axial force"},
      reaction{"pivot reactions"}, energy{"energy"}, balance{"power balance"};
  for (std::size_t s = 0; s < states.size(); ++s) {
    std::vector<double> x = states[s], dxdt(static_cast<std::size_t>(model.state_size()));
    x.resize(dxdt.size(), 0.0);
    evaluate(model, ws, phase, x.data(), phase.t0, dxdt.data());
    finish_reactions(model, ws);
    accel.add(std::vector<double>(dxdt.begin() + f, dxdt.begin() + 2 * f), ref[s].accel, s);
    if (elastic) axial.add(ws.rope_force, ref[s].tension, s);
    else axial.add({ws.drum_force[rope]}, ref[s].drum_force, s);
    std::vector<double> r;
    for (int k = 0; k < model.n; ++k)
      r.insert(r.end(), {ws.reaction_x[static_cast<std::size_t>(k)], ws.reaction_y[static_cast<std::size_t>(k)],
                         ws.reaction_z[static_cast<std::size_t>(k)]});
    reaction.add(r, ref[s].reaction, s);
    energy.add({mechanical_energy(model, ws) - ws.strain_energy}, {ref[s].energy}, s);
    // Power balance: d(E_chain + U)/dt + dissipated - input = 0, dE_chain/dt from the reference, the
    // strain energy's rate dU/dt = k delta delta' + 1/2 k' delta^2 (k' = -k ell'/ell) from its definition.
    double strain_rate = 0, scale = std::fabs(ref[s].energy_rate) + ws.dissipated_power + std::fabs(ws.input_power);
    for (std::size_t k = 0; k < model.elastic_links.size(); ++k) {
      const double stiffness = ws.stiffness[k], delta = ws.stretch[k];
      const double stiffness_rate = -stiffness * ws.unstretched_rate[k] / ws.unstretched[k];
      strain_rate += stiffness * delta * ws.stretch_rate[k] + 0.5 * stiffness_rate * delta * delta;
      scale += std::fabs(stiffness * delta * ws.stretch_rate[k]);
    }
    const double residual = ref[s].energy_rate + strain_rate + ws.dissipated_power - ws.input_power;
    balance.add({residual / scale}, {0.0}, s);
  }
  for (const Worst* w : {&accel, &axial, &reaction, &energy, &balance}) w->check(1e-9);
}

}  // namespace

TEST_CASE("A spatial chain on an elastic rope under a moving drum matches an independent SymPy derivation",
          "[dynamics][spatial][reference][rope]") {
  SpatialRopeChain d;
  d.chain.ax = 0.7;
  d.chain.ay = -0.4;
  d.chain.vx = 0.6;
  d.chain.vy = -0.2;
  d.az = 0.5;
  d.vz = 0.3;
  // A 12 m fall of 4 parts (EA 9e6 N each) with axial damping and a damper at the drum's sheave,
  // over a hook block with a damper and Coulomb friction, in wind blowing across the travel.
  d.chain.links = {{.m = 40, .L = 12, .c = 6, .I = 480, .C = 3e3, .ea = 9e6, .parts = 4, .c_axial = 3e3},
                   {.m = 900, .L = 1.5, .c = 0.9, .I = 120, .C = 2e3}};
  d.friction_link = 1;
  d.friction_torque = 150;
  d.transition_rate = 0.05;
  d.wind_link = 1;
  d.wind_at = 1.0;
  d.wind_speed = 9;
  d.wind_direction = 1.1;
  d.drag_area = 2.5;
  d.drum_s = 0.8;
  d.drum_v = 0.9;
  d.drum_a = 0.3;
  compare_with_reference(d, 20261205);
}

TEST_CASE("A spatial chain on a hoisted inextensible rope matches an independent SymPy derivation, drum force included",
          "[dynamics][spatial][reference][rope]") {
  SpatialRopeChain d;
  d.chain.ax = -0.5;
  d.chain.ay = 0.3;
  d.chain.vx = -1.1;
  d.chain.vy = 0.1;
  d.az = -0.6;
  d.vz = 0.4;
  // A 10 m rope of 2 parts hoisted (drum accelerating), with a damper at its upper pivot and the
  // wind on the rope itself (a point that keeps its fraction of the length), over a hook block.
  d.chain.links = {{.m = 25, .L = 10, .c = 4.5, .I = 200, .C = 800, .parts = 2, .rope = true},
                   {.m = 600, .L = 1.2, .c = 0.7, .I = 60, .C = 1.5e3}};
  d.friction_link = 0;
  d.friction_torque = 60;
  d.transition_rate = 0.02;
  d.wind_link = 0;
  d.wind_at = 6.0;
  d.wind_speed = 12;
  d.wind_direction = -0.7;
  d.drag_area = 1.5;
  d.drum_s = 1.4;
  d.drum_v = 0.7;
  d.drum_a = -0.45;
  compare_with_reference(d, 51205);
}

TEST_CASE("A spatial chain with an elastic sling below a rigid link matches an independent SymPy derivation",
          "[dynamics][spatial][reference][rope]") {
  SpatialRopeChain d;
  d.chain.ax = 0.4;
  d.chain.ay = 0.6;
  d.chain.vx = 0.8;
  d.az = -0.3;
  d.vz = -0.5;
  d.drum = false;
  // A rigid hanger over a 3 m sling of 2 parts, the wind on the sling at a point that keeps its
  // fraction of the length (so its force acts on the sling's length as well as on the angles).
  d.chain.links = {{.m = 150, .L = 1.4, .c = 0.6, .I = 25, .C = 1e3},
                   {.m = 60, .L = 3, .c = 1.6, .I = 45, .C = 400, .ea = 3e6, .parts = 2, .c_axial = 800}};
  d.friction_link = 1;
  d.friction_torque = 40;
  d.transition_rate = 0.1;
  d.wind_link = 1;
  d.wind_at = 2.2;
  d.wind_speed = 15;
  d.wind_direction = 2.4;
  d.drag_area = 1.2;
  compare_with_reference(d, 7205);
}
