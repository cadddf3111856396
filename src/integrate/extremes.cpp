#include "swaybound/integrate/extremes.hpp"

#include <algorithm>
#include <cmath>

#include "swaybound/core/error.hpp"

namespace swaybound {

namespace {
/// Parabolic search: at most this many interpolant evaluations, stopping when a new point changes
/// the maximum by less than kValueTolerance of it (rounding level of the quantity).
constexpr int kMaxParabolicSteps = 12;
constexpr double kValueTolerance = 1e-13;
/// A one-sided bracket probes this fraction of the step inside its larger end.
constexpr double kInsideFraction = 1e-3;
constexpr double kGolden = 0.381966011250105;  // 2 - golden ratio
/// A bracket is searched when this multiple of the parabolic estimate of its gain would reach the
/// running maximum (a safety factor over the estimate chosen here, no source).
constexpr double kGainSafety = 4;

/// Gain of the maximum of the parabola through three samples over the middle one, when the middle
/// sample is at least as large as the outer two (then the parabola is concave with its vertex
/// inside, or flat). 0 for a flat or non-finite stretch.
double parabola_gain(const double* t, const double* q) {
  if (!std::isfinite(q[0]) || !std::isfinite(q[1]) || !std::isfinite(q[2])) return 0;
  const double d0 = (q[1] - q[0]) / (t[1] - t[0]), d1 = (q[2] - q[1]) / (t[2] - t[1]);
  const double curvature = (d1 - d0) / (t[2] - t[0]);  // half the second derivative
  if (!(curvature < 0)) return 0;
  const double s = d0 + curvature * (t[1] - t[0]);  // slope at t1: q = q1 + s (t - t1) + curvature (t - t1)^2
  return -s * s / (4 * curvature);
}
}  // namespace

ExtremeFinder::ExtremeFinder(int count, Quantities quantities, std::vector<double> from)
    : count_(count), quantities_(std::move(quantities)), tracks_(static_cast<std::size_t>(count)),
      values_(static_cast<std::size_t>(count)), probe_values_(static_cast<std::size_t>(count)) {
  SWAYBOUND_REQUIRE(from.empty() || from.size() == static_cast<std::size_t>(count),
                    "{} window starts for {} quantities", from.size(), count);
  for (std::size_t k = 0; k < from.size(); ++k) tracks_[k].from = from[k];
  brackets_.reserve(static_cast<std::size_t>(3 * count));
}

void ExtremeFinder::offer(Track& track, double value, double t) const {
  if (t < track.from) return;
  if (value > track.peak.value) track.peak = {value, t};
}

void ExtremeFinder::push(Track& track, double value, double t, bool start) {
  if (start) track.count = 0;
  if (track.count == 3) {
    track.t[0] = track.t[1], track.q[0] = track.q[1];
    track.t[1] = track.t[2], track.q[1] = track.q[2];
    track.count = 2;
    track.fresh = false;
  }
  if (track.count == 0) track.fresh = start;
  track.t[track.count] = t;
  track.q[track.count] = value;
  ++track.count;
}

void ExtremeFinder::offer_all(const StepView& v) {
  quantities_(v, probe_values_.data());
  ++probes_;
  for (int k = 0; k < count_; ++k) offer(tracks_[static_cast<std::size_t>(k)], probe_values_[static_cast<std::size_t>(k)], v.t);
}

void ExtremeFinder::find_brackets(int k, bool segment_end) {
  Track& tr = tracks_[static_cast<std::size_t>(k)];
  const double best = tr.peak.value;
  if (tr.count == 2 && tr.fresh && tr.q[0] > tr.q[1]) {
    // Falling away from a segment start: the maximum is at the start or inside the first step.
    if (tr.q[0] + kGainSafety * (tr.q[0] - tr.q[1]) >= best)
      brackets_.push_back({k, tr.t[0], tr.t[1], -1, tr.q[0], 0, tr.q[1]});  // one-sided
  }
  const bool flat = tr.q[0] == tr.q[1] && tr.q[1] == tr.q[2];
  if (tr.count == 3 && tr.q[1] >= tr.q[0] && tr.q[1] >= tr.q[2] && !flat) {
    if (tr.q[1] + kGainSafety * parabola_gain(tr.t, tr.q) >= best)
      brackets_.push_back({k, tr.t[0], tr.t[2], tr.t[1], tr.q[0], tr.q[1], tr.q[2]});
  }
  if (segment_end && tr.count >= 2) {
    // Rising into a segment end: the maximum is at the end or inside the last step.
    const double q_end = tr.q[tr.count - 1], q_before = tr.q[tr.count - 2];
    if (q_end > q_before && q_end + kGainSafety * (q_end - q_before) >= best)
      brackets_.push_back({k, tr.t[tr.count - 2], tr.t[tr.count - 1], -1, q_before, 0, q_end});
  }
}

void ExtremeFinder::search(DenseProbe& probe, const Bracket& bracket) {
  ++searches_;
  const auto k = static_cast<std::size_t>(bracket.k);
  double a = std::max(bracket.a, probe.from), b = std::min(bracket.b, probe.to);
  if (!(b > a)) return;
  const auto value = [&](double t) {
    offer_all(probe.at(t));
    return probe_values_[k];
  };
  double c = bracket.c, qa = bracket.qa, qc = bracket.qc, qb = bracket.qb;
  if (a != bracket.a || b != bracket.b) {
    qa = value(a);
    qb = value(b);
  }
  if (!(c > a && c < b)) {
    // One-sided: the larger end e is the maximum unless the quantity rises from e into the step;
    // then e, a point just inside and the other end bracket an inside maximum.
    const bool at_a = qa >= qb;
    const double e = at_a ? a : b, qe = at_a ? qa : qb;
    c = e + (at_a ? 1 : -1) * kInsideFraction * (b - a);
    qc = value(c);
    if (!(qc > qe)) return;
  }
  // Successive parabolic interpolation from the three samples, which already bracket the maximum
  // (q(c) >= q(a), q(b)); a golden-section step where the parabola is unusable. The samples cost
  // nothing, and near a smooth maximum each new point gains digits superlinearly.
  const double t_tolerance = 1e-9 * (b - a);
  for (int it = 0; it < kMaxParabolicSteps; ++it) {
    const double d0 = (qc - qa) / (c - a), d1 = (qb - qc) / (b - c);
    const double curvature = (d1 - d0) / (b - a);
    double u = c;
    double predicted = std::numeric_limits<double>::infinity();
    bool parabolic = curvature < 0;
    if (parabolic) {
      const double slope = d0 + curvature * (c - a);
      u = c - slope / (2 * curvature);
      predicted = -slope * slope / (4 * curvature);
    }
    if (!(u > a && u < b) || std::fabs(u - c) < t_tolerance) {
      if (predicted <= kValueTolerance * std::fabs(qc)) break;
      parabolic = false;
      u = c - a > b - c ? c - kGolden * (c - a) : c + kGolden * (b - c);  // into the larger side
    }
    const double qu = value(u);
    const bool converged = parabolic && std::fabs(qu - qc) <= kValueTolerance * std::fabs(qc);
    if (qu > qc) {
      (u < c ? b : a) = c;
      (u < c ? qb : qa) = qc;
      c = u;
      qc = qu;
    } else {
      (u < c ? a : b) = u;
      (u < c ? qa : qb) = qu;
    }
    if (converged) break;
  }
}

void ExtremeFinder::observe(const StepView& v) {
  quantities_(v, values_.data());
  // Windows that open inside the step just taken get a sample at exactly their start.
  if (v.probe && !v.segment_start)
    for (int k = 0; k < count_; ++k) {
      Track& tr = tracks_[static_cast<std::size_t>(k)];
      if (tr.from > last_t_ && tr.from < v.t && tr.count == 0) {
        const StepView w = v.probe->at(tr.from);
        quantities_(w, probe_values_.data());
        ++probes_;
        offer(tr, probe_values_[static_cast<std::size_t>(k)], tr.from);
        push(tr, probe_values_[static_cast<std::size_t>(k)], tr.from, true);
      }
    }
  brackets_.clear();
  for (int k = 0; k < count_; ++k) {
    Track& tr = tracks_[static_cast<std::size_t>(k)];
    if (v.t < tr.from) continue;
    const double value = values_[static_cast<std::size_t>(k)];
    offer(tr, value, v.t);
    push(tr, value, v.t, v.segment_start || tr.count == 0);
    if (!v.segment_start) find_brackets(k, v.segment_end);
  }
  last_t_ = v.t;
  if (!v.probe) return;
  for (const Bracket& bracket : brackets_) search(*v.probe, bracket);
}

}  // namespace swaybound
