#pragma once
// The figures of a check report's governing-cases section, as the review document builds them.
#include <string>
#include <vector>

#include "../../src/report/report_model.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/spec.hpp"

namespace swaybound::testing {

/// Every figure of the governing cases' section of the document of `report` (checked from `spec`).
inline std::vector<report_doc::Figure> governing_figures(const Spec& spec, const CheckReport& report) {
  std::vector<report_doc::Figure> out;
  const report_doc::Document d = report_doc::build_document(spec, report, {"2025-02-03", "", ""}, nullptr);
  for (const auto& s : d.sections)
    if (s.id == "governing")
      for (const auto& b : s.blocks)
        for (const auto& f : b.figures) out.push_back(f);
  return out;
}

/// The figure titled `title` among `figures`, or null.
inline const report_doc::Figure* titled(const std::vector<report_doc::Figure>& figures, const std::string& title) {
  for (const auto& f : figures)
    if (f.plot.title == title) return &f;
  return nullptr;
}

}  // namespace swaybound::testing
