// Bounded memory and time: the cap on samples per case, `simulate` streaming its samples, the
// decimated recordings of governing cases, the note on a binding wall-clock budget, the caps on
// text fields and report rendering that stays linear and stops on a signal.
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>
#include <catch2/catch.hpp>
#include <chrono>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "../support/process.hpp"
#include "swaybound/checks/check_run.hpp"
#include "swaybound/core/cancel.hpp"
#include "swaybound/report/document.hpp"
#include "swaybound/report/results.hpp"
#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {

std::string one_link_spec(const std::string& cases, const std::string& extra = "") {
  return "swaybound: 1\nname: one link\nlinks:\n  - {name: arm, length: 2 m, mass: 10 kg}\n"
         "cases: {" +
         cases + ", initial: [{single: {theta: [10 deg]}}]}\nlimits:\n  - {peak_angle: 30 deg}\n" + extra;
}

/// A folder in the temporary folder, removed with its contents at the end of the scope.
struct TempDir {
  fs::path path;
  explicit TempDir(const std::string& stem)
      : path(fs::temp_directory_path() / fmt::format("swaybound_bounded_{}_{}", stem, ::getpid())) {
    fs::remove_all(path);
    fs::create_directories(path);
  }
  ~TempDir() {
    std::error_code ignored;
    fs::remove_all(path, ignored);
  }
};

/// Runs `command` through the shell in a child process and returns {exit status, the largest
/// resident set of the command [kB]} (from getrusage of the child's own children, so no other
/// process of the test counts).
std::pair<int, long> run_measured(const std::string& command) {
  int fds[2];
  REQUIRE(::pipe(fds) == 0);
  const pid_t pid = ::fork();
  REQUIRE(pid >= 0);
  if (pid == 0) {
    ::close(fds[0]);
    const int status = std::system(command.c_str());
    rusage usage{};
    ::getrusage(RUSAGE_CHILDREN, &usage);
    const long values[2] = {WIFEXITED(status) ? WEXITSTATUS(status) : -1, usage.ru_maxrss};
    (void)!::write(fds[1], values, sizeof values);
    ::_exit(0);
  }
  ::close(fds[1]);
  long values[2] = {-1, -1};
  (void)!::read(fds[0], values, sizeof values);
  ::close(fds[0]);
  int ignored;
  ::waitpid(pid, &ignored, 0);
  return {static_cast<int>(values[0]), values[1]};
}

std::size_t count_lines(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::size_t n = 0;
  std::string line;
  while (std::getline(in, line)) ++n;
  return n;
}

}  // namespace

TEST_CASE("a spec whose samples per case exceed the cap is refused unless the cap is lifted",
          "[reliability][spec]") {
  // 20,000 s at 1e5 samples/s: 2e9 samples per case (it grew to 2.6 GB and died with bad_alloc).
  const std::string text = one_link_spec("duration: 20000 s, output_rate: 100000 /s");
  try {
    load_spec_text(text, "inline.yaml");
    FAIL("accepted");
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].path == "cases.output_rate");
    CHECK(e.diagnostics()[0].mark.line == 5);
    CHECK(e.diagnostics()[0].fix.find("--max-samples") != std::string::npos);
  }
  // Exactly at the cap: 10,000,000 samples (the one at t = 0 included) load; one more does not.
  CHECK_NOTHROW(load_spec_text(one_link_spec("duration: 99999.99 s, output_rate: 100 /s"), "inline.yaml"));
  CHECK_THROWS_AS(load_spec_text(one_link_spec("duration: 100000 s, output_rate: 100 /s"), "inline.yaml"),
                  SpecError);
  LoadOptions lifted;
  lifted.max_samples = 3'000'000'000L;
  CHECK(load_spec_text(text, "inline.yaml", lifted).cases.output_rate == 100000);
  // The CLI: exit 2 without the option, 0 with it.
  TempDir dir("cap");
  std::ofstream(dir.path / "spec.yaml") << text;
  const auto refused = testing::run_command(
      fmt::format("{} validate '{}' 2>/dev/null", SWAYBOUND_CLI, (dir.path / "spec.yaml").string()));
  CHECK(refused.status == 2);
  CHECK(refused.out.empty());
  const auto accepted =
      testing::run_command(fmt::format("{} validate '{}' --max-samples 3000000000 2>/dev/null", SWAYBOUND_CLI,
                                       (dir.path / "spec.yaml").string()));
  CHECK(accepted.status == 0);
}

