#include "swaybound/dynamics/equilibrium.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include <Eigen/Dense>
#include <Eigen/Eigenvalues>
#include <fmt/format.h>

namespace swaybound {

namespace {

/// The angular accelerations at `theta` with every rate zero, scaled by the chain's g / length.
class Residual {
 public:
  Residual(const Model& model, Workspace& ws, const Phase& phase)
      : model_(model), ws_(ws), phase_(phase), x_(static_cast<std::size_t>(model.state_size()), 0.0), dxdt_(x_.size()) {
    double total = 0;
    for (double l : model.length) total += l;
    scale_ = model.gravity / total;
  }
  Eigen::VectorXd operator()(const Eigen::VectorXd& theta) {
    std::fill(x_.begin(), x_.end(), 0.0);
    for (int i = 0; i < model_.n; ++i) x_[static_cast<std::size_t>(i)] = theta(i);
    evaluate(model_, ws_, phase_, x_.data(), phase_.t0, dxdt_.data());
    Eigen::VectorXd f(model_.n);
    for (int i = 0; i < model_.n; ++i) f(i) = dxdt_[static_cast<std::size_t>(model_.dof + i)] / scale_;
    return f;
  }
  Eigen::MatrixXd jacobian(const Eigen::VectorXd& theta) {
    const int n = model_.n;
    Eigen::MatrixXd j(n, n);
    constexpr double h = 1e-6;
    for (int k = 0; k < n; ++k) {
      Eigen::VectorXd plus = theta, minus = theta;
      plus(k) += h;
      minus(k) -= h;
      j.col(k) = ((*this)(plus) - (*this)(minus)) / (2 * h);
    }
    return j;
  }

 private:
  const Model& model_;
  Workspace& ws_;
  const Phase& phase_;
  std::vector<double> x_, dxdt_;
  double scale_ = 1;
};

/// Damped Newton from `theta` (updated in place); true when max |f| <= tolerance.
bool newton(Residual& f, Eigen::VectorXd& theta, const EquilibriumOptions& options, EquilibriumResult& out) {
  Eigen::VectorXd r = f(theta);
  for (int it = 0; it < options.max_iterations; ++it) {
    if (!r.allFinite()) {
      out.reason = "the right-hand side is not finite there";
      return false;
    }
    if (r.cwiseAbs().maxCoeff() <= options.tolerance) return true;
    ++out.iterations;
    const Eigen::FullPivLU<Eigen::MatrixXd> lu(f.jacobian(theta));
    if (!lu.isInvertible()) {
      out.reason = "the chain has no stiffness against some motion there (singular Jacobian)";
      return false;
    }
    const Eigen::VectorXd step = lu.solve(-r);
    const double norm = r.cwiseAbs().maxCoeff();
    double lambda = 1;
    Eigen::VectorXd trial = theta + step, rt = f(trial);
    while (!(rt.allFinite() && rt.cwiseAbs().maxCoeff() < (1 - 1e-4 * lambda) * norm) && lambda > 1.0 / 1024) {
      lambda /= 2;
      trial = theta + lambda * step;
      rt = f(trial);
    }
    if (!(rt.allFinite() && rt.cwiseAbs().maxCoeff() < norm)) {
      out.reason = "Newton's steps stopped reducing the residual";
      return false;
    }
    theta = trial;
    r = rt;
  }
  out.reason = fmt::format("no convergence in {} Newton iterations", options.max_iterations);
  return r.allFinite() && r.cwiseAbs().maxCoeff() <= options.tolerance;
}

/// `phase` with its base acceleration and wind speeds scaled to a share `s` of the load (wind speed
/// by sqrt(s), its drag going with the square).
Phase scaled(const Phase& phase, double s) {
  Phase p = phase;
  p.ax *= s;
  p.ay *= s;
  p.jx = 0;
  p.jz = 0;
  p.control.active = false;  // the equilibrium under the reference's acceleration, not the loop's
  for (double& w : p.wind_speed) w *= std::sqrt(s);
  return p;
}

}  // namespace

EquilibriumResult static_equilibrium(const Model& model, Workspace& ws, const Phase& phase,
                                     const EquilibriumOptions& options) {
  SWAYBOUND_REQUIRE(!model.spatial && model.elastic_links.empty(),
                    "static equilibrium: planar chains without elastic ropes only");
  require_built_for(model, ws);
  const int n = model.n;
  EquilibriumResult out;
  Phase steady = scaled(phase, 1.0);  // the jerk of an S-curve does not act at t0
  Eigen::VectorXd theta = Eigen::VectorXd::Constant(n, std::atan2(-steady.ax, model.gravity + steady.ay));
  Residual full(model, ws, steady);
  // A hanging equilibrium: small displacements are pulled back (every eigenvalue of d alpha / d theta
  // has a negative real part; a neutral direction, as of a link whose centre of mass is its pivot,
  // is allowed).
  const auto hanging = [&] {
    const Eigen::EigenSolver<Eigen::MatrixXd> eig(full.jacobian(theta), false);
    for (int k = 0; k < n; ++k)
      if (eig.eigenvalues()(k).real() > 1e-6) return false;
    return true;
  };
  bool ok = newton(full, theta, options, out) && hanging();
  if (!ok) {
    // Continuation: from the hanging rest position, the load in equal steps.
    theta.setZero();
    ok = true;
    for (int k = 1; k <= options.continuation_steps && ok; ++k) {
      const Phase step = scaled(phase, static_cast<double>(k) / options.continuation_steps);
      Residual f(model, ws, step);
      ok = newton(f, theta, options, out);
    }
    if (ok && !hanging()) {
      ok = false;
      out.reason = "the equilibrium found is not a hanging one (a small displacement would grow: an inverted or "
                   "overturned posture)";
    }
  }
  for (int i = 0; i < n; ++i) theta(i) = std::remainder(theta(i), 2 * std::numbers::pi);
  const Eigen::VectorXd r = full(theta);
  out.residual = r.allFinite() ? r.cwiseAbs().maxCoeff() : INFINITY;
  out.theta.assign(theta.data(), theta.data() + n);
  if (!ok) return out;
  out.converged = true;
  out.reason.clear();
  return out;
}

}  // namespace swaybound
