#pragma once
// The output folder of a sizing run (`swaybound size`), written by the library as a check packet
// is (report/check_packet.hpp): opened before the run, fed the final check's cases and the sized
// spec during it, finished with the result:
//
//   PacketOptions where;
//   where.dir = "reports/size";
//   SizingPacket packet(spec, spec_text, where);
//   SizingOptions options;
//   packet.attach(options);
//   const SizingResult result = run_sizing(spec, options);
//   packet.finish(result);
//
// It holds sized_spec.yaml, results.json and cases.csv (the final design's full check),
// sizing_history.csv, sizing.md, sizing.json, the convergence plots (SVG and PNG), input_spec.yaml
// (the spec as given), report.pdf and report.html (the sized design's check with the sizing
// section) and MANIFEST; the folder takes the target's place only when complete.
#include <memory>
#include <string>
#include <vector>

#include "swaybound/report/check_packet.hpp"
#include "swaybound/sizing/sizing.hpp"

namespace swaybound {

class SizingPacket {
 public:
  /// Opens the folder for the sizing of `spec` (which has a sizing section), as CheckPacket does;
  /// `spec_text` is the spec file as given (input_spec.yaml). `spec` must outlive the packet.
  SizingPacket(const Spec& spec, std::string spec_text, PacketOptions options);
  ~SizingPacket();  ///< without finish(): removes the temporary folder, the previous output intact
  SizingPacket(const SizingPacket&) = delete;
  SizingPacket& operator=(const SizingPacket&) = delete;

  /// Sets options.on_final_case to on_final_case() (after any on_final_case already set there) and
  /// options.write_sized_spec to write_sized_spec().
  void attach(SizingOptions& options);
  /// One case of the final design's check, in case order: its cases.csv row and envelope row.
  void on_final_case(const CaseMetrics& metrics);
  /// Writes sized_spec.yaml into the packet; returns the path the final check loads it from.
  std::string write_sized_spec(const std::string& text);
  /// Writes the rest of the folder from `result` (the run fed through attach()), then MANIFEST,
  /// and puts the folder in place of the target. RunError / Interrupted as CheckPacket::finish.
  void finish(const SizingResult& result);

  const std::string& target() const;
  std::vector<std::string> take_notices();

 private:
  struct State;
  std::unique_ptr<State> state_;
};

}  // namespace swaybound
