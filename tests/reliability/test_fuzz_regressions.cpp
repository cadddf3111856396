// Inputs found by fuzzing the spec loader (tests/fuzz, .ci/fuzz-short), minimised, kept as
// regressions beside their bad specs (tests/bad_specs/082-084). Inputs that once hung are loaded in
// a child process with an alarm, so a regression fails this test instead of hanging the suite.
#include <catch2/catch.hpp>
#include <csignal>
#include <string>
#include <sys/wait.h>
#include <unistd.h>

#include "swaybound/spec.hpp"

using namespace swaybound;

namespace {

/// Loads `text` in a child process that has `seconds` of CPU-independent wall time (SIGALRM);
/// returns the child's exit code: 0 = SpecError, 1 = loaded, 2 = another exception, -signal.
int load_in_child(const std::string& text, unsigned seconds) {
  const pid_t pid = ::fork();
  REQUIRE(pid >= 0);
  if (pid == 0) {
    ::alarm(seconds);
    int code = 1;
    try {
      (void)load_spec_text(text, "fuzz.yaml");
    } catch (const SpecError&) {
      code = 0;
    } catch (...) {
      code = 2;
    }
    ::_exit(code);
  }
  int status = 0;
  ::waitpid(pid, &status, 0);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -WTERMSIG(status);
}

/// The single diagnostic of a SpecError from `text`.
Diagnostic only_diagnostic(const std::string& text) {
  try {
    (void)load_spec_text(text, "fuzz.yaml");
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() >= 1);
    return e.diagnostics().front();
  }
  FAIL("loaded without a SpecError");
  return {};
}

}  // namespace

TEST_CASE("a ',' that no list or map holds is a YAML error, not an endless loop", "[spec][bad][fuzz]") {
  // yaml-cpp 0.7's LoadAll appends empty documents forever on these (jbeder/yaml-cpp#1040), growing
  // memory by about 100 MB/s; the loader now stops at the first document that makes no progress.
  for (const std::string text : {",", "[1],", ", swaybound: 1\nname: x\n", "swaybound: 1\n---\n,\n",
                                 "{swaybound: 1},", ",,,,", "- a\n...\n,"}) {
    INFO(text);
    CHECK(load_in_child(text, 10) == 0);
  }
  const Diagnostic d = only_diagnostic("{swaybound: 1, name: x},\n");
  CHECK(d.mark.line == 1);
  CHECK(d.mark.column == 24);
  CHECK(d.path.empty());
  CHECK(d.message.find("unexpected ','") != std::string::npos);
}

TEST_CASE("a wind load without 'link' on a chain with no valid link is reported, not a crash", "[spec][bad][fuzz]") {
  // WindSpec::link defaults to 0, and the loader read links[0].com as the default load point
  // for a wind map without 'link' even when no link had been read (minimised fuzz input below).
  CHECK(load_in_child("wind: {,sa: 1.2}\nvc", 10) == 0);
  CHECK(load_in_child("swaybound: 1\nname: x\nlinks: 3\nwind: {speed: 1 m/s}\n", 10) == 0);
  try {
    (void)load_spec_text("links: 3\nwind: {speed: 1 m/s, drag_area: 1, drag_coefficient: 1}\n", "fuzz.yaml");
    FAIL("loaded");
  } catch (const SpecError& e) {
    bool found = false;
    for (const auto& d : e.diagnostics()) found |= d.path == "wind.link" && d.mark.line == 2 && d.mark.column == 7;
    CHECK(found);
  }
}