TEST_CASE("simulate streams its samples to a file beside the output", "[reliability][cli]") {
  TempDir dir("simulate");
  const fs::path csv = dir.path / "series.csv";
  const std::string spec = std::string(SWAYBOUND_SOURCE_DIR) + "/specs/gantry_hook_block.yaml";
  // 400 s at 500 samples/s: 200,001 rows, about 49 MB of CSV. Kept in memory (twice: the stream and
  // its copy) the process grew to 134 MB; streamed it stays near its size without the samples.
  const auto [status, peak_kb] =
      run_measured(fmt::format("{} simulate '{}' --duration '400 s' --output-rate 500 -o '{}' 2>/dev/null",
                               SWAYBOUND_CLI, spec, csv.string()));
  REQUIRE(status == 0);
  REQUIRE(fs::exists(csv));
  const auto bytes = fs::file_size(csv);
  CHECK(count_lines(csv) == 200'002);  // the header and every sample
  // The same at a quarter of the length: streamed, the peak resident set hardly grows with the
  // samples (compared as growth, so a sanitizer's fixed overhead cancels out).
  const fs::path shorter = dir.path / "shorter.csv";
  const auto [short_status, short_kb] =
      run_measured(fmt::format("{} simulate '{}' --duration '100 s' --output-rate 500 -o '{}' 2>/dev/null",
                               SWAYBOUND_CLI, spec, shorter.string()));
  REQUIRE(short_status == 0);
  const auto short_bytes = fs::file_size(shorter);
  fs::remove(shorter);
  INFO("peak resident set " << short_kb << " kB for " << short_bytes << " bytes of CSV, " << peak_kb << " kB for "
                            << bytes << " bytes");
  CHECK((peak_kb - short_kb) * 1024 < static_cast<long>(bytes - short_bytes) / 4);
  // Nothing but the output is left in the folder.
  CHECK(std::distance(fs::directory_iterator(dir.path), fs::directory_iterator()) == 1);

  // A run that fails (the step budget runs out) writes nothing and leaves no partial file.
  const fs::path failing = dir.path / "failing.yaml";
  std::ofstream(failing) << one_link_spec("duration: 5000 s", "solver: {max_steps: 100}\n");
  const fs::path none = dir.path / "none.csv";
  const auto failed =
      testing::run_command(fmt::format("{} simulate '{}' --theta '10 deg' -o '{}' 2>/dev/null", SWAYBOUND_CLI,
                                       failing.string(), none.string()));
  CHECK(failed.status == 2);
  CHECK_FALSE(fs::exists(none));
  CHECK(std::distance(fs::directory_iterator(dir.path), fs::directory_iterator()) ==
        2);  // series.csv, failing.yaml

  // Standard output gets the same bytes.
  const auto out =
      testing::run_command(fmt::format("{} simulate '{}' --duration '2 s' 2>/dev/null", SWAYBOUND_CLI, spec));
  CHECK(out.status == 0);
  CHECK(std::count(out.out.begin(), out.out.end(), '\n') == 2 + 100);  // header and 0..2 s at 50 /s

  // --duration and --output-rate are held to the same cap as the spec.
  const auto capped = testing::run_command(
      fmt::format("{} simulate '{}' --duration '20000 s' --output-rate 100000 -o '{}' 2>/dev/null",
                  SWAYBOUND_CLI, spec, none.string()));
  CHECK(capped.status == 2);
  CHECK_FALSE(fs::exists(none));
}

TEST_CASE("recordings of governing cases keep at most kMaxRecordedPoints per series",
          "[reliability][checks]") {
  // 100 s at 100 samples/s: 10,001 samples, kept every 3rd (3,334 points).
  const Spec spec = load_spec_text(one_link_spec("duration: 100 s, output_rate: 100 /s"), "inline.yaml");
  CheckOptions options;
  options.audit = false;
  const CheckReport report = run_check(spec, options);
  REQUIRE(report.recorded.size() == 1);
  const RecordedCase& rc = report.recorded.front();
  CHECK(rc.stride == 3);
  CHECK(rc.t.size() == 3334);
  CHECK(static_cast<long>(rc.t.size()) <= kMaxRecordedPoints);
  CHECK(rc.theta.front().size() == rc.t.size());
  CHECK(rc.t.front() == 0);
  CHECK(rc.t[1] == Approx(0.03));
  CHECK(rc.t.back() == Approx(99.99));
  // A short run is kept whole.
  const Spec short_spec = load_spec_text(one_link_spec("duration: 2 s"), "inline.yaml");
  const CheckReport short_report = run_check(short_spec, options);
  REQUIRE(short_report.recorded.size() == 1);
  CHECK(short_report.recorded.front().stride == 1);
  CHECK(short_report.recorded.front().t.size() == 101);
}

TEST_CASE("a binding wall-clock budget marks the results as not reproducible",
          "[reliability][checks][report]") {
  CheckOptions options;
  options.audit = false;
  options.record = false;
  // 1 ns per case: the case stops on the wall-clock budget at its first look at the clock (every
  // 256 steps; 500 s of swinging takes thousands).
  const Spec spec =
      load_spec_text(one_link_spec("duration: 500 s", "solver: {max_seconds: 1e-9 s}\n"), "inline.yaml");
  const CheckReport report = run_check(spec, options);
  REQUIRE(report.failed_total == 1);
  CHECK(report.failed.front().status == "time_budget");
  CHECK(report.time_budget_total == 1);
  const auto json = nlohmann::json::parse(results_json(spec, report));
  CHECK(json["reproducible"] == false);
  REQUIRE(json["notes"].size() == 1);
  CHECK(json["notes"][0].get<std::string>().find("not reproducible") != std::string::npos);
  CHECK(json["notes"][0].get<std::string>().find("solver.max_steps") != std::string::npos);
  const std::string html = report_html(spec, report);
  CHECK(html.find("not reproducible") != std::string::npos);
  // Without a binding budget: reproducible, no note.
  const Spec normal = load_spec_text(one_link_spec("duration: 5 s"), "inline.yaml");
  const CheckReport normal_report = run_check(normal, options);
  const auto normal_json = nlohmann::json::parse(results_json(normal, normal_report));
  CHECK(normal_json["reproducible"] == true);
  CHECK(normal_json["notes"].empty());
  CHECK(report_html(normal, normal_report).find("not reproducible") == std::string::npos);
}

TEST_CASE(
    "names and titles at their caps load; the report renders long text in linear time and stops on a signal",
    "[reliability][report][spec]") {
  const std::string name(kMaxNameChars, 'n');
  const std::string title(kMaxTextChars, 't');
  Spec spec = load_spec_text(
      "swaybound: 1\nname: " + name + "\nlinks:\n  - {name: " + name +
          ", length: 2 m, mass: 10 kg}\ncases: {duration: 1 s, initial: [{single: {theta: [10 deg]}}]}\n"
          "limits:\n  - {peak_angle: 30 deg}\nreport: {title: " +
          title + "}\n",
      "inline.yaml");
  CHECK(spec.name == name);
  CHECK(spec.report.title == title);
  CheckOptions options;
  options.audit = false;
  const CheckReport report = run_check(spec, options);
  TempDir dir("render");
  // Text the loader can no longer produce, set directly: a 100,000-character word. Pango's wrapping
  // of a word that does not fit is quadratic in its length (20,000 characters took 3.6 s in a whole
  // `check`, so this took over a minute); with break opportunities every 80 characters it is linear.
  spec.name = std::string(100'000, 'x');
  spec.report.title = spec.name;
  const auto start = std::chrono::steady_clock::now();
  REQUIRE_NOTHROW(write_report_pdf(spec, report, (dir.path / "report.pdf").string()));
  const std::chrono::duration<double> took = std::chrono::steady_clock::now() - start;
  CHECK(took.count() < 20.0);
  // A signal stops the rendering with Interrupted, the same as a case.
  request_cancel(15);
  CHECK_THROWS_AS(write_report_pdf(spec, report, (dir.path / "cancelled.pdf").string()), Interrupted);
  CHECK_THROWS_AS(report_html(spec, report), Interrupted);
  clear_cancel();
}
