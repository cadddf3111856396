#pragma once
// What a recording of a governing case keeps of its elastic ropes, its drum and its lift-off
// (internal to src/checks; check_run.cpp records with it).
#include <vector>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/checks/metrics.hpp"

namespace swaybound::checks_detail {

/// Observes one recorded run for its ropes. The slack intervals come from the slack flag of the
/// views the driver gives on both sides of every switch (a switch is a segment boundary, so a
/// change of the flag happens at a located switch time, not at a sample). The snatch peaks of the
/// first kLocatedSnatches re-tensionings of each rope are quantities of the run's one
/// ExtremeFinder (CaseExtremes' extra quantities): quantity (r, j) is rope r's tension while it is
/// in its j-th taut interval after a slack one, and -infinity otherwise, so its running maximum
/// is that interval's peak.
class RopeRecorder {
 public:
  RopeRecorder(const Model& model, int scenario);
  /// How many quantities `quantities` fills.
  int count() const { return static_cast<int>(state_.size()) * kLocatedSnatches; }
  /// The snatch quantities at a view (reads the view only).
  void quantities(const StepView& v, double* q) const;
  /// Every on_step view, before the ExtremeFinder sees it (reads the slack flags of v.ws).
  void step(const StepView& v);
  /// Every kept output sample: the ropes' tension, length and stretch, the drum's travel and speed.
  void sample(const StepView& v, RecordedCase& rc);
  /// Closes the intervals at the end of the run (t_end) and writes the ropes, their snatch peaks
  /// (located ones from `extremes`, the others from the samples) and the metrics of `m` into rc.
  void finish(const CaseExtremes& extremes, const CaseMetrics& m, double t_end, RecordedCase& rc);
  /// The ropes sized for a recording (links, static force), no samples yet.
  void start(RecordedCase& rc) const;

 private:
  struct Rope {
    bool seen = false;    ///< a view was observed
    bool slack = false;   ///< slack at the last view
    bool ever_taut = false;  ///< taut at some view: before that, slack is slack being taken up
    Interval take_up{std::nan(""), std::nan("")};
    int taut_index = -1;  ///< index of the current taut interval after a slack one, -1 for none
    long slack_total = 0, taut_total = 0;
    std::vector<Interval> slack_intervals, taut_intervals;  ///< capped at kMaxRecordedIntervals
  };
  const Model& model_;
  int hoist_link_ = -1;
  std::vector<Rope> state_;
};

}  // namespace swaybound::checks_detail
