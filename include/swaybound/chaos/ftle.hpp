#pragma once
// Largest finite-time Lyapunov exponent (FTLE) by Benettin's method with one nearby trajectory
// (G. Benettin, L. Galgani, A. Giorgilli, J.-M. Strelcyn, "Lyapunov characteristic exponents for
// smooth dynamical systems and for Hamiltonian systems", Meccanica 15 (1980) 9-20 and 21-30).
//
// Method. The reference state x and a perturbed copy x' = x + d0 u (u a fixed unit direction) are
// integrated together as ONE augmented system of size 2m with an adaptive Dormand-Prince 5(4)
// stepper (Odeint controlled runge_kutta_dopri5), so both halves take exactly the same steps and
// their truncation errors are strongly correlated. At the end of every interval (every
// `renormalise` seconds, and at every breakpoint) the separation
//     d = sqrt( sum_{k < measured} w_k^2 (x'_k - x_k)^2 )
// is measured, ln(d / d0) is accumulated, and the whole difference vector x' - x (all components,
// measured or not) is scaled by d0 / d, i.e. the copy is put back at distance d0 along the current
// separation direction. Over the horizon T the estimate is
//     lambda = (1 / T) sum_intervals ln(d / d0)          [1/s].
// With d0 small (default 1e-8) and renormalisation frequent enough that d stays far below the
// size of the attractor (default every 0.5 s), the separation evolves by the linearised flow, so
// lambda is the finite-time estimate of the largest Lyapunov exponent. Precision: d is formed as
// the difference of two states, so each measurement resolves it to about eps |x| / d0 relative
// (~2e-8 for |x| ~ 1 and d0 = 1e-8); this is why d0 is not taken smaller. For a regular
// (quasi-periodic) motion separations grow only linearly and the estimate decays like ln(T)/T;
// for a chaotic one it converges to a positive value.
//
// The stepper is restarted (its first-same-as-last derivative dropped) at every renormalisation
// and at every breakpoint: renormalisation changes the state discontinuously, and a breakpoint
// marks a jump of the right-hand side (e.g. a phase boundary of the base motion). Before
// integrating an interval starting at t_start, `on_interval(t_start)` is called (if given), so a
// wrapper can select the piece of a piecewise-defined right-hand side. Time starts at 0.
//
// Dissipation is part of the flow: nothing is subtracted. A damped regular motion therefore gives
// a NEGATIVE exponent (a damped linear oscillator gives -zeta omega_n), and any limit check
// compares the exponent as computed.
#include <algorithm>
#include <cmath>
#include <cstddef>
#include <functional>
#include <limits>
#include <string>
#include <vector>

#include <boost/numeric/odeint.hpp>
#include <fmt/format.h>

#include "swaybound/core/cancel.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/dynamics/chain.hpp"
#include "swaybound/integrate/run.hpp"
#include "swaybound/model/model.hpp"

