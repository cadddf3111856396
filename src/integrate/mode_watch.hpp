#pragma once
// Switches of the contact laws during a run (private to src/integrate): each elastic rope is
// evaluated with its taut or its slack branch, and a lifted load is held on the ground until the
// rope carries it. Each switch has an indicator h that is > 0 while the current branch holds:
//   rope r taut:   h = min(k delta, k delta + c delta')   (the law would pull)      [N]
//   rope r slack:  h = -min(k delta, k delta + c delta')                            [N]
//   grounded:      h = the ground's upward force on the held links                  [N]
//   lifted off:    h = height of the rope's lower end above where it left the ground [m]
// The driver keeps the branches fixed within a segment, so the right-hand side is smooth there,
// and locates the time an indicator reaches zero on the dense output; the run restarts there under
// the switched branch (touching down again ends the run: setting a load down is not modelled).
#include <cmath>
#include <string>
#include <vector>

#include "swaybound/integrate/run.hpp"

namespace swaybound::integrate_detail {

class ModeWatch {
 public:
  ModeWatch(const Model& model, bool lift_off) : model_(model), lift_off_(lift_off) {
    count_ = static_cast<int>(model.elastic_links.size()) + (lift_off ? 1 : 0);
  }
  int count() const { return count_; }
  bool active() const { return count_ > 0; }

  /// The indicators at the workspace's last evaluation.
  void indicators(const Workspace& ws, double* h) const {
    const int ropes = static_cast<int>(model_.elastic_links.size());
    for (int r = 0; r < ropes; ++r) h[r] = ws.rope_slack[static_cast<std::size_t>(r)] ? -ws.taut_margin[r] : ws.taut_margin[r];
    if (lift_off_) h[ropes] = ws.grounded ? ws.ground_y : end_height(ws) - ground_height_;
  }

  /// Switches indicator j's branch at time t (ws evaluated at the switching state, under the old
  /// branch) and describes the event.
  ModeEvent flip(int j, Workspace& ws, double t) {
    const int ropes = static_cast<int>(model_.elastic_links.size());
    ModeEvent e;
    e.time = t;
    if (j < ropes) {
      char& slack = ws.rope_slack[static_cast<std::size_t>(j)];
      slack = slack ? 0 : 1;
      e.link = model_.elastic_links[static_cast<std::size_t>(j)];
      e.kind = slack ? ModeEventKind::slack : ModeEventKind::taut;
      e.value = ws.stretch[static_cast<std::size_t>(j)];
      return e;
    }
    e.link = 0;
    if (ws.grounded) {
      ground_height_ = end_height(ws);
      ws.grounded = false;
      e.kind = ModeEventKind::lift_off;
      e.value = ws.rope_force.empty() ? 0.0 : ws.rope_force[0];
    } else {
      e.kind = ModeEventKind::touch_down;
      e.value = ground_height_;
    }
    return e;
  }

 private:
  /// Height of rope link 0's lower end [m].
  double end_height(const Workspace& ws) const {
    return ws.base_y + ws.len[0] * (model_.spatial ? ws.dir[1] : -ws.cos_t[0]);
  }

  const Model& model_;
  bool lift_off_;
  int count_ = 0;
  double ground_height_ = 0;  ///< height of the rope's lower end at lift-off [m]
};

}  // namespace swaybound::integrate_detail
