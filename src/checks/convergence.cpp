#include "swaybound/checks/convergence.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "swaybound/checks/checks.hpp"
#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/checks/worst_search.hpp"

namespace swaybound {

namespace {
constexpr double kNone = -std::numeric_limits<double>::infinity();
}  // namespace

ConvergenceTracker::ConvergenceTracker(const Spec& spec, long starts) : spec_(&spec), starts_(starts) {
  slots_ = residual_slots(spec);
  for (const LimitSpec& l : spec.limits) {
    worst_.emplace_back(limit_kind(l.kind).per_case ? static_cast<std::size_t>(starts) : 0, kNone);
  }
}

void ConvergenceTracker::offer(const CaseMetrics& m) {
  if (!m.ok() || starts_ <= 0) return;
  const auto start = static_cast<std::size_t>(m.index % starts_);
  for (std::size_t k = 0; k < spec_->limits.size(); ++k) {
    if (worst_[k].empty()) continue;
    int link;
    double time;
    const double v = limit_value_in_case(spec_->limits[k], slots_[k], m, link, time);
    if (std::isnan(v)) continue;
    const double u = utilisation(limit_kind(spec_->limits[k].kind).bound, v);
    worst_[k][start] = std::max(worst_[k][start], u);
  }
}

std::vector<ConvergenceRow> ConvergenceTracker::rows() const {
  std::vector<long> counts;
  for (long decade = 1; decade < starts_; decade *= 10)
    for (long f : {1L, 2L, 5L})
      if (f * decade < starts_) counts.push_back(f * decade);
  for (long part : {starts_ / 4, starts_ / 2, starts_})
    if (part > 0) counts.push_back(part);
  std::sort(counts.begin(), counts.end());
  counts.erase(std::unique(counts.begin(), counts.end()), counts.end());
  std::vector<ConvergenceRow> out;
  for (std::size_t k = 0; k < spec_->limits.size(); ++k) {
    if (worst_[k].empty()) continue;
    const Bound bound = limit_kind(spec_->limits[k].kind).bound;
    ConvergenceRow row;
    row.limit = static_cast<int>(k);
    double running = kNone;
    std::size_t next = 0;
    for (long s = 0; s < starts_ && next < counts.size(); ++s) {
      running = std::max(running, worst_[k][static_cast<std::size_t>(s)]);
      if (s + 1 == counts[next]) {
        row.starts.push_back(s + 1);
        row.worst.push_back(running == kNone ? std::nan("") : utilisation(bound, running));
        ++next;
      }
    }
    out.push_back(std::move(row));
  }
  return out;
}

}  // namespace swaybound
