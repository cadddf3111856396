#pragma once
// Running maxima of scalar functions of the state over one run, located where they happen: on the
// dense output between accepted steps and on both sides of every jump of an input, not only at
// the accepted steps. A minimum is the maximum of the negated quantity.
//
// How a maximum is found. Each quantity keeps its last three samples at accepted steps within a
// segment (a stretch of the run without a jump). When the middle one is at least as large as its
// neighbours, the quantity has a local maximum between the outer two; that bracket spans the
// previous and the current accepted step, which is exactly what StepView::probe interpolates, and
// successive parabolic interpolation from the three samples (with golden-section steps as a
// safeguard) locates the maximum on the interpolant, typically in 2-4 evaluations. The first two
// samples after a segment start, and the last two before a segment end, form one-sided brackets (a
// maximum may sit at the jump itself or inside the first or last step): a probe just inside the
// larger end tells whether the quantity rises into the step, and if it does, that probe is the
// inside point of a parabolic search. Every probe evaluation is offered to every quantity, so one
// search also improves the others.
//
// To keep the cost low, a bracket is searched only when it can beat the running maximum: the
// parabola through the three samples estimates the gain over the middle sample, and the search
// runs when four times that gain would reach the running maximum (a bracket whose middle sample
// is the running maximum is always searched). The accuracy of a located maximum is that of the
// interpolant: the solver tolerance, not the step length.
#include <functional>
#include <limits>
#include <vector>

#include "swaybound/integrate/run.hpp"

namespace swaybound {

struct Extreme {
  double value = 0;  ///< SI
  double time = 0;   ///< when it happened [s]
};

class ExtremeFinder {
 public:
  /// Fills values[0..count) with the quantities at a view (read from the view only).
  using Quantities = std::function<void(const StepView&, double* values)>;

  /// `count` quantities computed by `quantities`; quantity k counts only from time `from[k]` on
  /// (empty: every quantity from t = 0). A quantity whose window starts inside a step is sampled
  /// on the interpolant at exactly `from[k]`.
  ExtremeFinder(int count, Quantities quantities, std::vector<double> from = {});

  /// Pass every on_step view here (segment starts, accepted steps, segment ends, in order).
  void observe(const StepView& v);

  /// The largest value of quantity k and when it happened; value = -infinity when its window
  /// never opened.
  const Extreme& max(int k) const { return tracks_[static_cast<std::size_t>(k)].peak; }
  /// Interpolant evaluations spent locating maxima (for benchmarks and tests).
  long probes() const { return probes_; }
  /// Brackets searched.
  long searches() const { return searches_; }

 private:
  struct Track {
    double from = 0;          ///< start of the window [s]
    double t[3] = {0, 0, 0};  ///< last samples at accepted steps in this segment, oldest first [s]
    double q[3] = {0, 0, 0};
    int count = 0;            ///< samples held (0..3)
    bool fresh = false;       ///< t[0] is a segment or window start (a one-sided bracket is possible)
    Extreme peak{-std::numeric_limits<double>::infinity(), 0};
  };
  struct Bracket {
    int k;
    double a, b;             ///< the maximum lies in [a, b] [s]
    double c = -1;           ///< an inside sample at least as large as the ends, or -1 (one-sided)
    double qa = 0, qc = 0, qb = 0;
  };

  void offer(Track& track, double value, double t) const;
  void push(Track& track, double value, double t, bool start);
  void offer_all(const StepView& v);
  /// Brackets of quantity k after its newest sample, if any is worth searching.
  void find_brackets(int k, bool segment_end);
  void search(DenseProbe& probe, const Bracket& bracket);

  int count_;
  Quantities quantities_;
  std::vector<Track> tracks_;
  std::vector<double> values_, probe_values_;
  std::vector<Bracket> brackets_;
  double last_t_ = -std::numeric_limits<double>::infinity();
  long probes_ = 0, searches_ = 0;
};

}  // namespace swaybound
