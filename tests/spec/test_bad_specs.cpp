// The bad-spec corpus: every file in tests/bad_specs/ starts with a line
//   # expect: LINE:COLUMN KEY.PATH
// (or "# expect: file" for errors about the file as a whole) and must fail to load with a
// diagnostic at exactly that position and key path; the CLI must exit 2 and print nothing on stdout.
#include <catch2/catch.hpp>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sys/wait.h>

#include "swaybound/spec.hpp"

using namespace swaybound;
namespace fs = std::filesystem;

namespace {
struct Expectation {
  int line = 0, column = 0;
  std::string path;
};

Expectation read_expectation(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::string first;
  std::getline(in, first);
  std::smatch m;
  Expectation e;
  if (std::regex_search(first, m, std::regex(R"(# expect: (\d+):(\d+) (\S+))"))) {
    e.line = std::stoi(m[1]);
    e.column = std::stoi(m[2]);
    e.path = m[3];
  } else if (first.find("# expect: file") == std::string::npos) {
    FAIL(file.string() << ": first line must be '# expect: LINE:COL PATH' or '# expect: file'");
  }
  return e;
}

std::vector<fs::path> corpus() {
  std::vector<fs::path> files;
  for (const auto& entry : fs::directory_iterator(fs::path(SWAYBOUND_SOURCE_DIR) / "tests/bad_specs"))
    if (entry.path().extension() == ".yaml") files.push_back(entry.path());
  std::sort(files.begin(), files.end());
  return files;
}
}  // namespace

TEST_CASE("every bad spec fails with its exact position and key path", "[spec][bad]") {
  const auto files = corpus();
  CHECK(files.size() >= 25);
  for (const auto& file : files) {
    INFO(file.filename().string());
    const Expectation want = read_expectation(file);
    try {
      load_spec(file.string());
      FAIL("loaded without error");
    } catch (const SpecError& e) {
      INFO(e.what());
      bool found = false;
      for (const auto& d : e.diagnostics())
        found |= d.mark.line == want.line && d.mark.column == want.column && (want.line == 0 || d.path == want.path);
      CHECK(found);
      for (const auto& d : e.diagnostics()) CHECK_FALSE(d.fix.empty());
    }
  }
}

TEST_CASE("the CLI exits 2 on every bad spec and writes nothing to stdout", "[spec][bad][cli]") {
  for (const auto& file : corpus()) {
    INFO(file.filename().string());
    const std::string cmd = std::string(SWAYBOUND_CLI) + " validate '" + file.string() + "' 2>/dev/null";
    FILE* pipe = popen(cmd.c_str(), "r");
    REQUIRE(pipe != nullptr);
    std::string out;
    char buf[256];
    while (std::fgets(buf, sizeof buf, pipe)) out += buf;
    const int status = pclose(pipe);
    CHECK(WIFEXITED(status));
    CHECK(WEXITSTATUS(status) == 2);
    CHECK(out.empty());
  }
}
