#include "swaybound/chaos/ftle.hpp"

#include <cmath>
#include <numeric>

#include "swaybound/dynamics/posture.hpp"

namespace swaybound {

namespace {

double dot3(const double* a, const double* b) { return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]; }

/// Projects a separation (de_i, de_i') of a spatial chain's state x onto the tangent space of
/// |e_i| = 1, e_i . e_i' = 0: de_i loses its part along e_i, and de_i' the part that breaks the
/// linearised second constraint, e_i . de_i' + de_i . e_i' = 0.
void spatial_tangent(const double* x, double* dx, std::size_t n, std::size_t dof) {
  for (std::size_t i = 0; i < n; ++i) {
    const double* e = x + 3 * i;
    const double* r = x + dof + 3 * i;
    double* de = dx + 3 * i;
    double* dr = dx + dof + 3 * i;
    const double along = dot3(de, e);
    for (int k = 0; k < 3; ++k) de[k] -= along * e[k];
    const double broken = dot3(e, dr) + dot3(de, r);
    for (int k = 0; k < 3; ++k) dr[k] -= broken * e[k];
  }
}

/// The chaos section's direction (theta, then rate, per link) as a separation of a spatial chain's
/// state at x0: link i turned by d theta_i in its vertical plane through the travel (about z) and
/// its rate changed by d omega_i the same way; tangent-projected by the FTLE.
std::vector<double> spatial_ftle_direction(const Model& model, const std::vector<double>& x0,
                                           const std::vector<double>& direction) {
  const auto n = static_cast<std::size_t>(model.n), dof = static_cast<std::size_t>(model.dof);
  std::vector<double> u(2 * dof, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    const double* e = &x0[3 * i];
    // d e / d theta for a turn about +z: (-e_y, e_x, 0) (e = (sin t, -cos t, 0) gives (cos t, sin t, 0)).
    const double turn[3] = {-e[1], e[0], 0.0};
    for (int k = 0; k < 3; ++k) {
      u[3 * i + k] = direction[i] * turn[k];
      u[dof + 3 * i + k] = direction[n + i] * turn[k];
    }
  }
  return u;
}

}  // namespace

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

  std::vector<double> x0(static_cast<std::size_t>(model.state_size()), 0.0);
  write_start(model, start, x0);

  // Norm: angles [rad] with weight 1, rates [rad/s] with weight T_ref [s], by default
  // sqrt(L_tot / g) (the time scale of the chain's slowest swing, so both terms are comparable).
  // A spatial chain measures its link directions e_i and their rates e_i' (a small change of e_i
  // by an angle a has length a, so the weights are the same).
  const double t_ref = s.rate_weight > 0 ? s.rate_weight : ftle_rate_weight(model);
  SWAYBOUND_REQUIRE(s.direction.empty() || s.direction.size() == 2 * n,
                    "the initial direction has {} components for {} links (give 2 per link: angles, then rates)",
                    s.direction.size(), model.n);
  const auto dof = static_cast<std::size_t>(model.dof);
  FtleSettings settings = s;
  settings.measured = static_cast<int>(2 * dof);
  settings.weights.assign(2 * dof, 1.0);
  std::fill(settings.weights.begin() + model.dof, settings.weights.end(), t_ref);
  FtleManifold manifold;
  if (model.spatial) {
    if (!s.direction.empty()) settings.direction = spatial_ftle_direction(model, x0, s.direction);
    manifold.tangent = [dof, n](const double* x, double* dx) { spatial_tangent(x, dx, n, dof); };
  }

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
  FtleResult r = finite_time_lyapunov(
      system, std::move(x0), settings, breakpoints,
      [&](double t_start) { system.enter_phase(static_cast<std::size_t>(sc.phase_at(t_start))); }, manifold);
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
