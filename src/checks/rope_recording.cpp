#include "rope_recording.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace swaybound::checks_detail {

namespace {

constexpr double kNone = -std::numeric_limits<double>::infinity();

/// Opens an interval at t (kept while fewer than kMaxRecordedIntervals are kept).
void open_interval(std::vector<Interval>& kept, long& total, double t) {
  ++total;
  if (static_cast<long>(kept.size()) < kMaxRecordedIntervals) kept.push_back({t, std::nan("")});
}

/// Closes the last opened interval at t, when it was kept.
void close_interval(std::vector<Interval>& kept, long total, double t) {
  if (static_cast<long>(kept.size()) == total && !kept.empty()) kept.back().to = t;
}

/// The largest sample of `y` at times within [from, to], or NaN when no sample falls there.
Extreme largest_sample(const std::vector<double>& t, const std::vector<double>& y, const Interval& in) {
  Extreme best{std::nan(""), std::nan("")};
  const auto first = std::lower_bound(t.begin(), t.end(), in.from);
  for (auto it = first; it != t.end() && *it <= in.to; ++it) {
    const double value = y[static_cast<std::size_t>(it - t.begin())];
    if (!(value <= best.value)) best = {value, *it};
  }
  return best;
}

}  // namespace

RopeRecorder::RopeRecorder(const Model& model, int scenario)
    : model_(model),
      hoist_link_(model.scenarios[static_cast<std::size_t>(scenario)].hoist_link),
      state_(model.elastic_links.size()) {}

void RopeRecorder::quantities(const StepView& v, double* q) const {
  for (std::size_t r = 0; r < state_.size(); ++r) {
    double* rope = q + r * kLocatedSnatches;
    std::fill(rope, rope + kLocatedSnatches, kNone);
    const int j = state_[r].taut_index;
    if (j >= 0 && j < kLocatedSnatches && v.ws->rope_slack[r] == 0) rope[j] = v.ws->rope_force[r];
  }
}

void RopeRecorder::step(const StepView& v) {
  for (std::size_t r = 0; r < state_.size(); ++r) {
    Rope& s = state_[r];
    const bool slack = v.ws->rope_slack[r] != 0;
    const bool was = s.seen && s.slack;
    // A rope that starts slack (a lift-off) is taken up, not going slack: that interval is kept
    // apart, as the metrics count slack only once the rope was taut.
    if (slack && !s.seen) {
      s.take_up = {v.t, std::nan("")};
    } else if (slack && !was) {
      if (s.taut_index >= 0) close_interval(s.taut_intervals, s.taut_total, v.t);
      s.taut_index = -1;
      open_interval(s.slack_intervals, s.slack_total, v.t);
    } else if (!slack && was && !s.ever_taut) {
      s.take_up.to = v.t;
    } else if (!slack && was) {
      close_interval(s.slack_intervals, s.slack_total, v.t);
      s.taut_index = static_cast<int>(std::min<long>(s.taut_total, std::numeric_limits<int>::max()));
      open_interval(s.taut_intervals, s.taut_total, v.t);
    }
    s.seen = true;
    s.slack = slack;
    s.ever_taut |= !slack;
  }
}

void RopeRecorder::start(RecordedCase& rc) const {
  rc.hoist_link = hoist_link_;
  rc.ropes.assign(state_.size(), {});
  for (std::size_t r = 0; r < state_.size(); ++r) {
    const int link = model_.elastic_links[r];
    const auto k = static_cast<std::size_t>(link);
    const double below = k + 1 < model_.mass_below.size() ? model_.mass_below[k + 1] : 0.0;
    rc.ropes[r].link = link;
    rc.ropes[r].static_force = model_.gravity * (below + model_.mass[k] * model_.com[k] / model_.length[k]);
  }
}

void RopeRecorder::sample(const StepView& v, RecordedCase& rc) {
  for (std::size_t r = 0; r < state_.size(); ++r) {
    RecordedRope& rope = rc.ropes[r];
    rope.force.push_back(v.ws->rope_force[r]);
    rope.length.push_back(v.ws->len[static_cast<std::size_t>(rope.link)]);
    rope.unstretched.push_back(v.ws->unstretched[r]);
    rope.stretch.push_back(v.ws->stretch[r]);
  }
  if (hoist_link_ < 0) return;
  rc.hoist_length.push_back(v.ws->len[static_cast<std::size_t>(hoist_link_)]);
  rc.drum_travel.push_back(v.ws->drum_s);
  rc.drum_speed.push_back(v.ws->drum_v);
}

void RopeRecorder::finish(const CaseExtremes& extremes, const CaseMetrics& m, double t_end,
                          RecordedCase& rc) {
  for (std::size_t r = 0; r < state_.size(); ++r) {
    Rope& s = state_[r];
    if (s.seen && s.slack && s.ever_taut) close_interval(s.slack_intervals, s.slack_total, t_end);
    if (s.seen && s.slack && !s.ever_taut) s.take_up.to = t_end;
    if (s.taut_index >= 0) close_interval(s.taut_intervals, s.taut_total, t_end);
    RecordedRope& rope = rc.ropes[r];
    rope.slack = s.slack_intervals;
    rope.take_up = s.take_up;
    rope.slack_intervals = s.slack_total;
    for (std::size_t j = 0; j < s.taut_intervals.size(); ++j) {
      SnatchPeak p;
      p.taut = s.taut_intervals[j];
      if (j < static_cast<std::size_t>(kLocatedSnatches))
        p.peak = extremes.finder().max(extremes.first_extra() + static_cast<int>(r * kLocatedSnatches + j));
      p.located = std::isfinite(p.peak.value);
      if (!p.located) p.peak = largest_sample(rc.t, rope.force, p.taut);
      rope.snatches.push_back(p);
    }
    const auto k = static_cast<std::size_t>(rope.link);
    if (k < m.peak_rope_force.size()) {
      rope.peak_force = m.peak_rope_force[k];
      rope.slack_time = m.slack_time[k];
      rope.slack_count = m.slack_count[k];
      rope.snatch = m.snatch[k];
    }
  }
}

}  // namespace swaybound::checks_detail
