// Reason it stays one file: the stages of one modal analysis (the linear system, analytic or by
// differences, the undamped and damped eigenproblems and their matching, the closed loops, the
// spatial pairs) share their private helpers and the linearisation notes.
#include "swaybound/modal/modes.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

#include <Eigen/Eigenvalues>
#include <fmt/format.h>

#include "swaybound/core/error.hpp"
#include "swaybound/dynamics/chain.hpp"

namespace swaybound {

namespace {

constexpr double kTwoPi = 2 * std::numbers::pi;

/// A point of the chain at rest: its position [m] and d v_x / d omega_j [m] (at theta = 0 every
/// link moves horizontally: a point at lever r on link j has velocity r omega_j (1, 0)).
/// (A spatial chain's point moves the same way across the travel, d v_z / d phi_j' = r: the same dvx.)
struct RestPoint {
  double x = 0, y = 0, z = 0;
  std::vector<double> dvx;
};

RestPoint rest_point(const Model& model, const PointRef& p) {
  RestPoint out;
  out.dvx.assign(static_cast<std::size_t>(model.n), 0.0);
  if (p.link < 0) {  // on the base, which is at rest
    out.x = p.base_x;
    out.y = p.base_y;
    out.z = p.base_z;
    return out;
  }
  for (int j = 0; j <= p.link; ++j) {
    const double r = j < p.link ? model.length[static_cast<std::size_t>(j)] : p.at;
    out.y -= r;
    out.dvx[static_cast<std::size_t>(j)] = r;
  }
  return out;
}

std::string link_label(const Model& model, int i) { return "'" + model.names[static_cast<std::size_t>(i)] + "'"; }

/// A mode of the damped system: one eigenvalue with Im > 0 and its conjugate, or two real roots.
struct DampedMode {
  std::complex<double> eigenvalue, partner;
  double wn = 0, zeta = 0, wd = 0;
  bool overdamped = false;
};

/// Relative distance of two frequencies, for matching damped to undamped modes.
double frequency_distance(double a, double b) {
  const double scale = std::max({std::fabs(a), std::fabs(b), 1e-300});
  return std::fabs(a - b) / scale;
}

}  // namespace

double small_signal_damper_coefficient(const DamperLaw& d) {
  if (d.c <= 0) return 0.0;
  if (d.alpha == 1.0) return d.c;
  if (d.alpha < 1.0) return d.c * std::pow(d.linear_below, d.alpha - 1.0);
  return 0.0;  // alpha > 1: tau ~ |w|^alpha has zero slope at rest
}

double small_signal_damper_coefficient(const PivotModel& p) {
  double c = 0;
  for (const DamperLaw& d : p.dampers) c += small_signal_damper_coefficient(d);
  return c;
}

namespace {

/// Small-signal coefficient of pivot p's dampers in one swing plane [N m s/rad]: without an axis in
/// both; across the travel (about z) in the travel plane only, along it (about x) across; an oblique
/// one (it couples the planes: modal_analysis notes it) in neither.
double plane_damper_coefficient(const PivotModel& p, bool across) {
  double c = 0;
  for (const DamperLaw& d : p.dampers)
    if (!d.directional || (across ? d.axis_x : d.axis_z) == 1.0) c += small_signal_damper_coefficient(d);
  return c;
}

/// The damping matrix of swing in the travel plane (across = false) or, for a spatial chain, across
/// it (the links turning about x at rest): pivot dampers as plane_damper_coefficient says; a dashpot
/// by the component of its line in the plane of the swing.
Eigen::MatrixXd plane_damping_matrix(const Model& model, bool across) {
  const int n = model.n;
  Eigen::MatrixXd C = Eigen::MatrixXd::Zero(n, n);
  // Pivot i: tau_i = -c (omega_i - omega_{i-1}) on link i, -tau_i on link i-1 (chain.hpp).
  for (int i = 0; i < n; ++i) {
    const double c = plane_damper_coefficient(model.pivots[static_cast<std::size_t>(i)], across);
    if (c == 0.0) continue;
    C(i, i) += c;
    if (i > 0) {
      C(i - 1, i - 1) += c;
      C(i, i - 1) -= c;
      C(i - 1, i) -= c;
    }
  }
  // Dashpot: force -c (u . (v_a - v_b)) u on end a, the opposite on end b; with the stretch rate
  // u0 . (v_a - v_b) = g . omega its generalised force is -c g (g . omega), so C += c g g^T.
  // Only the rate terms survive at rest (the force vanishes there, so changes of its axis with
  // theta do not enter the linearisation).
  for (const DashpotModel& d : model.dashpots) {
    if (d.coefficient <= 0) continue;
    const RestPoint a = rest_point(model, d.a), b = rest_point(model, d.b);
    const double dx = a.x - b.x, dy = a.y - b.y, dz = a.z - b.z;
    const double length = std::sqrt(dx * dx + dy * dy + dz * dz);
    if (length <= 0) continue;  // as the engine: coincident ends exert no force (noted by modal_analysis)
    const double ux = (across ? dz : dx) / length;
    Eigen::VectorXd g(n);
    for (int j = 0; j < n; ++j) g(j) = ux * (a.dvx[static_cast<std::size_t>(j)] - b.dvx[static_cast<std::size_t>(j)]);
    C.noalias() += d.coefficient * g * g.transpose();
  }
  return C;
}

}  // namespace

Eigen::MatrixXd linear_damping_matrix(const Model& model) { return plane_damping_matrix(model, false); }

namespace {

struct LinearSystem {
  Eigen::MatrixXd M, K, C;  ///< mass, stiffness and damping matrices about the rest position
  Eigen::VectorXd F;        ///< generalised force per unit base acceleration along x [kg m]
};

/// M, K and C of a chain with elastic ropes, by central differences of the right-hand side about
/// the hanging rest position (angles 0, each rope at its static stretch, base and drum at rest):
/// K = -M d(q'')/dq, C = -M d(q'')/dq'. Friction and wind are left out as in the analytic case
/// (the notes say why): the differences are taken on a copy of the model without them.
LinearSystem linearise_numerically(const Model& model) {
  Model m = model;
  for (PivotModel& p : m.pivots) p.coulomb_torque = p.pin_friction = 0;
  m.any_pin_friction = false;
  m.any_pivot_torque = false;
  for (const PivotModel& p : m.pivots) m.any_pivot_torque |= p.has_damper();
  m.wind.clear();
  Workspace ws(m);
  Phase rest = m.scenarios.front().phases.front();
  rest.ax = rest.ay = rest.vx0 = rest.vy0 = 0;
  rest.drum_link = -1;
  rest.control.active = false;
  const int d = m.dof;
  std::vector<double> x(static_cast<std::size_t>(m.state_size()), 0.0), dxdt(x.size()), plus(x.size()), minus(x.size());
  rope_start(m, ws, rest, false, 0.0, x);
  evaluate(m, ws, rest, x.data(), rest.t0, dxdt.data());
  LinearSystem s;
  s.M = ws.mass_x.topLeftCorner(d, d);
  Eigen::MatrixXd dq(d, d), dv(d, d);
  for (int j = 0; j < 2 * d; ++j) {
    // Angles and rates: 1e-6; lengths: 1e-6 of the length (the taut law is linear in the stretch).
    const double scale = j % d < m.n ? 1.0 : x[static_cast<std::size_t>(j % d)];
    const double h = 1e-6 * scale;
    std::vector<double> xp = x, xm = x;
    xp[static_cast<std::size_t>(j)] += h;
    xm[static_cast<std::size_t>(j)] -= h;
    evaluate(m, ws, rest, xp.data(), rest.t0, plus.data());
    evaluate(m, ws, rest, xm.data(), rest.t0, minus.data());
    for (int i = 0; i < d; ++i) {
      const double derivative = (plus[static_cast<std::size_t>(d + i)] - minus[static_cast<std::size_t>(d + i)]) / (2 * h);
      (j < d ? dq(i, j) : dv(i, j - d)) = derivative;
    }
  }
  // The base acceleration enters linearly: one central difference with a_x = +-1 m/s^2 is exact.
  {
    Phase push = rest;
    push.ax = 1;
    evaluate(m, ws, push, x.data(), push.t0, plus.data());
    push.ax = -1;
    evaluate(m, ws, push, x.data(), push.t0, minus.data());
    Eigen::VectorXd accel(d);
    for (int i = 0; i < d; ++i)
      accel(i) = 0.5 * (plus[static_cast<std::size_t>(d + i)] - minus[static_cast<std::size_t>(d + i)]);
    s.F = s.M * accel;
  }
  s.K = -s.M * dq;
  s.C = -s.M * dv;
  s.K = 0.5 * (s.K + s.K.transpose()).eval();
  s.C = 0.5 * (s.C + s.C.transpose()).eval();
  return s;
}

/// The planar chain a spatial chain hanging at rest linearises to in each plane: the same links,
/// ropes and force elements, with an angle per link instead of a direction.
Model planar_twin(const Model& model) {
  Model m = model;
  m.spatial = false;
  m.boom_frame = false;
  for (int& c : m.length_coordinate)
    if (c >= 0) c -= 2 * m.n;
  m.dof -= 2 * m.n;
  m.extended -= 2 * m.n;
  return m;
}

LinearSystem linear_system(const Model& model, bool across) {
  if (model.variable_length()) {
    if (!model.spatial) return linearise_numerically(model);
    // Each plane of a spatial chain is its planar twin's; across the travel the angles' damping is
    // that plane's (a dashpot's other component), the ropes' axial damping the same.
    LinearSystem s = linearise_numerically(planar_twin(model));
    if (across)
      s.C.topLeftCorner(model.n, model.n) += plane_damping_matrix(model, true) - plane_damping_matrix(model, false);
    return s;
  }
  LinearSystem s;
  s.M = model.mu;
  s.K = Eigen::MatrixXd::Zero(model.n, model.n);
  for (int i = 0; i < model.n; ++i) s.K(i, i) = model.gravity * model.h[static_cast<std::size_t>(i)];
  s.C = plane_damping_matrix(model, across);
  s.F = Eigen::VectorXd::Zero(model.n);
  for (int i = 0; i < model.n; ++i) s.F(i) = -model.h[static_cast<std::size_t>(i)];
  return s;
}

/// The loop of scenario `k`'s controller `c` linearised about rest (modes.hpp), its poles sorted.
ClosedLoop closed_loop(const Model& model, int k, const DriveControl& c, const LinearSystem& s,
                       const Eigen::LLT<Eigen::MatrixXd>& llt) {
  const auto d = static_cast<Eigen::Index>(s.M.rows());
  Eigen::MatrixXd A = Eigen::MatrixXd::Zero(2 * d + 1, 2 * d + 1);
  A.block(0, d, d, d).setIdentity();
  A.block(d, 0, d, d) = -llt.solve(s.K);
  A.block(d, d, d, d) = -llt.solve(s.C);
  Eigen::RowVectorXd gain = Eigen::RowVectorXd::Zero(2 * d + 1);
  gain(c.measure) = c.angle_gain;
  gain(d + c.measure) = c.rate_gain;
  gain(2 * d) = -c.speed_gain;
  Eigen::VectorXd input = Eigen::VectorXd::Zero(2 * d + 1);
  input.segment(d, d) = llt.solve(s.F);
  input(2 * d) = 1;
  A.noalias() += input * gain;
  Eigen::EigenSolver<Eigen::MatrixXd> solver(A, false);
  SWAYBOUND_REQUIRE(solver.info() == Eigen::Success, "the closed-loop eigenproblem of scenario '{}' did not converge",
                    model.scenarios[static_cast<std::size_t>(k)].name);
  ClosedLoop loop;
  loop.scenario = k;
  loop.scenario_name = model.scenarios[static_cast<std::size_t>(k)].name;
  loop.stable = true;
  loop.least_damping_ratio = 1;
  // A pole within round-off of the imaginary axis is on it (k_v = 0 leaves the speed error's pole at 0).
  const double axis = 1e-9 * solver.eigenvalues().cwiseAbs().maxCoeff();
  for (Eigen::Index i = 0; i < solver.eigenvalues().size(); ++i) {
    std::complex<double> l = solver.eigenvalues()(i);
    if (std::abs(l) <= axis) l = 0;
    loop.stable &= l.real() < -axis;
    if (l.imag() < 0) continue;  // the pair is listed by its root with Im > 0
    ClosedLoopPole pole;
    pole.eigenvalue = l;
    const double wn = std::abs(l);
    pole.natural_frequency_hz = wn / kTwoPi;
    pole.damping_ratio = wn > 0 ? -l.real() / wn : 0.0;
    if (l.imag() > 0) loop.least_damping_ratio = std::min(loop.least_damping_ratio, pole.damping_ratio);
    loop.poles.push_back(pole);
  }
  std::sort(loop.poles.begin(), loop.poles.end(), [](const ClosedLoopPole& a, const ClosedLoopPole& b) {
    return a.natural_frequency_hz < b.natural_frequency_hz;
  });
  return loop;
}

}  // namespace

namespace {

/// The modes of swing in one plane (see modal_analysis).
ModalResult plane_modes(const Model& model, bool across) {
  SWAYBOUND_REQUIRE(model.n >= 1, "modal analysis needs at least one link, got {}", model.n);
  // Coordinates: the link angles, then the elastic rope lengths. A spatial chain hanging at rest
  // with isotropic pivots linearises to two copies of the planar system, one per swing plane: its
  // travel-plane modes are computed here, and the notes say what holds across the travel.
  const int n = model.n + static_cast<int>(model.elastic_links.size());
  ModalResult result;

  const LinearSystem system = linear_system(model, across);
  const Eigen::MatrixXd& M0 = system.M;
  Eigen::LLT<Eigen::MatrixXd> llt(M0);
  SWAYBOUND_REQUIRE(llt.info() == Eigen::Success,
                    "the mass matrix at rest is not positive definite (a link with neither mass away from "
                    "its pivot nor inertia?); no modes");
  const Eigen::MatrixXd& K = system.K;
  const Eigen::MatrixXd& C = system.C;

  // --- Undamped: K v = w^2 M0 v (eigenvalues ascending).
  Eigen::GeneralizedSelfAdjointEigenSolver<Eigen::MatrixXd> undamped(K, M0);
  SWAYBOUND_REQUIRE(undamped.info() == Eigen::Success, "the undamped eigenproblem did not converge");
  result.modes.resize(static_cast<std::size_t>(n));
  for (int k = 0; k < n; ++k) {
    Mode& mode = result.modes[static_cast<std::size_t>(k)];
    const double w2 = std::max(undamped.eigenvalues()(k), 0.0);
    mode.frequency_hz = std::sqrt(w2) / kTwoPi;
    mode.period_s = mode.frequency_hz > 0 ? 1.0 / mode.frequency_hz : std::numeric_limits<double>::infinity();
    Eigen::VectorXd v = undamped.eigenvectors().col(k);
    // Axial when the rope lengths hold most of the kinetic energy v^T M v.
    const int links = model.n, ropes = n - links;
    const double total = v.dot(M0 * v);
    const double axial = ropes > 0 ? v.tail(ropes).dot(M0.bottomRightCorner(ropes, ropes) * v.tail(ropes)) : 0.0;
    mode.axial = ropes > 0 && axial > 0.5 * total;
    Eigen::Index largest = 0;
    (mode.axial ? v.tail(ropes) : v.head(links)).cwiseAbs().maxCoeff(&largest);
    v /= v(mode.axial ? links + largest : largest);
    mode.shape.assign(v.data(), v.data() + links);
    mode.stretch_shape.assign(v.data() + links, v.data() + n);
  }

  // --- Damped: eigenvalues of A = [[0, I], [-M0^-1 K, -M0^-1 C]].
  Eigen::MatrixXd A = Eigen::MatrixXd::Zero(2 * n, 2 * n);
  A.topRightCorner(n, n).setIdentity();
  A.bottomLeftCorner(n, n) = -llt.solve(K);
  A.bottomRightCorner(n, n) = -llt.solve(C);
  Eigen::EigenSolver<Eigen::MatrixXd> damped(A, true);
  SWAYBOUND_REQUIRE(damped.info() == Eigen::Success, "the damped eigenproblem did not converge");
  const Eigen::VectorXcd lambda = damped.eigenvalues();

  std::vector<DampedMode> dmodes;
  std::vector<int> reals;
  for (int k = 0; k < 2 * n; ++k) {
    const std::complex<double> l = lambda(k);
    if (l.imag() > 0) {  // underdamped pair: keep the root with Im > 0
      DampedMode d;
      d.eigenvalue = l;
      d.partner = std::conj(l);
      d.wn = std::abs(l);
      d.zeta = -l.real() / d.wn;
      d.wd = l.imag();
      dmodes.push_back(d);
    } else if (l.imag() == 0) {  // real Schur 1x1 block: EigenSolver returns exactly 0 imaginary part
      reals.push_back(k);
    }
  }
  // Real roots come in pairs belonging to one overdamped mode, s^2 + 2 zeta w_n s + w_n^2 = 0.
  // Pair them by the likeness of their eigenvectors' angle parts (identical for proportional
  // damping), starting from the slowest root.
  SWAYBOUND_REQUIRE(reals.size() % 2 == 0, "odd number ({}) of real eigenvalues", reals.size());
  std::sort(reals.begin(), reals.end(), [&](int a, int b) { return std::abs(lambda(a)) < std::abs(lambda(b)); });
  auto shape_of = [&](int k) {
    Eigen::VectorXd v = damped.eigenvectors().col(k).head(n).real();
    const double norm = v.norm();
    return norm > 0 ? Eigen::VectorXd(v / norm) : v;
  };
  std::vector<bool> used(reals.size(), false);
  for (std::size_t a = 0; a < reals.size(); ++a) {
    if (used[a]) continue;
    used[a] = true;
    const Eigen::VectorXd va = shape_of(reals[a]);
    std::size_t best = reals.size();
    double best_like = -1;
    for (std::size_t b = a + 1; b < reals.size(); ++b) {
      if (used[b]) continue;
      const double like = std::fabs(va.dot(shape_of(reals[b])));
      if (like > best_like) {
        best_like = like;
        best = b;
      }
    }
    used[best] = true;
    const double l1 = lambda(reals[a]).real(), l2 = lambda(reals[best]).real();
    DampedMode d;
    d.overdamped = true;
    d.eigenvalue = l1;  // the slower root (sorted by |lambda|)
    d.partner = l2;
    const double product = l1 * l2;
    d.wn = product > 0 ? std::sqrt(product) : 0.0;
    d.zeta = d.wn > 0 ? -(l1 + l2) / (2 * d.wn) : 0.0;  // a neutral mode (w_n = 0) does not decay to rest
    d.wd = 0;
    dmodes.push_back(d);
  }
  SWAYBOUND_REQUIRE(static_cast<int>(dmodes.size()) == n, "found {} damped modes for {} links", dmodes.size(), n);
  std::sort(dmodes.begin(), dmodes.end(), [](const DampedMode& a, const DampedMode& b) { return a.wn < b.wn; });

  // Match each damped mode to the undamped mode nearest in frequency (closest pairs first).
  std::vector<bool> d_used(dmodes.size(), false), u_used(result.modes.size(), false);
  for (int round = 0; round < n; ++round) {
    std::size_t bd = 0, bu = 0;
    double best = std::numeric_limits<double>::infinity();
    for (std::size_t d = 0; d < dmodes.size(); ++d) {
      if (d_used[d]) continue;
      for (std::size_t u = 0; u < result.modes.size(); ++u) {
        if (u_used[u]) continue;
        const double dist = frequency_distance(dmodes[d].wn / kTwoPi, result.modes[u].frequency_hz);
        if (dist < best) {
          best = dist;
          bd = d;
          bu = u;
        }
      }
    }
    d_used[bd] = u_used[bu] = true;
    Mode& mode = result.modes[bu];
    const DampedMode& d = dmodes[bd];
    mode.natural_frequency_with_damping_hz = d.wn / kTwoPi;
    mode.damped_frequency_hz = d.wd / kTwoPi;
    mode.damping_ratio = d.zeta;
    mode.overdamped = d.overdamped;
    mode.eigenvalue = d.eigenvalue;
    mode.partner = d.partner;
  }
  result.least_damping_ratio = std::numeric_limits<double>::infinity();
  for (const Mode& m : result.modes) result.least_damping_ratio = std::min(result.least_damping_ratio, m.damping_ratio);
  for (std::size_t k = 0; k < model.scenarios.size(); ++k)
    if (const Phase& p = model.scenarios[k].phases.front(); p.control.active)
      result.closed_loops.push_back(closed_loop(model, static_cast<int>(k), p.control, system, llt));

  // --- Notes: what the linearisation leaves out or approximates.
  auto& notes = result.notes;
  notes.push_back("linearised about the hanging rest position (all angles 0) with the base at rest; "
                  "valid for small swings only");
  for (int i = 0; i < model.n; ++i) {
    const PivotModel& p = model.pivots[static_cast<std::size_t>(i)];
    if (p.has_friction())
      notes.push_back(fmt::format(
          "friction at the pivot of {} left out: regularised Coulomb friction has no meaningful small-signal "
          "linearisation (its slope at rest, torque / transition_rate, is an artefact of the regularisation); "
          "real dry friction removes a fixed amplitude per cycle or sticks",
          link_label(model, i)));
    for (const DamperLaw& d : p.dampers) {
      if (d.c > 0 && d.alpha < 1.0)
        notes.push_back(fmt::format(
            "damper at the pivot of {} (exponent {:g} < 1) linearised on its linear segment below linear_below = "
            "{:g} rad/s: {:.6g} N m s/rad. The power law itself has infinite slope at rest, so this value follows "
            "the choice of linear_below; for relative swing rates W above it the equivalent viscous coefficient "
            "falls like C W^(exponent-1), so larger swings are damped less than these ratios say",
            link_label(model, i), d.alpha, d.linear_below, small_signal_damper_coefficient(d)));
      if (d.c > 0 && d.alpha > 1.0)
        notes.push_back(fmt::format(
            "damper at the pivot of {} (exponent {:g} > 1) has zero slope at rest and adds no small-signal damping",
            link_label(model, i), d.alpha));
    }
    if (model.length_kind[static_cast<std::size_t>(i)] == LengthKind::elastic)
      notes.push_back(fmt::format("rope {} linearised at its static stretch (taut at rest); its length is a "
                                  "coordinate, so the load's bounce on the rope is an axial mode",
                                  link_label(model, i)));
    else if (model.kind[static_cast<std::size_t>(i)] == LinkKind::rope)
      notes.push_back(fmt::format("rope {} treated as a rigid link (taut at rest)", link_label(model, i)));
  }
  for (const DashpotModel& d : model.dashpots) {
    const RestPoint a = rest_point(model, d.a), b = rest_point(model, d.b);
    if (a.x == b.x && a.y == b.y)
      notes.push_back(fmt::format("dashpot '{}' has coincident ends at rest and is left out", d.name));
  }
  if (!result.closed_loops.empty())
    notes.push_back("travel controllers: each loop is linearised about rest at a constant speed command (states: "
                    "angles, rates, trolley speed error); its saturation at the acceleration limit is left out, so its "
                    "poles hold while the commanded acceleration stays below the limit");
  if (!model.wind.empty())
    notes.push_back("wind left out: it moves the equilibrium away from the hanging position and its drag "
                    "linearisation depends on the wind speed of the load case");
  for (std::size_t k = 0; k < result.modes.size(); ++k)
    if (result.modes[k].frequency_hz == 0)
      notes.push_back(fmt::format("mode {} has no gravity stiffness (neutral); its damping ratio is reported as 0",
                                  k + 1));
  return result;
}

}  // namespace

ModalResult modal_analysis(const Model& model) {
  if (!model.spatial) return plane_modes(model, false);
  // A spatial chain hanging at rest: its swing in the travel plane (x-y) and across it (z-y) are
  // uncoupled to first order with the same mass and gravity stiffness (de/dtheta = x, de/dphi = z
  // at rest, x . z = 0), so every mode has a partner at the same undamped frequency. Pivot dampers
  // are isotropic and damp both alike; a dashpot damps each plane by the component of its line in it.
  ModalResult in = plane_modes(model, false);
  ModalResult across = plane_modes(model, true);
  ModalResult out;
  out.closed_loops = std::move(in.closed_loops);
  std::vector<Mode> all;
  for (std::size_t k = 0; k < in.modes.size(); ++k) {
    Mode a = in.modes[k], b = across.modes[k];
    if (a.axial) {
      // A rope's bounce at rest is vertical: one mode, found alike in both planes' analyses.
      a.plane = SwayPlane::vertical;
      all.push_back(std::move(a));
      continue;
    }
    a.plane = SwayPlane::travel;
    b.plane = SwayPlane::across;
    all.push_back(std::move(a));
    all.push_back(std::move(b));
  }
  // In pairs, lowest frequency first (the pair's in-plane mode first).
  std::stable_sort(all.begin(), all.end(), [](const Mode& x, const Mode& y) {
    return x.frequency_hz < y.frequency_hz * (1 - 1e-12);
  });
  for (std::size_t k = 0; k < all.size(); ++k)
    for (std::size_t j = 0; j < all.size(); ++j)
      if (j != k && all[j].plane != all[k].plane && all[j].plane != SwayPlane::vertical &&
          all[k].plane != SwayPlane::vertical && all[j].frequency_hz == all[k].frequency_hz && all[j].pair < 0 &&
          all[k].pair < 0) {
        all[k].pair = static_cast<int>(j);
        all[j].pair = static_cast<int>(k);
      }
  out.modes = std::move(all);
  out.least_damping_ratio = std::min(in.least_damping_ratio, across.least_damping_ratio);
  out.notes.push_back(
      "spatial chain: each mode of swing in the travel plane (x-y; the boom's vertical plane when slewing) has a "
      "partner across it (z-y) at the same undamped frequency, listed as a pair; pivot dampers without an axis damp "
      "both alike, a dashpot each by the component of its line in that plane");
  bool coupled = false;
  for (const DashpotModel& d : model.dashpots) {
    const RestPoint a = rest_point(model, d.a), b = rest_point(model, d.b);
    coupled |= a.x != b.x && a.z != b.z;
  }
  if (coupled)
    out.notes.push_back("a dashpot inclined to both planes couples the swing in them; the coupling is left out "
                        "(each plane is damped by its own component only)");
  for (int i = 0; i < model.n; ++i)
    for (const DamperLaw& d : model.pivots[static_cast<std::size_t>(i)].dampers)
      if (d.directional && d.c > 0 && d.axis_x != 1.0 && d.axis_z != 1.0)  // an oblique shaft
        out.notes.push_back(
            fmt::format("the damper at the pivot of {} has its shaft at {:.4g} deg to the travel, so it "
                        "couples the swing in the two planes; the modes are computed per plane and "
                        "leave it out (their damping ratios are without it; the runs include it)",
                        link_label(model, i), std::atan2(d.axis_z, d.axis_x) * 180 / std::numbers::pi));
      else if (d.directional && d.c > 0)
        out.notes.push_back(fmt::format("the damper at the pivot of {} damps only the swing {} the travel plane (its "
                                        "shaft is {} the travel)", link_label(model, i),
                                        d.axis_z == 1.0 ? "in" : "across", d.axis_z == 1.0 ? "across" : "along"));
  for (std::string& note : in.notes) out.notes.push_back(std::move(note));
  return out;
}

}  // namespace swaybound
