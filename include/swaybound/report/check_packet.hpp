#pragma once
// The packet of a check, written by the library: the caller loads the spec, opens the packet
// (which refuses before any work when the folder may not be written), hooks it into the run so
// cases.csv and the report's envelope rows are taken case by case as the run streams them (memory
// for cases.csv does not grow with the case count), and finishes it with the run's report:
//
//   PacketOptions where;
//   where.dir = "reports/check";
//   CheckPacket packet(spec, spec_text, where);  // refuses here, before any work, if it may not write
//   CheckOptions options;
//   packet.attach(options);
//   const CheckReport report = run_check(spec, options);
//   packet.finish(report);  // results.json, spec.yaml, report.pdf, report.html, MANIFEST, switch
//
// The files go into a temporary folder that takes the target's place only when complete
// (report/packet.hpp): a run that fails, is interrupted (SIGINT/SIGTERM, core/cancel.hpp) or is
// destroyed before finish() leaves the previous packet as it was.
#include <memory>
#include <string>
#include <vector>

#include "swaybound/checks/check_run.hpp"
#include "swaybound/spec/spec.hpp"

namespace swaybound {

/// Where and how a packet (of `check` or `size`) is written.
struct PacketOptions {
  std::string dir;        ///< the packet folder
  bool force = false;     ///< replace the packet of another design (report/packet.hpp's rule)
  bool audit = true;      ///< the run re-ran its governing cases at a tighter tolerance (MANIFEST says so)
  std::string date_utc;   ///< ISO 8601 date of the packet; empty: the time finish() is called
  std::string execution{};  ///< how the cases ran (checks/case_farm.hpp describe_execution), for MANIFEST
};

class CheckPacket {
 public:
  /// Opens the packet of `spec` in options.dir: checks the overwrite rule, takes the lock and
  /// creates the temporary folder (RunError, with nothing written, when the folder may not or
  /// cannot be written) and starts cases.csv. `spec_text` is the spec file's bytes as given: copied
  /// into the packet as spec.yaml and hashed for MANIFEST. `spec` must outlive the packet.
  CheckPacket(const Spec& spec, std::string spec_text, PacketOptions options);
  ~CheckPacket();  ///< without finish(): removes the temporary folder, the previous packet intact
  CheckPacket(const CheckPacket&) = delete;
  CheckPacket& operator=(const CheckPacket&) = delete;

  /// Sets options.on_case to on_case() (after any on_case already set there).
  void attach(CheckOptions& options);
  /// One case of the run, in case order: its cases.csv row and its envelope row.
  void on_case(const CaseMetrics& metrics);
  /// Writes results.json, spec.yaml, report.pdf and report.html of `report` (the run whose cases
  /// came through on_case), then MANIFEST, and puts the packet in place of the target. Throws
  /// RunError on a write error and Interrupted when a stop was requested, leaving the previous
  /// packet.
  void finish(const CheckReport& report);

  /// The packet folder as given.
  const std::string& target() const;
  /// What the packet writer did that a user should hear of (report/packet.hpp); cleared by each call.
  std::vector<std::string> take_notices();

 private:
  struct State;
  std::unique_ptr<State> state_;
};

/// The host-independent run settings MANIFEST records for a check of `spec`: solver, seeds, case
/// count and duration, chaos settings, and whether the accuracy audit ran.
std::vector<std::string> check_manifest_settings(const Spec& spec, const CheckReport& report, bool audit);

}  // namespace swaybound
