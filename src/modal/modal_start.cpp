#include "swaybound/modal/modal_start.hpp"

#include <cmath>
#include <numbers>

#include <Eigen/Dense>

#include "swaybound/core/error.hpp"

namespace swaybound {

namespace {

/// The shapes as columns (links x modes) and the modes' circular frequencies [rad/s].
Eigen::MatrixXd shape_matrix(const ModalResult& modes, Eigen::VectorXd& w) {
  const auto count = static_cast<Eigen::Index>(modes.modes.size());
  SWAYBOUND_REQUIRE(count > 0, "modal start: no modes");
  const auto links = static_cast<Eigen::Index>(modes.modes.front().shape.size());
  Eigen::MatrixXd s(links, count);
  w.resize(count);
  for (Eigen::Index k = 0; k < count; ++k) {
    const Mode& m = modes.modes[static_cast<std::size_t>(k)];
    SWAYBOUND_REQUIRE(static_cast<Eigen::Index>(m.shape.size()) == links && m.stretch_shape.empty(),
                      "modal start: the modes must be those of the link angles alone");
    for (Eigen::Index i = 0; i < links; ++i) s(i, k) = m.shape[static_cast<std::size_t>(i)];
    w(k) = 2 * std::numbers::pi * m.frequency_hz;
  }
  return s;
}

}  // namespace

InitialState modal_start(const ModalResult& modes, const std::vector<double>& amplitude, const std::vector<double>& phase) {
  Eigen::VectorXd w;
  const Eigen::MatrixXd s = shape_matrix(modes, w);
  SWAYBOUND_REQUIRE(amplitude.size() <= static_cast<std::size_t>(s.cols()) && phase.size() <= amplitude.size(),
                    "modal start: {} amplitudes and {} phases for {} modes", amplitude.size(), phase.size(), s.cols());
  Eigen::VectorXd theta = Eigen::VectorXd::Zero(s.rows()), omega = Eigen::VectorXd::Zero(s.rows());
  for (std::size_t k = 0; k < amplitude.size(); ++k) {
    const double a = amplitude[k], p = k < phase.size() ? phase[k] : 0.0;
    const auto col = static_cast<Eigen::Index>(k);
    theta += a * std::cos(p) * s.col(col);
    omega -= a * w(col) * std::sin(p) * s.col(col);
  }
  InitialState out;
  out.theta.assign(theta.data(), theta.data() + theta.size());
  out.omega.assign(omega.data(), omega.data() + omega.size());
  return out;
}

ModalCoordinates modal_coordinates(const ModalResult& modes, const std::vector<double>& theta,
                                   const std::vector<double>& omega) {
  Eigen::VectorXd w;
  const Eigen::MatrixXd s = shape_matrix(modes, w);
  SWAYBOUND_REQUIRE(theta.size() == static_cast<std::size_t>(s.rows()) && omega.size() == theta.size(),
                    "modal coordinates: {} angles and {} rates for {} links", theta.size(), omega.size(), s.rows());
  const Eigen::FullPivLU<Eigen::MatrixXd> lu(s);
  const Eigen::VectorXd q = lu.solve(Eigen::Map<const Eigen::VectorXd>(theta.data(), s.rows()));
  const Eigen::VectorXd r = lu.solve(Eigen::Map<const Eigen::VectorXd>(omega.data(), s.rows()));
  ModalCoordinates out;
  out.q.assign(q.data(), q.data() + q.size());
  out.rate.assign(r.data(), r.data() + r.size());
  for (Eigen::Index k = 0; k < q.size(); ++k)
    out.amplitude.push_back(w(k) > 0 ? std::hypot(q(k), r(k) / w(k)) : std::fabs(q(k)));
  return out;
}

}  // namespace swaybound
