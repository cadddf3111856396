// The bad-spec corpus: every file in tests/bad_specs/ starts with a line
//   # expect: LINE:COLUMN KEY.PATH
// (or "# expect: LINE:COLUMN" for a positioned error that has no key path, such as a YAML syntax
// error or an invalid UTF-8 byte, or "# expect: file" for errors about the file as a whole) and must
// fail to load with a diagnostic at exactly that position and key path; the CLI must exit 2 and
// print nothing on stdout. Columns count bytes from 1.
//
// The errors that cannot live in the corpus (a file over the size cap, a folder, a missing or
// unreadable file) are tested at the end of this file with temporary files.
#include <catch2/catch.hpp>
#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sys/wait.h>
#include <unistd.h>

#include "swaybound/spec.hpp"
#include "../support/process.hpp"

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
  if (std::regex_search(first, m, std::regex(R"(^# expect: (\d+):(\d+)(?: (\S+))?\s*$)"))) {
    e.line = std::stoi(m[1]);
    e.column = std::stoi(m[2]);
    e.path = m[3].matched ? m[3].str() : std::string();  // no path: the diagnostic has none
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

TEST_CASE("the CLI exits 2 on every bad spec, writes nothing to stdout and no output folder",
          "[spec][bad][cli]") {
  const fs::path out = fs::temp_directory_path() / fmt::format("swaybound_bad_spec_out_{}", ::getpid());
  fs::remove_all(out);
  for (const auto& file : corpus()) {
    INFO(file.filename().string());
    for (const std::string command : {"validate", "check", "size"}) {
      INFO(command);
      std::string cmd = fmt::format("{} {} '{}'", SWAYBOUND_CLI, command, file.string());
      if (command != "validate") cmd += fmt::format(" --out '{}' --quiet", out.string());
      const auto r = swaybound::testing::run_command(cmd + " 2>/dev/null");
      REQUIRE(r.started);
      CHECK(r.exited);
      CHECK(r.status == 2);
      CHECK(r.out.empty());
      CHECK_FALSE(fs::exists(out));
    }
  }
  // Nor a half-written folder beside it.
  for (const auto& entry : fs::directory_iterator(out.parent_path()))
    CHECK(entry.path().filename().string().find(out.filename().string() + ".swaybound-") == std::string::npos);
}

TEST_CASE("alias bombs in the corpus are rejected quickly", "[spec][bad]") {
  // yaml-cpp shares aliased nodes instead of copying them and the loader never walks into a value it
  // has rejected, so nine levels of nine aliases (9^9 leaves if expanded) must cost nothing.
  for (const char* name : {"062_alias_bomb_under_unknown_key.yaml", "063_alias_bomb_under_name.yaml"}) {
    INFO(name);
    const auto start = std::chrono::steady_clock::now();
    CHECK_THROWS_AS(load_spec(std::string(SWAYBOUND_SOURCE_DIR) + "/tests/bad_specs/" + name), SpecError);
    const std::chrono::duration<double> took = std::chrono::steady_clock::now() - start;
    CHECK(took.count() < 1.0);
  }
}

namespace {
/// A path in the temporary folder that is removed (with whatever is there) when it goes out of scope.
struct TempPath {
  fs::path path;
  explicit TempPath(const std::string& stem)
      : path(fs::temp_directory_path() / fmt::format("swaybound_test_{}_{}", stem, ::getpid())) {
    fs::remove_all(path);
  }
  ~TempPath() {
    std::error_code ec;
    fs::permissions(path, fs::perms::owner_all, fs::perm_options::add, ec);
    fs::remove_all(path, ec);
  }
};

/// Loads `path`, expecting a SpecError about the file as a whole (line 0); returns its message.
std::string whole_file_error(const fs::path& path) {
  try {
    load_spec(path.string());
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].mark.line == 0);
    CHECK(e.diagnostics()[0].mark.column == 0);
    CHECK_FALSE(e.diagnostics()[0].fix.empty());
    return e.diagnostics()[0].message;
  }
  FAIL("loaded " << path << " without a SpecError");
  return {};
}

constexpr const char* kValidSpec =
    "swaybound: 1\nname: arm\nlinks: [{name: arm, length: 2 m, mass: 10 kg}]\n"
    "cases: {duration: 5 s, initial: [{single: {theta: [10 deg]}}]}\n";
}  // namespace

TEST_CASE("a spec file over the 4 MiB cap is refused before it is parsed", "[spec][bad][files]") {
  const TempPath big("too_big.yaml");
  {
    std::ofstream out(big.path, std::ios::binary);
    out << kValidSpec;
    const std::string filler = "# padding: a design spec is a few kilobytes, this one is not\n";
    while (static_cast<std::size_t>(out.tellp()) <= kMaxSpecBytes) out << filler;
  }
  REQUIRE(fs::file_size(big.path) > kMaxSpecBytes);
  CHECK(whole_file_error(big.path).find("byte limit") != std::string::npos);

  // A 100 MB file (sparse, so the test writes almost nothing) is refused from its size alone.
  const TempPath huge("huge.yaml");
  { std::ofstream(huge.path, std::ios::binary) << kValidSpec; }
  fs::resize_file(huge.path, std::uintmax_t{100} * 1000 * 1000);
  CHECK(whole_file_error(huge.path).find("byte limit") != std::string::npos);

  // The same cap holds for text given in memory.
  const std::string text = std::string(kValidSpec) + std::string(kMaxSpecBytes, '\n');
  try {
    load_spec_text(text, "in_memory.yaml");
    FAIL("loaded text over the cap");
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].mark.line == 0);
  }
}

TEST_CASE("a folder and a missing file are whole-file errors", "[spec][bad][files]") {
  const TempPath folder("folder.yaml");
  fs::create_directory(folder.path);
  CHECK(whole_file_error(folder.path).find("folder") != std::string::npos);

  const TempPath missing("missing.yaml");
  REQUIRE_FALSE(fs::exists(missing.path));
  CHECK(whole_file_error(missing.path).find("does not exist") != std::string::npos);
}

TEST_CASE("an unreadable spec file is a whole-file error", "[spec][bad][files]") {
  const TempPath file("unreadable.yaml");
  { std::ofstream(file.path) << kValidSpec; }
  REQUIRE_NOTHROW(load_spec(file.path.string()));  // readable, the file itself is fine
  fs::permissions(file.path, fs::perms::none);
  if (std::ifstream(file.path).good()) {
    // Running as root (or with CAP_DAC_OVERRIDE): permissions are not enforced, so the file stays
    // readable and this case cannot be produced here. Skipped, not faked.
    WARN("skipped: mode 000 does not stop this process from reading the file (running as root?)");
    return;
  }
  CHECK(whole_file_error(file.path).find("cannot read") != std::string::npos);
}

TEST_CASE("a repeated key names the line of the first key, not of its value", "[spec][bad]") {
  const char* text =
      "swaybound: 1\nname: dup\nlinks:\n  - name: arm\n    length: 2 m\n    mass: 10 kg\n"
      "    pivot:\n      damper: {coefficient: 1 kN m s/rad}\n"
      "    pivot:\n      damper: {coefficient: 2 kN m s/rad}\n"
      "cases: {duration: 5 s, initial: [{single: {theta: [10 deg]}}]}\n";
  try {
    load_spec_text(text, "dup.yaml");
    FAIL("loaded a spec with a repeated key");
  } catch (const SpecError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].mark.line == 9);
    CHECK(e.diagnostics()[0].path == "links[0].pivot");
    CHECK(e.diagnostics()[0].message.find("first given at line 7") != std::string::npos);
  }
}
