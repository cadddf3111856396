// The envelope rows of the report, taken from each case's metrics as the cases stream in.
#include <cmath>
#include <cstdlib>
#include <string>

#include <fmt/format.h>

#include "swaybound/report/document.hpp"

namespace swaybound {

namespace {

/// `value` as cases.csv records it (10 significant digits, report/results.cpp; a non-finite value
/// is an empty field, read as NaN), so the envelope plots and table show exactly the figures of
/// the packet's cases.csv.
double as_recorded(double value) {
  if (!std::isfinite(value)) return std::nan("");
  return std::strtod(fmt::format("{:.10g}", value).c_str(), nullptr);
}

}  // namespace

CaseEnvelopeRow case_envelope_row(const Spec& spec, const CaseMetrics& metrics) {
  CaseEnvelopeRow r;
  r.id = metrics.id;
  r.scenario = spec.scenarios[static_cast<std::size_t>(metrics.scenario)].name;
  r.status = std::string(status_name(metrics.status));
  r.ok = metrics.ok();
  for (std::size_t k = 0; k < spec.links.size(); ++k) {
    // The start's swing from the vertical: |theta|, or for a spatial start the cone angle
    // acos(cos theta cos phi) (dynamics/posture.hpp).
    const double theta0 = k < metrics.initial.theta.size() ? metrics.initial.theta[k] : 0.0;
    const double phi0 = k < metrics.initial.phi.size() ? metrics.initial.phi[k] : 0.0;
    const double t = as_recorded(phi0 != 0.0 ? std::acos(std::cos(theta0) * std::cos(phi0)) : theta0);
    if (std::isfinite(t)) r.amplitude = std::max(r.amplitude, std::fabs(t));
    r.peak_angle.push_back(r.ok ? as_recorded(metrics.peak_angle[k].value) : std::nan(""));
    r.peak_load.push_back(r.ok ? as_recorded(metrics.peak_load[k].value) : std::nan(""));
  }
  return r;
}

}  // namespace swaybound