namespace swaybound {

struct FtleSettings {
  double horizon = 0;          ///< integration time T [s] (> 0)
  double separation = 1e-8;    ///< initial and renormalised separation d0, in the weighted norm
  double renormalise = 0.5;    ///< renormalisation interval [s]
  double rtol = 1e-10, atol = 1e-12;  ///< Odeint error tolerances of the augmented system
  int measured = -1;           ///< leading state components in the norm; -1 = all
  std::vector<double> weights; ///< w_k (> 0) per measured component; empty = all 1
  /// Initial direction u per measured component (normalised here in the weighted norm); empty =
  /// equal weighted components, u_k = 1 / (w_k sqrt(measured)).
  std::vector<double> direction;
  /// chain_ftle only: weight T of the rates in the norm [s]; 0 = sqrt(total length / g).
  double rate_weight = 0;
  long max_steps = 5'000'000;  ///< accepted-step budget
  double min_step = 0;         ///< smallest accepted step [s] (a step closing an interval is exempt)
  double max_seconds = std::numeric_limits<double>::infinity();  ///< wall-clock budget [s]
  double initial_step = 1e-3;  ///< first trial step [s]
};

/// How an FTLE run ended: ok, or the cause of its failure, named as for a case run (a FTLE run
/// fails for the same reasons: non-finite state, step collapse, step or time budget, pin friction
/// that did not converge).
using FtleStatus = RunStatus;

struct FtleSample {
  double t = 0;           ///< end of an interval [s]
  double log_growth = 0;  ///< cumulative sum of ln(d / d0) up to t [-]
};

struct FtleResult {
  FtleStatus status = FtleStatus::ok;  ///< ok, or the cause of the failure
  std::string reason;              ///< empty when ok
  double exponent = 0;             ///< lambda = log_growth / t_reached [1/s] (horizon when ok)
  double log_growth = 0;           ///< sum of ln(d / d0) [-]
  double t_reached = 0;            ///< [s]
  std::vector<FtleSample> growth;  ///< per interval, for plots
  long steps = 0, rejected = 0;    ///< accepted and rejected steps of the augmented system
};

namespace detail {

/// The augmented system [x, x'] of size 2m: evaluates `system` on each half in turn through
/// pre-sized buffers (no allocation per evaluation).
template <class System>
struct PairedSystem {
  System* system;
  std::size_t m;
  std::vector<double> x, dxdt;  ///< size m
  void operator()(const std::vector<double>& z, std::vector<double>& dz, double t) {
    const auto half = static_cast<std::ptrdiff_t>(m);
    std::copy(z.begin(), z.begin() + half, x.begin());
    (*system)(x, dxdt, t);
    std::copy(dxdt.begin(), dxdt.end(), dz.begin());
    std::copy(z.begin() + half, z.end(), x.begin());
    (*system)(x, dxdt, t);
    std::copy(dxdt.begin(), dxdt.end(), dz.begin() + half);
  }
};

/// Interval ends: k * renormalise and the breakpoints inside (0, horizon), then the horizon.
inline std::vector<double> ftle_grid(double horizon, double renormalise, const std::vector<double>& breakpoints) {
  std::vector<double> grid;
  for (long k = 1;; ++k) {
    const double t = static_cast<double>(k) * renormalise;
    if (t >= horizon) break;
    grid.push_back(t);
  }
  for (double b : breakpoints)
    if (b > 0 && b < horizon) grid.push_back(b);
  grid.push_back(horizon);
  // Exact duplicates only: an interval shorter than a rounding error is harmless (one tiny step,
  // and the breakpoint itself stays exact for on_interval).
  std::sort(grid.begin(), grid.end());
  grid.erase(std::unique(grid.begin(), grid.end()), grid.end());
  return grid;
}

}  // namespace detail

/// A state space that is a manifold inside the vector of state components (a spatial chain's unit
/// link directions and their rates, |e| = 1 and e . e' = 0). `tangent(x, dx)` projects a separation
/// dx (size m) onto the tangent space at x. The separation is projected before it is measured and
/// rescaled, so a component across the manifold (which the flow neither grows nor damps) does not
/// enter the exponent, and the rescaled copy lies on the reference's level set of the constraints
/// to second order in the separation. The copy is deliberately not pulled back onto the exact
/// manifold: the reference drifts off it by the integration error (1e-8 and more over a long
/// run, far above the separation), and a copy on another level set separates from it spuriously
/// (measured: a regular spatial double pendulum at 60 deg gave 2.3 1/s at t = 100 s instead of
/// 0.03). Empty: plain vector space.
struct FtleManifold {
  std::function<void(const double* x, double* dx)> tangent;
};

/// Largest finite-time Lyapunov exponent of dx/dt = system(x, t) from x0 over [0, s.horizon].
/// `system` is called as system(const std::vector<double>& x, std::vector<double>& dxdt, double t).
/// Bad settings throw ArgumentError; numerical trouble gives the status of its cause (StepGuard:
/// non_finite, step_collapse for a failed step-size adjustment or an exception from Odeint or the
/// system, step_budget, time_budget) with the reason, and the exponent over the time reached.
/// Cancellation (SIGINT/SIGTERM) throws Interrupted.
template <class System>
FtleResult finite_time_lyapunov(System& system, std::vector<double> x0, const FtleSettings& s,
                                const std::vector<double>& breakpoints = {},
                                std::function<void(double t_start)> on_interval = {},
                                const FtleManifold& manifold = {}) {
  namespace odeint = boost::numeric::odeint;
  using State = std::vector<double>;
  const std::size_t m = x0.size();
  const std::size_t measured = s.measured < 0 ? m : static_cast<std::size_t>(s.measured);
  SWAYBOUND_REQUIRE(m > 0, "the state is empty");
  SWAYBOUND_REQUIRE(measured >= 1 && measured <= m, "measured = {} for a state of {} components", s.measured, m);
  SWAYBOUND_REQUIRE(s.horizon > 0 && std::isfinite(s.horizon), "horizon must be > 0, got {}", s.horizon);
  SWAYBOUND_REQUIRE(s.separation > 0 && std::isfinite(s.separation), "separation must be > 0, got {}", s.separation);
  SWAYBOUND_REQUIRE(s.renormalise > 0 && std::isfinite(s.renormalise), "renormalise must be > 0, got {}",
                    s.renormalise);
  SWAYBOUND_REQUIRE(s.rtol > 0 && s.atol > 0, "tolerances must be > 0, got rtol {} atol {}", s.rtol, s.atol);
  SWAYBOUND_REQUIRE(s.weights.empty() || s.weights.size() == measured, "{} weights for {} measured components",
                    s.weights.size(), measured);
  SWAYBOUND_REQUIRE(s.direction.empty() || s.direction.size() == measured, "{} direction components for {} measured",
                    s.direction.size(), measured);
  SWAYBOUND_REQUIRE(std::all_of(x0.begin(), x0.end(), [](double v) { return std::isfinite(v); }),
                    "the initial state is not finite");
  std::vector<double> w(measured, 1.0);
  for (std::size_t k = 0; k < s.weights.size(); ++k) {
    SWAYBOUND_REQUIRE(s.weights[k] > 0 && std::isfinite(s.weights[k]), "weight {} must be > 0, got {}", k,
                      s.weights[k]);
    w[k] = s.weights[k];
  }
  const auto norm = [&](const State& z) {  // weighted separation of the halves of z
    double sum = 0;
    for (std::size_t k = 0; k < measured; ++k) {
      const double e = w[k] * (z[m + k] - z[k]);
      sum += e * e;
    }
    return std::sqrt(sum);
  };

  // Augmented state: reference in [0, m), perturbed copy in [m, 2m).
  State z(2 * m);
  std::copy(x0.begin(), x0.end(), z.begin());
  std::copy(x0.begin(), x0.end(), z.begin() + static_cast<std::ptrdiff_t>(m));
  {
    std::vector<double> u(m, 0.0);
    for (std::size_t k = 0; k < measured; ++k) u[k] = s.direction.empty() ? 1.0 / w[k] : s.direction[k];
    if (manifold.tangent) manifold.tangent(x0.data(), u.data());
    double len = 0;
    for (std::size_t k = 0; k < measured; ++k) len += (w[k] * u[k]) * (w[k] * u[k]);
    len = std::sqrt(len);
    SWAYBOUND_REQUIRE(len > 0 && std::isfinite(len), "the initial direction has no length");
    for (std::size_t k = 0; k < m; ++k) z[m + k] += s.separation * u[k] / len;
  }

  FtleResult r;
  StepGuard guard(s.max_steps, s.min_step, s.max_seconds);
  const std::vector<double> grid = detail::ftle_grid(s.horizon, s.renormalise, breakpoints);
  r.growth.reserve(grid.size());
  detail::PairedSystem<System> paired{&system, m, State(m), State(m)};
  State diff(manifold.tangent ? m : 0);  // the projected separation
  auto stepper = odeint::make_controlled(s.atol, s.rtol, odeint::runge_kutta_dopri5<State>());
  double t = 0, dt = std::min(s.initial_step, grid.front()), sum = 0;
  for (const double t_end : grid) {
    try {
      if (on_interval) on_interval(t);
      stepper.reset();  // drop the first-same-as-last derivative: new interval, maybe new state
      while (t < t_end) {
        const double remaining = t_end - t;
        const bool closing = dt >= remaining;
        double h = closing ? remaining : dt;
        if (stepper.try_step(std::ref(paired), z, t, h) == odeint::fail) {
          if (!guard.reject(t, h)) break;
          dt = h;
          continue;
        }
        const double taken = closing ? remaining : dt;
        if (closing) t = t_end;  // land exactly on the interval end
        // A step shortened to close the interval says little about the next one.
        dt = closing ? std::max(h, dt) : h;
        if (!guard.accept(z, t, taken, closing)) break;
      }
    } catch (const Interrupted&) {
      throw;
    } catch (const std::exception& e) {
      const bool finite = std::all_of(z.begin(), z.end(), [](double v) { return std::isfinite(v); });
      guard.fail(finite ? RunStatus::step_collapse : RunStatus::non_finite,
                 fmt::format("integration failed near t = {:.6g} s ({})", t, e.what()));
    }
    if (!guard.ok()) break;
    t = t_end;
    if (manifold.tangent) {  // only the separation along the manifold counts
      for (std::size_t k = 0; k < m; ++k) diff[k] = z[m + k] - z[k];
      manifold.tangent(z.data(), diff.data());
      for (std::size_t k = 0; k < m; ++k) z[m + k] = z[k] + diff[k];
    }
    const double d = norm(z);
    if (!(d > 0) || !std::isfinite(d)) {
      guard.fail(RunStatus::non_finite, fmt::format("the separation became {} at t = {:.6g} s", d, t));
      break;
    }
    sum += std::log(d / s.separation);
    r.growth.push_back({t, sum});
    const double scale = s.separation / d;
    for (std::size_t k = 0; k < m; ++k) z[m + k] = z[k] + scale * (z[m + k] - z[k]);
  }
  r.status = guard.status();
  r.reason = guard.reason();
  r.steps = guard.steps();
  r.rejected = guard.rejected();
  r.t_reached = r.growth.empty() ? 0.0 : r.growth.back().t;
  r.log_growth = sum;
  r.exponent = r.t_reached > 0 ? sum / r.t_reached : 0.0;
  return r;
}

/// Largest FTLE of a chain case (model, scenario, initial state) over s.horizon.
///
/// The state handed to `finite_time_lyapunov` is the chain state x of chain.hpp (size 2N+2). Only
/// the first 2N components (angles and rates) are measured; the two energy-audit components
/// (dissipated energy, work in) are integrated but not measured (they do not feed back).
/// Scaling of the norm: weight 1 for angles [rad] and T_ref = sqrt(L_tot / g) [s] for rates
/// [rad/s], with L_tot the sum of the link lengths, so rate * T_ref is dimensionless and a rate
/// of 1 / T_ref counts like an angle of 1 rad (the separation d0 = 1e-8 is thus 1e-8 rad-like).
/// s.measured and s.weights are set by this wrapper (the caller's values are ignored); the other
/// settings, including s.direction (2N components), are passed on.
/// A spatial chain's state holds its link directions e_i and their rates e_i' (chain.hpp); its norm
/// measures those (weight 1 and T_ref, a small turn of a link by an angle a moving e_i by a), on the
/// tangent space of |e_i| = 1, e_i . e_i' = 0 (FtleManifold). The default initial direction has
/// equal parts in every tangent component, so swing across the travel is perturbed as much as
/// swing in it; a given s.direction turns each link in the travel plane.
/// Breakpoints are the phase boundaries of the scenario below the horizon; each interval is
/// integrated under the phase that contains its start (the ChainSystem of the case driver). The
/// reference and perturbed halves are evaluated one after the other with the same workspace (it
/// is scratch only). A run in which the pin-friction fixed point did not converge fails with
/// status friction_unconverged, also when the state then became non-finite.
FtleResult chain_ftle(const Model& model, Workspace& ws, int scenario, const InitialState& start,
                      const FtleSettings& s);

/// The default weight of the rates in chain_ftle's norm, sqrt(total length / g) [s].
double ftle_rate_weight(const Model& model);

}  // namespace swaybound
