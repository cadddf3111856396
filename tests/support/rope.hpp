#pragma once
// Chains with elastic rope links built as in-memory specs (test data, not designs).
#include <string>
#include <vector>

#include "swaybound/spec/spec.hpp"

namespace swaybound::testing {

struct RopeChain {
  struct Link {
    double m = 0, L = 0, c = 0, I = 0;  ///< [kg], [m], com from the upper pivot [m], about the com [kg m^2]
    double C = 0;                       ///< linear rotary damper at the upper pivot [N m s/rad]
    double ea = 0;                      ///< EA of one part [N]; > 0 makes the link an elastic rope
    int parts = 1;                      ///< parts of line
    double c_axial = 0;                 ///< axial damping of the fall [N s/m]
    bool rope = false;                  ///< an inextensible rope (when ea = 0)
  };
  double g = 9.81, ax = 0, ay = 0, vx = 0, vy = 0;  ///< gravity, base acceleration and velocity at t = 0
  double accel_for = 1000;                          ///< how long the base acceleration lasts [s]
  std::vector<Link> links;
  double duration = 10, rtol = 1e-10, atol = 1e-12;

  /// The spec of this chain, with one scenario ("s") and a single start at rest.
  Spec spec() const {
    Spec s;
    s.name = "rope test chain";
    s.gravity = g;
    for (std::size_t k = 0; k < links.size(); ++k) {
      const Link& l = links[k];
      LinkSpec link;
      link.name = "l" + std::to_string(k);
      link.length = l.L;
      link.mass = l.m;
      link.com = l.c;
      link.inertia = l.I;
      link.com_given = link.inertia_given = true;
      if (l.C > 0) link.pivot.dampers.push_back(DamperSpec{l.C, 1, 1e300, 1e-3, std::nullopt});
      if (l.ea > 0 || l.rope) {
        link.kind = LinkKind::rope;
        link.parts_of_line = l.parts;
      }
      if (l.ea > 0) {
        RopeElasticSpec e;
        e.ea = l.ea;
        e.damping = l.c_axial;
        link.elastic = e;
      }
      s.links.push_back(link);
    }
    ScenarioSpec scenario;
    scenario.name = "s";
    scenario.initial_vx = vx;
    scenario.initial_vy = vy;
    if (ax != 0 || ay != 0) scenario.accel.push_back(AccelSegment{accel_for, ax, ay});
    s.scenarios.push_back(scenario);
    s.cases.duration = duration;
    InitialSetSpec start;
    start.kind = InitialKind::single;
    s.cases.initial.push_back(start);
    s.solver.rtol = rtol;
    s.solver.atol = atol;
    return s;
  }
};

}  // namespace swaybound::testing
