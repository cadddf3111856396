// Long for a reason: MANIFEST, spec copies and every consistency rule of results.json are checked
// here in one pass, each rule with its own finding text.
#include "swaybound/report/verify.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <optional>
#include <set>
#include <sstream>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "swaybound/checks/limit_kinds.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/report/format.hpp"
#include "swaybound/report/packet.hpp"
#include "swaybound/report/results.hpp"

namespace swaybound {

namespace fs = std::filesystem;
using Json = nlohmann::json;

namespace {

constexpr std::size_t kFailedListed = 100;  ///< results.json lists the first 100 failed cases (check_run.cpp)

/// results.json prints every double in its shortest form that reads back to the same bits, so a
/// margin recomputed from the printed limit and worst value equals the printed margin exactly. The
/// tolerance only admits a file re-written by another tool at 10 or more significant digits.
constexpr double kRelativeTolerance = 1e-9;

std::string read_bytes(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  if (!in) throw RunError(fmt::format("cannot read {}", p.string()));
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

bool is_sha256_hex(std::string_view s) {
  return s.size() == 64 && std::all_of(s.begin(), s.end(), [](char c) {
           return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f');
         });
}

/// A MANIFEST name that stays inside the folder (no separators, not "." or "..").
bool plain_name(const std::string& name) {
  return name.find('/') == std::string::npos && name.find('\\') == std::string::npos && name != "." &&
         name != "..";
}

/// Data records of a CSV text after its header line (a newline inside quotes does not end a record).
long csv_records(const std::string& text) {
  long lines = 0;
  bool quoted = false, content = false;
  for (char c : text) {
    if (c == '"') quoted = !quoted;
    if (c == '\n' && !quoted) {
      lines += content;
      content = false;
    } else if (c != '\r') {
      content = true;
    }
  }
  lines += content;
  return std::max(0L, lines - 1);
}

/// Whether the limit named `key` is a lower bound (its worst value is its least, and it must stay
/// above the limit), from the table of limit kinds; false for an upper bound; an empty optional
/// for a key that names no limit kind.
std::optional<bool> lower_bound_limit(const std::string& key) {
  const LimitKindInfo* info = find_limit_kind(key);
  if (!info) return std::nullopt;
  return info->bound == Bound::lower;
}

/// Modal damping and the onset margin are values of the design, not of each case: no failed case
/// counts against them (the table's per_case).
bool per_case_limit(const std::string& key) {
  const LimitKindInfo* info = find_limit_kind(key);
  return !info || info->per_case;
}

/// A number of results.json: finite, or NaN where the file holds null (non-finite values are
/// written as null); `present` false when the key is missing or holds something else.
double json_number(const Json& object, const char* key, bool& present) {
  present = false;
  if (!object.is_object() || !object.contains(key)) return std::nan("");
  const Json& v = object[key];
  if (v.is_number()) {
    present = true;
    return v.get<double>();
  }
  if (v.is_null()) {
    present = true;
    return std::nan("");
  }
  return std::nan("");
}

/// The text at `key` of `object`; "" when it is missing or not text.
std::string text(const Json& object, const char* key) {
  if (!object.is_object() || !object.contains(key) || !object[key].is_string()) return "";
  return object[key].get<std::string>();
}

bool close(double recorded, double expected, double scale) {
  return std::fabs(recorded - expected) <= kRelativeTolerance * scale;
}

/// Two values for a finding, in the unit an engineer reads, with the SI digits when those read the same.
std::string both(double recorded, double expected, const std::string& unit) {
  const std::string a = engineering(recorded, unit), b = engineering(expected, unit);
  if (a != b) return fmt::format("{}, but recomputed {}", a, b);
  return fmt::format("{} ({:.17g} {}), but recomputed {:.17g} {}", a, recorded, unit, expected, unit);
}

class Verifier {
 public:
  explicit Verifier(VerifyResult& r) : r_(r) {}

  void add(std::string file, std::string problem, std::string method) {
    r_.findings.push_back({std::move(file), std::move(problem), std::move(method)});
  }

  /// Every MANIFEST line against the folder; returns the parsed MANIFEST.
  PacketManifest manifest(const fs::path& dir) {
    const PacketManifest m = parse_packet_manifest(read_bytes(dir / "MANIFEST"));
    if (m.header != kPacketManifestHeader)
      add("MANIFEST", fmt::format("first line is '{}', not '{}'", m.header, kPacketManifestHeader),
          "MANIFEST header line read");
    if (!m.has_files)
      add("MANIFEST", "no 'files:' line: no file of the packet can be verified",
          "MANIFEST read line by line");
    for (const auto& line : m.malformed)
      add("MANIFEST", fmt::format("line '{}' in the files section is not 'SHA-256  name'", line),
          "MANIFEST read line by line");
    std::set<std::string> listed;
    for (const auto& [hash, name] : m.files) {
      if (!listed.insert(name).second) {
        add("MANIFEST", fmt::format("{} is listed twice", name), "MANIFEST files section read");
        continue;
      }
      if (!plain_name(name) || name == "MANIFEST") {
        add("MANIFEST", fmt::format("lists '{}', which is not a file of the packet folder", name),
            "MANIFEST files section read");
        continue;
      }
      std::error_code ec;
      if (!fs::is_regular_file(dir / name, ec)) {
        add(name, "listed in MANIFEST but missing from the folder",
            "MANIFEST files section against the folder");
        continue;
      }
      const std::string actual = sha256_file((dir / name).string());
      ++r_.files_hashed;
      if (actual != hash)
        add(name,
            fmt::format("SHA-256 is {}, MANIFEST records {}: the file changed after the packet was written",
                        actual, hash),
            "SHA-256 of the file recomputed");
    }
    std::vector<std::string> extra;
    for (const auto& entry : fs::directory_iterator(dir)) {
      const std::string name = entry.path().filename().string();
      if (name != "MANIFEST" && !listed.count(name)) extra.push_back(name);
    }
    std::sort(extra.begin(), extra.end());
    for (const auto& name : extra)
      add(name, "not listed in MANIFEST: added to the folder after the packet was written",
          "folder listing against the MANIFEST files section");
    if (m.has_files && !listed.count("results.json"))
      add("MANIFEST", "does not list results.json", "MANIFEST files section read");
    return m;
  }

  /// SHA-256 of `file` in `dir` against `recorded` (from `where`); a finding when they differ or
  /// the file is absent.
  void spec_hash(const fs::path& dir, const std::string& file, const std::string& recorded,
                 const std::string& where) {
    std::error_code ec;
    if (!fs::is_regular_file(dir / file, ec)) {
      add(file, fmt::format("missing, though {} records its SHA-256", where), "folder listing");
      return;
    }
    const std::string actual = sha256_file((dir / file).string());
    if (actual != recorded)
      add(file, fmt::format("SHA-256 is {}, {} records {}", actual, where, recorded),
          fmt::format("SHA-256 of {} against {}", file, where));
  }

  /// The internal consistency of results.json: each check's margin, margin ratio, verdict and
  /// failed-case count against its limit, worst value and the case counts; the overall verdict
  /// against the checks.
  void consistency(const Json& j) {
    const std::string file = "results.json";
    if (!j.contains("checks") || !j["checks"].is_array()) {
      add(file, "has no 'checks' list", "results.json read");
      return;
    }
    bool count_present = false, failed_present = false;
    const Json cases = j.contains("cases") ? j["cases"] : Json();
    const double count = json_number(cases, "count", count_present);
    const double failed = json_number(cases, "failed", failed_present);
    if (!count_present || !failed_present || !std::isfinite(count) || !std::isfinite(failed) || failed < 0) {
      add(file, "'cases' lacks a case count or a failed-case count", "results.json read");
      return;
    }
    if (!j.contains("failed_cases") || !j["failed_cases"].is_array()) {
      add(file, "has no 'failed_cases' list", "results.json read");
    } else {
      const auto listed = static_cast<double>(j["failed_cases"].size());
      const double expected = std::min(failed, static_cast<double>(kFailedListed));
      if (listed != expected)
        add(file,
            fmt::format("lists {} failed case(s) where cases.failed = {:g} (it lists the first {})", listed,
                        failed, kFailedListed),
            "failed_cases counted against cases.failed");
    }
    bool all_pass = failed == 0;
    std::string first_failing;
    std::size_t index = 0;
    for (const Json& c : j["checks"]) {
      ++index;
      const bool pass = check(c, index, failed);
      if (!pass && first_failing.empty())
        first_failing = fmt::format("check {} ({})", index, text(c, "limit"));
      all_pass &= pass;
    }
    const std::string verdict =
        j.contains("verdict") && j["verdict"].is_string() ? j["verdict"].get<std::string>() : "";
    const std::string expected = all_pass ? "pass" : "fail";
    if (verdict != expected) {
      const std::string why = all_pass     ? "every check passes and no case failed to run"
                              : failed > 0 ? fmt::format("{:g} case(s) failed to run", failed)
                                           : first_failing + " fails";
      add(file, fmt::format("overall verdict is '{}', but {}", verdict, why),
          "overall verdict recomputed as: every check passes and no case failed to run");
    }
  }

  /// One check of results.json; returns its verdict as recomputed (the recorded one where the
  /// margin is within the printing tolerance of zero).
  bool check(const Json& c, std::size_t index, double failed_total) {
    const std::string file = "results.json";
    if (!c.is_object()) {
      add(file, fmt::format("check {} is not an object", index), "results.json read");
      return false;
    }
    ++r_.checks_verified;
    const std::string key = text(c, "limit");
    const std::string label = fmt::format("check {} ({}, {})", index, key, text(c, "applies_to"));
    // diff reads these as text.
    for (const char* field : {"limit", "applies_to", "bound", "unit", "verdict"})
      if (!c.contains(field) || !c[field].is_string())
        add(file, fmt::format("{}: '{}' is missing or not text", label, field), "results.json read");
    const std::string unit = text(c, "unit");
    const std::string recorded_verdict = text(c, "verdict");
    if (!recorded_verdict.empty() && recorded_verdict != "pass" && recorded_verdict != "fail")
      add(file, fmt::format("{}: verdict '{}' is neither pass nor fail", label, recorded_verdict),
          "results.json read");

    const std::optional<bool> lower = lower_bound_limit(key);
    const std::string recorded_bound = text(c, "bound");
    bool is_lower = recorded_bound == "lower";
    if (!lower) {
      add(file, fmt::format("{}: '{}' names no limit kind", label, key),
          "limit name against the limit kinds");
    } else {
      is_lower = *lower;
      const std::string expected_bound = is_lower ? "lower" : "upper";
      if (recorded_bound != expected_bound)
        add(file,
            fmt::format("{}: bound '{}', but {} is {}", label, recorded_bound, key,
                        is_lower ? "a lower bound (its worst value must stay above the limit)"
                                 : "an upper bound (its worst value must stay below the limit)"),
            "bound against the limit kind");
    }

    bool present = false;
    const double failed_here = json_number(c, "failed_cases", present);
    const double expected_failed = per_case_limit(key) ? failed_total : 0;
    if (!present || failed_here != expected_failed)
      add(file,
          fmt::format("{}: failed_cases {}, but {}", label,
                      present ? fmt::format("{:g}", failed_here) : "missing",
                      per_case_limit(key) ? fmt::format("{:g} case(s) failed to run (cases.failed), and a "
                                                        "failed case fails every per-case check",
                                                        failed_total)
                                          : std::string("this check is not per case (0 expected)")),
          "failed_cases against cases.failed");

    const double limit = json_number(c, "limit_value", present);
    if (!present || !std::isfinite(limit)) {
      add(file, fmt::format("{}: no limit_value", label), "results.json read");
      return recorded_verdict == "pass";
    }
    const double worst = json_number(c, "worst", present);
    if (!present) add(file, fmt::format("{}: no worst value (number or null)", label), "results.json read");
    const double margin = json_number(c, "margin", present);
    if (!present) add(file, fmt::format("{}: no margin (number or null)", label), "results.json read");
    const double ratio = json_number(c, "margin_ratio", present);
    if (!present) add(file, fmt::format("{}: no margin_ratio (number or null)", label), "results.json read");

    const std::string margin_rule =
        is_lower ? "worst - limit_value (lower bound)" : "limit_value - worst (upper bound)";
    double expected_margin = std::nan("");
    double scale = std::max(std::fabs(limit), std::fabs(worst));
    if (std::isnan(worst)) {
      if (!std::isnan(margin) || !std::isnan(ratio))
        add(file, fmt::format("{}: no worst value, yet a margin of {}", label, engineering(margin, unit)),
            "margin recomputed as " + margin_rule);
    } else {
      expected_margin = is_lower ? worst - limit : limit - worst;
      if (std::isnan(margin) || !close(margin, expected_margin, scale))
        add(file,
            fmt::format("{}: margin {} from limit {} and worst {}", label,
                        both(margin, expected_margin, unit), engineering(limit, unit),
                        engineering(worst, unit)),
            "margin recomputed as " + margin_rule);
      const double expected_ratio = limit != 0 ? expected_margin / std::fabs(limit) : std::nan("");
      const bool ratio_ok =
          std::isnan(expected_ratio)
              ? std::isnan(ratio)
              : !std::isnan(ratio) && close(ratio, expected_ratio, scale / std::fabs(limit));
      if (!ratio_ok)
        add(file, fmt::format("{}: margin_ratio {}", label, both(ratio, expected_ratio, "")),
            "margin_ratio recomputed as margin / |limit_value|");
    }
    // checks.cpp: pass = no failed case, a margin was computed, and it is >= 0.
    const bool near_zero =
        !std::isnan(expected_margin) && std::fabs(expected_margin) <= kRelativeTolerance * scale;
    bool pass = failed_here == 0 && !std::isnan(expected_margin) && expected_margin >= 0;
    if (near_zero && failed_here == 0) pass = recorded_verdict == "pass";
    // The search for the worst case between the samples fails a check the samples pass.
    const bool search_fails = pass && c.contains("search") && c["search"].is_object() &&
                              text(c["search"], "verdict") == "fail";
    if (search_fails) pass = false;
    if ((recorded_verdict == "pass") != pass && (recorded_verdict == "pass" || recorded_verdict == "fail")) {
      std::string why;
      if (std::isnan(expected_margin))
        why = "no worst value was computed";
      else if (search_fails)
        why = "the search found a worst case between the samples that fails it";
      else if (failed_here != 0)
        why = fmt::format("failed_cases is {:g}, and a case that failed to run fails the check", failed_here);
      else
        why = fmt::format("worst {} against limit {} leaves a margin of {}", engineering(worst, unit),
                          engineering(limit, unit), engineering(expected_margin, unit));
      add(file, fmt::format("{}: verdict '{}', but {}", label, recorded_verdict, why),
          fmt::format("verdict recomputed as: no failed case and margin ({}) >= 0", margin_rule));
    }
    if (c.contains("accuracy_audit") && c["accuracy_audit"].is_object())
      audit(c["accuracy_audit"], label, unit, worst, expected_margin);
    return pass;
  }

  /// The accuracy audit of a check: change = value - worst, warning = |change| > |margin|.
  void audit(const Json& a, const std::string& label, const std::string& unit, double worst, double margin) {
    bool present = false;
    const double value = json_number(a, "value", present);
    const double change = json_number(a, "change", present);
    if (std::isnan(value) || std::isnan(worst) || std::isnan(change)) return;
    const double expected = value - worst;
    if (!close(change, expected, std::max(std::fabs(value), std::fabs(worst))))
      add("results.json", fmt::format("{}: accuracy_audit change {}", label, both(change, expected, unit)),
          "accuracy_audit.change recomputed as accuracy_audit.value - worst");
    if (!a.contains("warning") || !a["warning"].is_boolean() || std::isnan(margin)) return;
    const bool warning = !(std::fabs(expected) <= std::fabs(margin));
    if (a["warning"].get<bool>() != warning)
      add("results.json",
          fmt::format("{}: accuracy_audit warning {}, but the audit moves the worst value by {} against a "
                      "margin of {}",
                      label, a["warning"].get<bool>(), engineering(expected, unit),
                      engineering(margin, unit)),
          "accuracy_audit.warning recomputed as |change| > |margin|");
  }

 private:
  VerifyResult& r_;
};

}  // namespace

int results_schema_version(std::string_view schema) {
  constexpr std::string_view prefix = "swaybound.results/";
  if (schema.substr(0, prefix.size()) != prefix || schema.size() == prefix.size() ||
      schema.size() > prefix.size() + 6)
    return 0;
  int n = 0;
  for (char c : schema.substr(prefix.size())) {
    if (c < '0' || c > '9') return 0;
    n = n * 10 + (c - '0');
  }
  return n;
}

VerifyResult verify_packet(const std::string& path) {
  VerifyResult r;
  r.path = path;
  Verifier v(r);
  const fs::path p(path);
  std::error_code ec;
  fs::path dir, results;
  bool packet = false;
  if (fs::is_directory(p, ec)) {
    dir = p;
    results = dir / "results.json";
    if (!fs::is_regular_file(dir / "MANIFEST", ec))
      throw RunError(
          fmt::format("{} is not a swaybound packet: it has no MANIFEST (give its results.json to verify "
                      "that file alone)",
                      path));
    packet = true;
  } else if (fs::is_regular_file(p, ec)) {
    results = p;
    dir = p.has_parent_path() ? p.parent_path() : fs::path(".");
    packet = p.filename() == "results.json" && fs::is_regular_file(dir / "MANIFEST", ec);
  } else {
    throw RunError(fmt::format("cannot read {}: give a packet folder or a results.json file", path));
  }
  r.results_file = results.string();

  // The spec each recorded hash belongs to: MANIFEST's spec_sha256 is the spec given to the command
  // (spec.yaml, or input_spec.yaml for `size`); results.json's is the spec the check ran on
  // (spec.yaml, or the sized spec sized_spec.yaml).
  std::string results_spec;
  if (packet) {
    r.kind = "check packet";
    const PacketManifest m = v.manifest(dir);
    const auto spec = m.keys.find("spec");
    const auto spec_sha = m.keys.find("spec_sha256");
    if (spec == m.keys.end() || spec_sha == m.keys.end() || !plain_name(spec->second))
      v.add("MANIFEST", "lacks the 'spec:' or 'spec_sha256:' line naming the spec copy",
            "MANIFEST read line by line");
    else
      v.spec_hash(dir, spec->second, spec_sha->second, "MANIFEST spec_sha256");
    const auto sized = m.keys.find("sized spec");
    if (sized != m.keys.end() || fs::is_regular_file(dir / "sized_spec.yaml", ec)) {
      r.kind = "sizing folder";
      results_spec = "sized_spec.yaml";
      const std::string text = sized == m.keys.end() ? std::string() : sized->second;
      const auto at = text.find("sha256=");
      if (at == std::string::npos || !is_sha256_hex(text.substr(at + 7, 64)))
        v.add("MANIFEST", "lacks the 'sized spec: sized_spec.yaml sha256=...' line",
              "MANIFEST read line by line");
      else
        v.spec_hash(dir, results_spec, text.substr(at + 7, 64), "MANIFEST 'sized spec'");
    } else if (spec != m.keys.end()) {
      results_spec = spec->second;
    }
  } else {
    r.kind = "results file";
    for (const char* name : {"spec.yaml", "sized_spec.yaml"})
      if (results_spec.empty() && fs::is_regular_file(dir / name, ec)) results_spec = name;
  }
  if (!results_spec.empty() && fs::is_regular_file(dir / results_spec, ec))
    r.spec_copy = (dir / results_spec).string();

  if (!fs::is_regular_file(results, ec)) {
    v.add("results.json", "missing from the packet", "folder listing");
    return r;
  }
  Json j;
  try {
    j = Json::parse(read_bytes(results));
  } catch (const Json::exception& e) {
    if (!packet) throw RunError(fmt::format("{} is not valid JSON: {}", results.string(), e.what()));
    v.add("results.json", fmt::format("is not valid JSON: {}", e.what()), "results.json parsed");
    return r;
  }
  const std::string schema =
      j.is_object() && j.contains("schema") && j["schema"].is_string() ? j["schema"].get<std::string>() : "";
  const int version = results_schema_version(schema);
  const int ours = results_schema_version(kResultsSchema);
  if (version != 0 && version != ours)
    throw RunError(fmt::format("{}: unsupported schema version {} (this swaybound reads {})",
                               results.string(), version, ours));
  if (version == 0) {
    if (!packet)
      throw RunError(
          fmt::format("{} is not a swaybound results file (no schema {})", results.string(), kResultsSchema));
    v.add("results.json", fmt::format("is not a swaybound results file (schema '{}')", schema),
          "results.json schema read");
    return r;
  }

  const std::string recorded_spec = j.contains("spec") ? text(j["spec"], "sha256") : "";
  if (!r.spec_copy.empty()) {
    const std::string actual = sha256_file(r.spec_copy);
    if (actual != recorded_spec)
      v.add(results_spec,
            fmt::format("SHA-256 is {}, results.json records spec.sha256 {}", actual, recorded_spec),
            fmt::format("SHA-256 of {} against results.json spec.sha256", results_spec));
  } else if (packet) {
    v.add("results.json", "the spec copy its results were computed from is missing from the packet",
          "folder listing");
  }

  v.consistency(j);

  const fs::path csv = dir / "cases.csv";
  bool present = false;
  const double count = json_number(j.contains("cases") ? j["cases"] : Json(), "count", present);
  if (fs::is_regular_file(csv, ec) && present && std::isfinite(count)) {
    const long rows = csv_records(read_bytes(csv));
    r.cases_csv_counted = true;
    if (static_cast<double>(rows) != count)
      v.add("cases.csv", fmt::format("has {} case row(s), results.json counts {:g} cases", rows, count),
            "cases.csv records counted against results.json cases.count");
  } else if (packet && !fs::is_regular_file(csv, ec)) {
    v.add("cases.csv", "missing from the packet", "folder listing");
  }
  return r;
}

std::string verify_report(const VerifyResult& r) {
  std::string out;
  for (const auto& f : r.findings) out += fmt::format("{}: {} [{}]\n", f.file, f.problem, f.method);
  const std::string counted =
      fmt::format("{} file hash(es), {} check(s){}", r.files_hashed, r.checks_verified,
                  r.cases_csv_counted ? ", the cases.csv row count" : "");
  if (r.intact())
    out += fmt::format("{}: intact ({}: {} verified{})\n", r.path, r.kind, counted,
                       r.kind == "results file" ? "; no MANIFEST, so no file hash" : "");
  else
    out += fmt::format("{}: FAILS verification, {} finding(s) ({}: {} verified)\n", r.path, r.findings.size(),
                       r.kind, counted);
  return out;
}

}  // namespace swaybound
