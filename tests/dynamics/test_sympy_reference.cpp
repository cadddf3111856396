// The dynamics engine against references that do not share its code or its formulas:
//   1. an independent derivation with SymPy (tests/reference/sympy_chain.py): Lagrange's equations
//      of a 3-link chain on an accelerating base with pivot dampers and Coulomb friction, and the
//      pivot reactions by Newton's law for each sub-chain, at 200 random states;
//   2. hand-derived closed forms for 1 and 2 links (derivations in the comments below).
#include <catch2/catch.hpp>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
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

#include "swaybound/dynamics/chain.hpp"
#include "../support/python_reference.hpp"
#include "../support/componentwise.hpp"
#include "swaybound/model/model.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
using swaybound::testing::check_close;

namespace {

/// Test data for one link and its upper pivot (not a real design).
struct LinkData {
  double m, L, c, I;  ///< [kg], [m], [m], [kg m^2] about the centre of mass
  double C;           ///< linear damper coefficient [N m s/rad]
  double T;           ///< Coulomb friction torque [N m] (0: no friction)
  double wt;          ///< friction transition rate [rad/s]
};

struct ChainData {
  double g, ax, ay;
  std::vector<LinkData> links;
};

/// The spec of `d`: every number written with 17 significant digits, so the engine sees exactly
/// the values passed to the references.
std::string spec_yaml(const ChainData& d) {
  std::ostringstream y;
  y.precision(17);
  y << "swaybound: 1\nname: reference check\ngravity: " << d.g << "\nlinks:\n";
  for (std::size_t i = 0; i < d.links.size(); ++i) {
    const LinkData& l = d.links[i];
    y << "  - {name: l" << i << ", length: " << l.L << ", mass: " << l.m << ", com: " << l.c << ", inertia: " << l.I
      << ", pivot: {damper: {coefficient: " << l.C << " N m s/rad}";
    if (l.T > 0) y << ", friction: {torque: " << l.T << ", transition_rate: " << l.wt << " rad/s}";
    y << "}}\n";
  }
  y << "base: {scenarios: [{name: s, accel: [{for: 1000 s, x: " << d.ax << ", y: " << d.ay << "}]}]}\n";
  y << "cases: {duration: 1 s, initial: [{single: {theta: [0.1 rad]}}]}\n";
  return y.str();
}

/// Angular accelerations (alpha) and pivot reactions (Fx0, Fy0, Fx1, ...) of one state.
struct Result {
  std::vector<double> alpha, reaction;
};

/// The engine at state (theta, omega), t = 0.5 s (inside the only acceleration phase).
Result engine(const Model& model, Workspace& ws, const std::vector<double>& state) {
  const int n = model.n;
  std::vector<double> x(static_cast<std::size_t>(2 * n + 2), 0.0), dxdt(x.size(), 0.0);
  std::copy(state.begin(), state.end(), x.begin());
  evaluate(model, ws, model.scenarios[0].phases[0], x.data(), 0.5, dxdt.data());
  Result r;
  for (int i = 0; i < n; ++i) {
    r.alpha.push_back(dxdt[static_cast<std::size_t>(n + i)]);
    r.reaction.push_back(ws.reaction_x[static_cast<std::size_t>(i)]);
    r.reaction.push_back(ws.reaction_y[static_cast<std::size_t>(i)]);
  }
  return r;
}

/// Runs the SymPy reference (tests/reference/sympy_chain.py) on `states`.
std::vector<Result> sympy_reference(const ChainData& d, const std::vector<std::vector<double>>& states, double& seconds) {
  nlohmann::json in;
  in["g"] = d.g;
  in["ax"] = d.ax;
  in["ay"] = d.ay;
  in["links"] = nlohmann::json::array();
  for (const LinkData& l : d.links)
    in["links"].push_back({{"m", l.m}, {"L", l.L}, {"c", l.c}, {"I", l.I}, {"C", l.C}, {"T", l.T}, {"wt", l.wt}});
  in["states"] = states;
  const nlohmann::json res = swaybound::testing::run_python_reference("sympy_chain.py", in, &seconds);
  REQUIRE(res.at("alpha").size() == states.size());
  REQUIRE(res.at("reaction").size() == states.size());
  std::vector<Result> r(states.size());
  for (std::size_t s = 0; s < states.size(); ++s) {
    r[s].alpha = res["alpha"][s].get<std::vector<double>>();
    r[s].reaction = res["reaction"][s].get<std::vector<double>>();
  }
  return r;
}

std::vector<std::vector<double>> random_states(int n, int count, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> angle(-std::numbers::pi, std::numbers::pi), rate(-3.0, 3.0);
  std::vector<std::vector<double>> states;
  for (int s = 0; s < count; ++s) {
    std::vector<double> x;
    for (int i = 0; i < n; ++i) x.push_back(angle(rng));
    for (int i = 0; i < n; ++i) x.push_back(rate(rng));
    states.push_back(x);
  }
  return states;
}

/// Pivot torque on link i from above: linear damper plus regularised Coulomb friction.
double pivot_torque(const LinkData& l, double w) { return -l.C * w - (l.T > 0 ? l.T * std::tanh(w / l.wt) : 0.0); }

}  // namespace

