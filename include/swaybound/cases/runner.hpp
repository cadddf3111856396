#pragma once
// Parallel, deterministic runner: `count` work items on `jobs` threads, each thread with its own
// Workspace; results are handed to `consume` strictly in index order, so everything downstream
// (checks, CSV rows, JSON) is identical for any thread count. Workers run at most `window` items
// ahead of the consumer, so memory stays bounded whatever the count.
#include <functional>

#include "swaybound/checks/metrics.hpp"
#include "swaybound/model/model.hpp"

namespace swaybound {

struct Progress {
  long done = 0, total = 0;
  double elapsed = 0;  ///< [s]
};

struct RunnerOptions {
  int jobs = 0;          ///< 0: every hardware thread
  long window = 1024;    ///< how far workers may run ahead of the consumer
  std::function<void(const Progress&)> progress;  ///< called from the consuming thread, at most ~4 times/s
};

/// Number of threads `jobs = 0` means on this machine (at least 1).
int default_jobs();

void run_parallel(const Model& model, long count, const RunnerOptions& options,
                  const std::function<CaseMetrics(long index, Workspace& ws)>& work,
                  const std::function<void(CaseMetrics&&)>& consume);

}  // namespace swaybound
