#include "swaybound/chaos/ftle.hpp"

#include <cmath>
#include <numeric>

namespace swaybound {

double ftle_rate_weight(const Model& model) {
  const double length = std::accumulate(model.length.begin(), model.length.end(), 0.0);
  return std::sqrt(length / model.gravity);
}

FtleResult chain_ftle(const Model& model, Workspace& ws, int scenario, const InitialState& start,
                      const FtleSettings& s) {
  require_built_for(model, ws);
  SWAYBOUND_REQUIRE(scenario >= 0 && scenario < static_cast<int>(model.scenarios.size()),
                    "scenario index {} out of range (model has {})", scenario, model.scenarios.size());
  const auto n = static_cast<std::size_t>(model.n);
  SWAYBOUND_REQUIRE(start.theta.size() <= n && start.omega.size() <= n,
                    "initial state has {} angles and {} rates for {} links", start.theta.size(), start.omega.size(),
                    model.n);
  SWAYBOUND_REQUIRE(model.gravity > 0, "the rate scaling needs gravity > 0, got {}", model.gravity);
  SWAYBOUND_REQUIRE(model.elastic_links.empty(),
                    "the FTLE does not follow an elastic rope's slack/taut switches; the chain has {} elastic rope(s)",
                    model.elastic_links.size());
  SWAYBOUND_REQUIRE(!model.spatial, "the FTLE is not yet computed for a spatial chain");

  std::vector<double> x0(static_cast<std::size_t>(model.state_size()), 0.0);
  std::copy(start.theta.begin(), start.theta.end(), x0.begin());
  std::copy(start.omega.begin(), start.omega.end(), x0.begin() + model.n);

  // Norm: angles [rad] with weight 1, rates [rad/s] with weight T_ref [s], by default
  // sqrt(L_tot / g) (the time scale of the chain's slowest swing, so both terms are comparable).
  const double t_ref = s.rate_weight > 0 ? s.rate_weight : ftle_rate_weight(model);
  SWAYBOUND_REQUIRE(s.direction.empty() || s.direction.size() == 2 * n,
                    "the initial direction has {} components for {} links (give 2 per link: angles, then rates)",
                    s.direction.size(), model.n);
  FtleSettings settings = s;
  settings.measured = 2 * model.n;
  settings.weights.assign(2 * n, 1.0);
  std::fill(settings.weights.begin() + model.n, settings.weights.end(), t_ref);

  const ScenarioModel& sc = model.scenarios[static_cast<std::size_t>(scenario)];
  drive_start(model, sc.phases.front(), x0);
  std::vector<double> breakpoints;
  for (const Phase& p : sc.phases)
    if (std::isfinite(p.t1) && p.t1 > 0 && p.t1 < s.horizon) breakpoints.push_back(p.t1);

  // The right-hand side is all we need: reactions only when it needs them (restored on exit).
  struct Lazy {
    Workspace& ws;
    bool before;
    ~Lazy() { ws.lazy_reactions = before; }
  } lazy{ws, ws.lazy_reactions};
  ws.lazy_reactions = true;
  ws.friction_unconverged = 0;
  ChainSystem system(model, ws, scenario);
  FtleResult r = finite_time_lyapunov(system, std::move(x0), settings, breakpoints, [&](double t_start) {
    system.enter_phase(static_cast<std::size_t>(sc.phase_at(t_start)));
  });
  // The cause, not the symptom: a pin-friction iteration that diverged makes the state non-finite.
  if ((r.status == FtleStatus::ok || r.status == FtleStatus::non_finite) && ws.friction_unconverged > 0) {
    r.reason = r.status == FtleStatus::ok
                   ? fmt::format("pin friction did not converge in {} evaluations", ws.friction_unconverged)
                   : fmt::format("pin friction did not converge in {} evaluations; {}", ws.friction_unconverged,
                                 r.reason);
    r.status = FtleStatus::friction_unconverged;
  }
  return r;
}

}  // namespace swaybound
