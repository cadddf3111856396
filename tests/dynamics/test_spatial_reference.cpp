// The spatial engine (chain_spatial.cpp) against an independent derivation with SymPy
// (tests/reference/sympy_spatial_chain.py: Lagrange's equations in two swing angles per link,
// derived and solved without the engine's formulas) at 200 random states per chain, and against
// the planar engine on states in the travel plane.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "../support/componentwise.hpp"
#include "../support/python_reference.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::check_close;

namespace {

/// Test data for one link and its upper pivot (not a real design).
struct LinkData {
  double m, L, c, I;  ///< [kg], [m], [m], [kg m^2] transverse, about the centre of mass
  double C;           ///< isotropic linear damper [N m s/rad]
  double T;           ///< isotropic Coulomb friction torque [N m] (0: none)
  double wt;          ///< friction transition rate [rad/s]
};

struct ChainData {
  double g;
  double a[3];        ///< base acceleration [m/s^2]
  double wind_speed;  ///< 0: no wind
  double wind_direction;  ///< [rad] from +x towards +z
  double wind_at;     ///< on the last link [m]
  std::vector<LinkData> links;
};

/// The spec of `d` (numbers with 17 significant digits, so the engine sees the values the
/// reference sees). The wind's drag factor is 1/2 rho Cd A = 0.5 * 1.25 * 1 * A.
std::string spec_yaml(const ChainData& d, bool spatial) {
  std::ostringstream y;
  y.precision(17);
  y << "swaybound: 1\nname: spatial reference check\n" << (spatial ? "motion: spatial\n" : "") << "gravity: " << d.g
    << "\nlinks:\n";
  for (std::size_t i = 0; i < d.links.size(); ++i) {
    const LinkData& l = d.links[i];
    y << "  - {name: l" << i << ", length: " << l.L << ", mass: " << l.m << ", com: " << l.c << ", inertia: " << l.I
      << ", pivot: {damper: {coefficient: " << l.C << " N m s/rad}";
    if (l.T > 0) y << ", friction: {torque: " << l.T << ", transition_rate: " << l.wt << " rad/s}";
    y << "}}\n";
  }
  if (d.wind_speed > 0)
    y << "wind: {link: l" << d.links.size() - 1 << ", at: " << d.wind_at << ", speed: " << d.wind_speed
      << ", drag_area: 0.8, drag_coefficient: 1, air_density: 1.25"
      << (spatial ? ", direction: " + std::to_string(d.wind_direction) + " rad" : std::string()) << "}\n";
  y << "base: {scenarios: [{name: s, accel: [{for: 1000 s, x: " << d.a[0] << ", y: " << d.a[1];
  if (spatial) y << ", z: " << d.a[2];
  y << "}]}]}\n";
  y << "cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}\n";
  return y.str();
}

struct Result {
  std::vector<double> accel, reaction;  ///< e_i'' and pivot reactions, 3 per link
};

/// The engine at a state (e, e') at t = 0 (base velocity zero, so the wind sees the point's own velocity).
Result engine(const Model& model, Workspace& ws, const std::vector<double>& state) {
  const auto n = static_cast<std::size_t>(model.n);
  std::vector<double> x(static_cast<std::size_t>(model.state_size()), 0.0), dxdt(x.size(), 0.0);
  std::copy(state.begin(), state.end(), x.begin());
  evaluate(model, ws, model.scenarios[0].phases[0], x.data(), 0.0, dxdt.data());
  finish_reactions(model, ws);
  Result r;
  r.accel.assign(dxdt.begin() + static_cast<long>(3 * n), dxdt.begin() + static_cast<long>(6 * n));
  for (std::size_t i = 0; i < n; ++i) {
    r.reaction.push_back(ws.reaction_x[i]);
    r.reaction.push_back(ws.reaction_y[i]);
    r.reaction.push_back(ws.reaction_z[i]);
  }
  return r;
}

/// Random states inside the reference's chart (cone angle < 75 deg): e from two angles, e' any
/// tangent vector with |e'| up to 3 /s.
std::vector<std::vector<double>> random_states(int n, int count, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> cone(0.0, 1.3), azimuth(-M_PI, M_PI), rate(-3.0, 3.0);
  std::vector<std::vector<double>> states;
  for (int s = 0; s < count; ++s) {
    std::vector<double> e, r;
    for (int i = 0; i < n; ++i) {
      const double a = cone(rng), b = azimuth(rng);
      const double ei[3] = {std::sin(a) * std::cos(b), -std::cos(a), std::sin(a) * std::sin(b)};
      double v[3] = {rate(rng), rate(rng), rate(rng)};
      const double along = v[0] * ei[0] + v[1] * ei[1] + v[2] * ei[2];
      for (int c = 0; c < 3; ++c) v[c] -= along * ei[c];
      e.insert(e.end(), ei, ei + 3);
      r.insert(r.end(), v, v + 3);
    }
    e.insert(e.end(), r.begin(), r.end());
    states.push_back(e);
  }
  return states;
}

/// The SymPy reference (tests/reference/sympy_spatial_chain.py) at `states`.
std::vector<Result> sympy_reference(const ChainData& d, const std::vector<std::vector<double>>& states) {
  nlohmann::json in;
  in["g"] = d.g;
  in["a_base"] = {d.a[0], d.a[1], d.a[2]};
  in["links"] = nlohmann::json::array();
  for (const LinkData& l : d.links)
    in["links"].push_back({{"m", l.m}, {"L", l.L}, {"c", l.c}, {"I", l.I}, {"C", l.C}, {"T", l.T}, {"wt", l.wt}});
  in["states"] = states;
  const nlohmann::json res = swaybound::testing::run_python_reference("sympy_spatial_chain.py", in);
  REQUIRE(res.at("accel").size() == states.size());
  std::vector<Result> r(states.size());
  for (std::size_t s = 0; s < states.size(); ++s) {
    r[s].accel = res["accel"][s].get<std::vector<double>>();
    r[s].reaction = res["reaction"][s].get<std::vector<double>>();
  }
  return r;
}

}  // namespace

