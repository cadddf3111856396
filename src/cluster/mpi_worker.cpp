// The ranks other than 0 of an MPI job: they rebuild each plan rank 0 sends and run the blocks of
// cases it deals out (mpi_farm.hpp describes the protocol).
#include <chrono>
#include <limits>
#include <memory>
#include <thread>

#include <fmt/format.h>

#include "mpi_farm.hpp"
#include "mpi_wire.hpp"
#include "swaybound/checks/case_wire.hpp"
#include "swaybound/sizing/design.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound::cluster {

std::vector<CaseMetrics> run_block(const CheckPlan& plan, const std::vector<long>& indices, int jobs) {
  std::vector<CaseMetrics> out;
  out.reserve(indices.size());
  RunnerOptions runner;
  runner.jobs = jobs;
  run_ordered<CaseMetrics>(
      static_cast<long>(indices.size()), runner, [&] { return Workspace(plan.model); },
      [&](long k, Workspace& ws) {
        return run_case(plan.model, *plan.spec, ws, plan.space.at(indices[static_cast<std::size_t>(k)]),
                        plan.streaming, plan.case_options);
      },
      [&](CaseMetrics&& m) { out.push_back(std::move(m)); });
  return out;
}

namespace {

/// A worker's current plan, rebuilt from its key.
struct RebuiltPlan {
  std::unique_ptr<Spec> spec;
  std::unique_ptr<CheckPlan> plan;
};

RebuiltPlan rebuild(const std::string& key) {
  Unpack u{key};
  const std::string text = u.get_text(), file = u.get_text();
  std::vector<double> values(u.get<std::uint64_t>());
  for (double& v : values) v = u.get<double>();
  const auto fingerprint = u.get<std::uint64_t>();
  constexpr long kNoCap = std::numeric_limits<long>::max();  // rank 0 applied the caps when it loaded the spec
  RebuiltPlan r;
  r.spec = std::make_unique<Spec>(load_spec_text(text, file, LoadOptions{kNoCap, kNoCap}));
  if (!values.empty()) apply_design(*r.spec, design_variables(*r.spec), values);
  if (spec_fingerprint(*r.spec) != fingerprint)
    throw RunError(fmt::format("rank {} rebuilt the spec '{}' with other values than rank 0 holds; every rank must "
                               "run the same build of swaybound",
                               world_rank(), file));
  r.plan = std::make_unique<CheckPlan>(plan_check(*r.spec));
  return r;
}

}  // namespace

std::uint64_t spec_fingerprint(const Spec& spec) {
  Spec cases_only = spec;
  cases_only.sizing.reset();
  cases_only.report = ReportSpec{};
  cases_only.source_file.clear();
  // FNV-1a, 64 bits: the same on every rank of the same build.
  std::uint64_t h = 14695981039346656037ull;
  for (unsigned char c : normalised_yaml(cases_only)) h = (h ^ c) * 1099511628211ull;
  return h;
}

std::string plan_key(const Spec& spec) {
  if (spec.source_text.empty()) return {};
  Pack p;
  p.put_text(spec.source_text);
  p.put_text(spec.source_file);
  p.put(static_cast<std::uint64_t>(spec.design_values.size()));
  for (double v : spec.design_values) p.put(v);
  p.put(spec_fingerprint(spec));
  return std::move(p.bytes);
}

int serve_cases() {
  // Whether this rank shares rank 0's node: the ranks of rank 0's shared-memory group.
  MPI_Comm node;
  MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, 0, MPI_INFO_NULL, &node);
  int on_node_of_0 = 0, node_leader = world_rank();
  MPI_Bcast(&node_leader, 1, MPI_INT, 0, node);  // the lowest world rank of the group (ranks keep their order)
  on_node_of_0 = node_leader == 0;
  MPI_Comm_free(&node);
  Pack hello;
  hello.put(static_cast<std::int32_t>(default_jobs()));
  hello.put(static_cast<std::uint8_t>(on_node_of_0));
  hello.put(static_cast<std::int32_t>(allowed_cpus()));
  send(hello.bytes, 0, kHello);
  std::uint64_t serial = 0;
  RebuiltPlan current;
  for (;;) {
    // Waits without spinning (a blocking probe keeps a core busy in most MPI libraries, a core
    // rank 0 lends its own stages meanwhile): polls every 50 us for the first 20 ms, then every 2 ms.
    MPI_Status status;
    const auto idle = std::chrono::steady_clock::now();
    for (int waiting = 0;;) {
      MPI_Iprobe(0, MPI_ANY_TAG, MPI_COMM_WORLD, &waiting, &status);
      if (waiting) break;
      std::this_thread::sleep_for(std::chrono::steady_clock::now() - idle < std::chrono::milliseconds(20)
                                      ? std::chrono::microseconds(50)
                                      : std::chrono::microseconds(2000));
    }
    const std::string message = receive(status);
    if (status.MPI_TAG == kStop) return 0;
    try {
      if (status.MPI_TAG != kWork) throw RunError(fmt::format("cluster: unexpected message tag {}", status.MPI_TAG));
      Unpack u{message};
      const auto plan_serial = u.get<std::uint64_t>();
      if (u.get<std::uint8_t>() != 0) {
        current = rebuild(u.get_text());
        serial = plan_serial;
      } else if (plan_serial != serial || !current.plan) {
        throw RunError("cluster: a block for a plan this rank was never sent");
      }
      const int jobs = u.get<std::int32_t>();
      const long first = u.get<long>();
      std::vector<long> indices(static_cast<std::size_t>(u.get<long>()));
      for (long& i : indices) i = u.get<long>();
      Pack out;
      out.put(first);
      encode_cases(run_block(*current.plan, indices, jobs), out.bytes);
      send(out.bytes, 0, kResult);
    } catch (const std::exception& e) {
      Pack failure;
      failure.put_text(e.what());
      send(failure.bytes, 0, kFailure);
    }
  }
}

}  // namespace swaybound::cluster
