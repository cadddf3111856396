#include "swaybound/report/diff.hpp"

#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/core/error.hpp"
#include "swaybound/report/format.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/report/verify.hpp"
#include "swaybound/spec/loader.hpp"

namespace swaybound {

namespace fs = std::filesystem;

namespace {

struct Loaded {
  nlohmann::json json;
  /// The spec the results were computed from (spec.yaml, or sized_spec.yaml); empty when absent.
  fs::path spec;
};

/// Verifies `path` (verify.hpp) and reads its results; refuses (RunError listing the findings) a
/// packet or results file that fails verification, since its figures cannot be trusted.
Loaded load(const std::string& path, const char* side) {
  const VerifyResult v = verify_packet(path);
  if (!v.intact()) {
    std::string findings;
    for (const auto& f : v.findings) findings += fmt::format("\n  {}: {} [{}]", f.file, f.problem, f.method);
    throw RunError(
        fmt::format("{} ({}) fails verification ({} finding(s)); not compared:{}\nrun `swaybound verify {}` "
                    "for the details, and make the packet again from its spec",
                    path, side, v.findings.size(), findings, path));
  }
  std::ifstream in(v.results_file);
  if (!in)
    throw RunError(
        fmt::format("cannot read {}: give a results.json file or a packet folder", v.results_file));
  Loaded l;
  try {
    l.json = nlohmann::json::parse(in);
  } catch (const nlohmann::json::exception& e) {
    throw RunError(fmt::format("{} is not valid JSON: {}", v.results_file, e.what()));
  }
  if (!v.spec_copy.empty()) l.spec = v.spec_copy;
  return l;
}

double number(const nlohmann::json& j, const char* key) {
  return j.contains(key) && j[key].is_number() ? j[key].get<double>() : std::nan("");
}

}  // namespace

bool DiffResult::regression() const {
  for (const auto& r : rows)
    if (r.newly_failing || r.shrunk || r.removed) return true;
  return false;
}

DiffResult diff_results(const std::string& old_path, const std::string& new_path, double tolerance) {
  const Loaded a = load(old_path, "OLD"), b = load(new_path, "NEW");
  DiffResult d;
  d.tolerance = tolerance;
  d.old_verdict = a.json.value("verdict", "");
  d.new_verdict = b.json.value("verdict", "");
  std::map<std::string, std::size_t> index;
  const auto row_for = [&](const nlohmann::json& c) -> DiffRow& {
    const std::string name = fmt::format("{} ({})", c.value("limit", ""), c.value("applies_to", ""));
    auto it = index.find(name);
    if (it == index.end()) {
      it = index.emplace(name, d.rows.size()).first;
      d.rows.push_back({});
      d.rows.back().check = name;
      d.rows.back().unit = c.value("unit", "");
      d.rows.back().old_worst = d.rows.back().new_worst = std::nan("");
      d.rows.back().old_margin = d.rows.back().new_margin = std::nan("");
      d.rows.back().old_ratio = d.rows.back().new_ratio = std::nan("");
    }
    return d.rows[it->second];
  };
  for (const auto& c : a.json.value("checks", nlohmann::json::array())) {
    DiffRow& r = row_for(c);
    r.in_old = true;
    r.old_worst = number(c, "worst");
    r.old_margin = number(c, "margin");
    r.old_ratio = number(c, "margin_ratio");
    r.old_verdict = c.value("verdict", "");
  }
  for (const auto& c : b.json.value("checks", nlohmann::json::array())) {
    DiffRow& r = row_for(c);
    r.in_new = true;
    r.new_worst = number(c, "worst");
    r.new_margin = number(c, "margin");
    r.new_ratio = number(c, "margin_ratio");
    r.new_verdict = c.value("verdict", "");
  }
  for (auto& r : d.rows) {
    r.newly_failing = r.in_new && r.new_verdict == "fail" && (!r.in_old || r.old_verdict == "pass");
    r.removed = r.in_old && !r.in_new;
    if (r.in_old && r.in_new) {
      // Compare ratios where the limit is non-zero; otherwise the absolute margins.
      const bool ratios = std::isfinite(r.old_ratio) && std::isfinite(r.new_ratio);
      const double change = ratios ? r.new_ratio - r.old_ratio : r.new_margin - r.old_margin;
      r.shrunk = std::isfinite(change) ? change < -tolerance : r.old_verdict == "pass" && r.new_verdict != "pass";
    }
  }
  if (a.spec.empty() || b.spec.empty()) {
    d.specs_note = "the spec copies (spec.yaml, or sized_spec.yaml of a sizing folder) are not both present";
  } else {
    try {
      const auto fa = flatten_spec(load_spec(a.spec.string(), LoadOptions{1'000'000'000L}));
      const auto fb = flatten_spec(load_spec(b.spec.string(), LoadOptions{1'000'000'000L}));
      std::map<std::string, std::pair<std::string, std::string>> keys;
      for (const auto& [k, v] : fa) keys[k].first = v;
      for (const auto& [k, v] : fb) keys[k].second = v;
      for (const auto& [k, v] : keys)
        if (v.first != v.second) d.spec_changes.push_back({k, v.first, v.second});
      d.specs_compared = true;
    } catch (const Error& e) {
      d.specs_note = std::string("the spec copies could not be read: ") + e.what();
    }
  }
  return d;
}

std::string diff_report(const DiffResult& d, bool markdown) {
  std::string out;
  const auto verdict_change = [](const DiffRow& r) {
    const std::string o = r.in_old ? r.old_verdict : "absent", n = r.in_new ? r.new_verdict : "absent";
    return o == n ? n : o + " -> " + n;
  };
  const auto flag = [](const DiffRow& r) {
    return r.newly_failing ? "NEWLY FAILS" : r.removed ? "REMOVED" : r.shrunk ? "MARGIN SHRANK" : "";
  };
  if (markdown) {
    out += "| check | old worst | new worst | old margin | new margin | margin change | verdict | |\n";
    out += "|---|---|---|---|---|---|---|---|\n";
    for (const auto& r : d.rows)
      out += fmt::format("| {} | {} | {} | {} | {} | {} | {} | {} |\n", r.check, engineering(r.old_worst, r.unit),
                         engineering(r.new_worst, r.unit), engineering(r.old_margin, r.unit),
                         engineering(r.new_margin, r.unit), ratio_percent(r.new_ratio - r.old_ratio), verdict_change(r),
                         flag(r));
    if (d.specs_compared) {
      out += fmt::format("\n{} spec value(s) changed:\n\n", d.spec_changes.size());
      if (!d.spec_changes.empty()) out += "| key | old | new |\n|---|---|---|\n";
      for (const auto& c : d.spec_changes)
        out += fmt::format("| `{}` | {} | {} |\n", c.key, c.old_value.empty() ? "-" : c.old_value,
                           c.new_value.empty() ? "-" : c.new_value);
    } else {
      out += "\nSpecs not compared: " + d.specs_note + "\n";
    }
    out += fmt::format("\n**{}** (margin tolerance {:.1f}% of the limit)\n",
                       d.regression() ? "Regression: a check newly fails, was removed, or lost margin" : "No regression",
                       100 * d.tolerance);
    if (d.new_fails()) out += "\nThe new design fails a check (its verdict is fail).\n";
    return out;
  }
  out += fmt::format("{:<46} {:>14} {:>14} {:>14} {:>14} {:>9}  {}\n", "check", "old worst", "new worst", "old margin",
                     "new margin", "change", "verdict");
  for (const auto& r : d.rows) {
    std::string name = r.check.size() > 46 ? r.check.substr(0, 45) + "~" : r.check;
    out += fmt::format("{:<46} {:>14} {:>14} {:>14} {:>14} {:>9}  {} {}\n", name, engineering(r.old_worst, r.unit),
                       engineering(r.new_worst, r.unit), engineering(r.old_margin, r.unit),
                       engineering(r.new_margin, r.unit), ratio_percent(r.new_ratio - r.old_ratio), verdict_change(r), flag(r));
  }
  if (d.specs_compared) {
    out += fmt::format("spec values changed: {}\n", d.spec_changes.size());
    for (const auto& c : d.spec_changes)
      out += fmt::format("  {}: {} -> {}\n", c.key, c.old_value.empty() ? "(absent)" : c.old_value,
                         c.new_value.empty() ? "(absent)" : c.new_value);
  } else {
    out += "specs not compared: " + d.specs_note + "\n";
  }
  out += d.regression() ? "regression: a check newly fails, was removed, or lost more margin than the tolerance\n"
                        : "no regression\n";
  if (d.new_fails()) out += "the new design fails a check (its verdict is fail)\n";
  return out;
}

}  // namespace swaybound
