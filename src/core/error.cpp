#include "swaybound/core/error.hpp"

namespace swaybound {

namespace {
std::string summary(const std::string& file, const std::vector<Diagnostic>& diagnostics) {
  std::string out;
  for (const auto& d : diagnostics) {
    if (!out.empty()) out += '\n';
    out += SpecError::format(file, d);
  }
  return out;
}
}  // namespace

SpecError::SpecError(std::string file, std::vector<Diagnostic> diagnostics)
    : Error(summary(file, diagnostics)), file_(std::move(file)), diagnostics_(std::move(diagnostics)) {}

std::string SpecError::format(const std::string& file, const Diagnostic& d) {
  std::string where = d.mark.line > 0 ? fmt::format("{}:{}:{}", file, d.mark.line, d.mark.column) : file;
  std::string text = fmt::format("{}: error: ", where);
  if (!d.path.empty()) text += d.path + ": ";
  text += d.message;
  if (!d.fix.empty()) text += fmt::format("\n    fix: {}", d.fix);
  return text;
}

UsageError::UsageError(std::string option, std::string message, std::string fix)
    : Error(fmt::format("{}: {}{}{}", option, message, fix.empty() ? "" : "; ", fix)),
      option_(std::move(option)),
      message_(std::move(message)),
      fix_(std::move(fix)) {}

}  // namespace swaybound