TEST_CASE("Spatial chains match an independent SymPy derivation", "[dynamics][spatial][reference]") {
  // Dampers and isotropic Coulomb friction at every pivot, a base accelerating in all three axes.
  const std::vector<ChainData> chains = {
      {9.81, {0.7, -0.4, 0.5}, 0, 0, 0, {{4.0, 1.3, 0.5, 0.3, 2.5, 0.7, 0.2}, {6.0, 1.1, 0.8, 0.5, 3.0, 0.4, 0.05}}},
      {9.81,
       {-0.3, 0.2, 0.9},
       0,
       0,
       0,
       {{4.0, 1.3, 0.5, 0.3, 2.5, 0.7, 0.2}, {2.5, 0.9, 0.6, 0.12, 1.5, 0.0, 0.01}, {6.0, 1.1, 0.8, 0.5, 3.0, 0.0, 0.01}}},
  };
  for (std::size_t c = 0; c < chains.size(); ++c) {
    const ChainData& d = chains[c];
    const int n = static_cast<int>(d.links.size());
    const Model model = build_model(load_spec_text(spec_yaml(d, true), "inline.yaml"));
    REQUIRE(model.spatial);
    Workspace ws(model);
    const auto states = random_states(n, 200, 20261205 + c);
    const std::vector<Result> ref = sympy_reference(d, states);
    for (std::size_t s = 0; s < states.size(); ++s) {
      INFO("chain of " << n << " links, state " << s);
      const Result got = engine(model, ws, states[s]);
      check_close(got.accel, ref[s].accel, 1e-9, "e''");
      check_close(got.reaction, ref[s].reaction, 1e-9, "reaction");
    }
  }
}

TEST_CASE("The spatial engine equals the planar engine on states in the travel plane", "[dynamics][spatial]") {
  // With every e_i and e_i' in the x-y plane the spatial equations are the planar ones (the
  // tangent basis t_1 is the planar n_i); a state (theta, omega) maps to e = (sin, -cos, 0),
  // e' = omega (cos, sin, 0), e'' = alpha (cos, sin, 0) - omega^2 e.
  const ChainData d{9.81,
                    {0.6, -0.3, 0.0},
                    7.0,
                    0.0,
                    0.5,
                    {{4.0, 1.3, 0.5, 0.3, 2.5, 0.7, 0.2}, {2.5, 0.9, 0.6, 0.12, 1.5, 0.3, 0.05}, {6.0, 1.1, 0.8, 0.5, 3.0, 0.0, 0.01}}};
  const Model planar = build_model(load_spec_text(spec_yaml(d, false), "planar.yaml"));
  const Model spatial = build_model(load_spec_text(spec_yaml(d, true), "spatial.yaml"));
  Workspace wp(planar), wsp(spatial);
  std::mt19937_64 rng(99);
  std::uniform_real_distribution<double> angle(-M_PI, M_PI), rate(-3.0, 3.0);
  for (int s = 0; s < 200; ++s) {
    INFO("state " << s);
    std::vector<double> xp(static_cast<std::size_t>(planar.state_size()), 0.0), dp(xp.size());
    std::vector<double> xs(static_cast<std::size_t>(spatial.state_size()), 0.0), ds(xs.size());
    for (int i = 0; i < 3; ++i) {
      const double th = angle(rng), w = rate(rng);
      xp[i] = th;
      xp[3 + i] = w;
      xs[3 * i] = std::sin(th);
      xs[3 * i + 1] = -std::cos(th);
      xs[9 + 3 * i] = w * std::cos(th);
      xs[9 + 3 * i + 1] = w * std::sin(th);
    }
    evaluate(planar, wp, planar.scenarios[0].phases[0], xp.data(), 0.0, dp.data());
    finish_reactions(planar, wp);
    evaluate(spatial, wsp, spatial.scenarios[0].phases[0], xs.data(), 0.0, ds.data());
    finish_reactions(spatial, wsp);
    std::vector<double> want, got;
    for (int i = 0; i < 3; ++i) {
      const double th = xp[i], w = xp[3 + i], a = dp[3 + i];
      want.insert(want.end(), {a * std::cos(th) - w * w * std::sin(th), a * std::sin(th) + w * w * std::cos(th), 0.0,
                               wp.reaction_x[i], wp.reaction_y[i], 0.0});
      got.insert(got.end(), {ds[9 + 3 * i], ds[9 + 3 * i + 1], ds[9 + 3 * i + 2], wsp.reaction_x[i], wsp.reaction_y[i],
                             wsp.reaction_z[i]});
    }
    check_close(got, want, 1e-11, "e'' and reactions");
    CHECK(ds[18] == Approx(dp[6]).epsilon(1e-11));  // dissipated power
    CHECK(ds[19] == Approx(dp[7]).epsilon(1e-11).margin(1e-9));  // input power (wind)
  }
}