TEST_CASE("3-link chain dynamics match an independent SymPy derivation", "[dynamics][reference]") {
  const ChainData d{9.81, 0.7, -0.4,
                    {{4.0, 1.3, 0.5, 0.3, 2.5, 0.7, 0.2},
                     {2.5, 0.9, 0.6, 0.12, 1.5, 0.0, 0.01},
                     {6.0, 1.1, 0.8, 0.5, 3.0, 0.0, 0.01}}};
  const Model model = build_model(load_spec_text(spec_yaml(d), "inline.yaml"));
  REQUIRE(model.n == 3);
  Workspace ws(model);

  const auto states = random_states(3, 200, 20240611);
  double seconds = 0;
  // Reference: independent derivation with SymPy, tests/reference/sympy_chain.py.
  const std::vector<Result> ref = sympy_reference(d, states, seconds);
  INFO("sympy_chain.py took " << seconds << " s");
  for (std::size_t s = 0; s < states.size(); ++s) {
    INFO("state " << s);
    const Result got = engine(model, ws, states[s]);
    check_close(got.alpha, ref[s].alpha, 1e-9, "alpha");
    check_close(got.reaction, ref[s].reaction, 1e-9, "reaction");
  }
}

TEST_CASE("1- and 2-link chain dynamics match hand-derived closed forms", "[dynamics][reference]") {
  // Notation: e_i = (sin th_i, -cos th_i) along link i, n_i = de_i/dth_i = (cos th_i, sin th_i);
  // base (top pivot) acceleration a_b = (ax, ay); y_hat = (0, 1).
  const auto states_1 = random_states(1, 50, 7);
  const auto states_2 = random_states(2, 50, 8);

  SECTION("single compound pendulum on an accelerating base") {
    // r = p_b + c e, so in the frame of the pivot (translating with acceleration a_b) the link feels
    // gravity plus the inertial force: F = m ((0, -g) - a_b) at the centre of mass. Moment of
    // momentum about the pivot: (I + m c^2) alpha = c (e x F) + tau, with e x F = e_x F_y - e_y F_x
    // = sin th F_y + cos th F_x, hence
    //   alpha = (-m c (ax cos th + (g + ay) sin th) + tau) / (I + m c^2),
    //   tau = -C w - T tanh(w / w_t).
    // Reaction (force on the link at the pivot): F_0 = m (a_c + g y_hat) with
    //   a_c = a_b + c (alpha n - w^2 e); in the (n, e) basis
    //   F_0 . n = m (ax cos th + (g + ay) sin th) + m c alpha,
    //   F_0 . e = m (ax sin th - (g + ay) cos th) - m c w^2,
    //   F_0 = (F_0 . n) n + (F_0 . e) e.
    const ChainData d{9.81, -1.3, 2.2, {{3.5, 1.7, 1.1, 0.45, 2.0, 0.9, 0.3}}};
    const LinkData& l = d.links[0];
    const Model model = build_model(load_spec_text(spec_yaml(d), "inline.yaml"));
    Workspace ws(model);
    for (std::size_t s = 0; s < states_1.size(); ++s) {
      INFO("state " << s);
      const double th = states_1[s][0], w = states_1[s][1];
      const double sn = std::sin(th), cs = std::cos(th);
      const double tau = pivot_torque(l, w);
      const double alpha = (-l.m * l.c * (d.ax * cs + (d.g + d.ay) * sn) + tau) / (l.I + l.m * l.c * l.c);
      const double fn = l.m * (d.ax * cs + (d.g + d.ay) * sn) + l.m * l.c * alpha;
      const double fe = l.m * (d.ax * sn - (d.g + d.ay) * cs) - l.m * l.c * w * w;
      const std::vector<double> reaction{fn * cs + fe * sn, fn * sn - fe * cs};
      const Result got = engine(model, ws, states_1[s]);
      check_close(got.alpha, {alpha}, 1e-12, "alpha");
      check_close(got.reaction, reaction, 1e-12, "reaction");
    }
  }

  SECTION("double pendulum on an accelerating base") {
    // r_0 = p_b + c_0 e_0, r_1 = p_b + L_0 e_0 + c_1 e_1; v_1 = v_b + L_0 w_0 n_0 + c_1 w_1 n_1, and
    // n_0 . n_1 = cos(th_0 - th_1) =: K, S := sin(th_0 - th_1).
    // T = 1/2 m_0 |v_b + c_0 w_0 n_0|^2 + 1/2 m_1 |v_1|^2 + 1/2 (I_0 w_0^2 + I_1 w_1^2),
    // V = g (m_0 y_0 + m_1 y_1).
    // Lagrange for th_0: the cross term m_1 L_0 c_1 w_0 w_1 K gives
    //   d/dt(m_1 L_0 c_1 w_1 K) - (-m_1 L_0 c_1 w_0 w_1 S) = m_1 L_0 c_1 (alpha_1 K + w_1^2 S);
    // the base terms m v_b . (a w n) give m a (a_b . n) (the v_b parts cancel); gravity gives
    // m g a sin th. With tau_0 on link 0, tau_1 on link 1 and -tau_1 on link 0:
    //   (I_0 + m_0 c_0^2 + m_1 L_0^2) alpha_0 + m_1 L_0 c_1 K alpha_1
    //       = -m_1 L_0 c_1 S w_1^2 - (m_0 c_0 + m_1 L_0)(ax cos th_0 + (g + ay) sin th_0) + tau_0 - tau_1,
    //   m_1 L_0 c_1 K alpha_0 + (I_1 + m_1 c_1^2) alpha_1
    //       = +m_1 L_0 c_1 S w_0^2 - m_1 c_1 (ax cos th_1 + (g + ay) sin th_1) + tau_1,
    // solved by Cramer's rule. Reactions (Newton on the sub-chains):
    //   F_1 = m_1 (a_1 + g y_hat), F_0 = F_1 + m_0 (a_0 + g y_hat),
    //   a_0 = a_b + c_0 (alpha_0 n_0 - w_0^2 e_0),
    //   a_1 = a_b + L_0 (alpha_0 n_0 - w_0^2 e_0) + c_1 (alpha_1 n_1 - w_1^2 e_1).
    const ChainData d{9.81, 0.9, -0.6, {{5.0, 1.2, 0.7, 0.35, 1.8, 0.5, 0.15}, {2.0, 0.8, 0.45, 0.09, 0.6, 0.3, 0.05}}};
    const LinkData &l0 = d.links[0], &l1 = d.links[1];
    const Model model = build_model(load_spec_text(spec_yaml(d), "inline.yaml"));
    Workspace ws(model);
    for (std::size_t s = 0; s < states_2.size(); ++s) {
      INFO("state " << s);
      const double t0 = states_2[s][0], t1 = states_2[s][1], w0 = states_2[s][2], w1 = states_2[s][3];
      const double s0 = std::sin(t0), c0 = std::cos(t0), s1 = std::sin(t1), c1 = std::cos(t1);
      const double K = std::cos(t0 - t1), S = std::sin(t0 - t1);
      const double tau0 = pivot_torque(l0, w0), tau1 = pivot_torque(l1, w1 - w0);
      const double m00 = l0.I + l0.m * l0.c * l0.c + l1.m * l0.L * l0.L;
      const double m01 = l1.m * l0.L * l1.c * K;
      const double m11 = l1.I + l1.m * l1.c * l1.c;
      const double b0 = -l1.m * l0.L * l1.c * S * w1 * w1 - (l0.m * l0.c + l1.m * l0.L) * (d.ax * c0 + (d.g + d.ay) * s0) + tau0 - tau1;
      const double b1 = l1.m * l0.L * l1.c * S * w0 * w0 - l1.m * l1.c * (d.ax * c1 + (d.g + d.ay) * s1) + tau1;
      const double det = m00 * m11 - m01 * m01;
      const double a0 = (b0 * m11 - m01 * b1) / det;
      const double a1 = (m00 * b1 - m01 * b0) / det;
      // (alpha n - w^2 e) per link, x and y.
      const double u0x = a0 * c0 - w0 * w0 * s0, u0y = a0 * s0 + w0 * w0 * c0;
      const double u1x = a1 * c1 - w1 * w1 * s1, u1y = a1 * s1 + w1 * w1 * c1;
      const double acc0x = d.ax + l0.c * u0x, acc0y = d.ay + l0.c * u0y;
      const double acc1x = d.ax + l0.L * u0x + l1.c * u1x, acc1y = d.ay + l0.L * u0y + l1.c * u1y;
      const double f1x = l1.m * acc1x, f1y = l1.m * (acc1y + d.g);
      const double f0x = f1x + l0.m * acc0x, f0y = f1y + l0.m * (acc0y + d.g);
      const Result got = engine(model, ws, states_2[s]);
      check_close(got.alpha, {a0, a1}, 1e-12, "alpha");
      check_close(got.reaction, {f0x, f0y, f1x, f1y}, 1e-12, "reaction");
    }
  }
}
