// Packet safety through the CLI: files swaybound did not write are never deleted, a SIGKILL at any
// step of the replacement leaves the whole old or the whole new packet (and the next run cleans
// up), two runs cannot write one packet at once, and output that cannot be written is reported
// before any case runs.
#include <fcntl.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>
#include <catch2/catch.hpp>
#include <cerrno>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <thread>

#include <fmt/format.h>

#include "swaybound/core/hash.hpp"
#include "swaybound/report/packet.hpp"
#include "../support/packet_files.hpp"

using namespace swaybound;
namespace fs = std::filesystem;
using swaybound::testing::leftovers;

namespace {

/// An empty scratch folder for one test.
fs::path scratch(const std::string& name) {
  const fs::path p = fs::temp_directory_path() / ("swaybound-safety-" + name);
  fs::remove_all(p);
  fs::create_directories(p);
  return p;
}

/// A one-link spec named `name`; `damper` makes revisions, `count` x `duration` sets the run time.
std::string spec_yaml(const std::string& name, double damper, int count = 1, double duration = 1) {
  return fmt::format(R"(swaybound: 1
name: {}
links:
  - {{name: arm, length: 1, mass: 1, com: 1, inertia: 0, pivot: {{damper: {{coefficient: {} N m s/rad}}}}}}
cases: {{duration: {} s, initial: [{{random: {{count: {}, seed: 3, theta: [[-5 deg, 5 deg]]}}}}]}}
limits:
  - {{peak_angle: 20 deg}}
)",
                     name, damper, duration, count);
}

fs::path write_file(const fs::path& path, const std::string& text) {
  std::ofstream(path, std::ios::binary) << text;
  return path;
}

std::string read_file(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

struct Run {
  bool exited = false;
  int code = -1;    ///< exit status when exited
  int signal = 0;   ///< the signal that ended it otherwise
  std::string err;  ///< its stderr
};

/// Starts the CLI with `args` and the extra environment `env`; stderr goes to `err_file`.
pid_t start_cli(const std::vector<std::string>& args,
                const std::vector<std::pair<std::string, std::string>>& env, const fs::path& err_file) {
  std::fflush(stdout);  // else the child would write out what the parent had buffered
  std::fflush(stderr);
  const pid_t pid = fork();
  if (pid == 0) {
    for (const auto& [key, value] : env) ::setenv(key.c_str(), value.c_str(), 1);
    std::freopen("/dev/null", "w", stdout);
    std::freopen(err_file.c_str(), "w", stderr);
    std::vector<char*> argv{const_cast<char*>(SWAYBOUND_CLI)};
    for (const auto& a : args) argv.push_back(const_cast<char*>(a.c_str()));
    argv.push_back(nullptr);
    ::execv(SWAYBOUND_CLI, argv.data());
    _exit(127);
  }
  return pid;
}

Run finish_cli(pid_t pid, const fs::path& err_file) {
  int status = 0;
  ::waitpid(pid, &status, 0);
  Run r;
  r.exited = WIFEXITED(status);
  if (r.exited) r.code = WEXITSTATUS(status);
  if (WIFSIGNALED(status)) r.signal = WTERMSIG(status);
  r.err = read_file(err_file);
  return r;
}

Run cli(const std::vector<std::string>& args,
        const std::vector<std::pair<std::string, std::string>>& env = {}) {
  const fs::path err_file = fs::temp_directory_path() / fmt::format("swaybound-safety-stderr-{}", ::getpid());
  return finish_cli(start_cli(args, env, err_file), err_file);
}

Run check(const fs::path& spec, const fs::path& out, std::vector<std::string> extra = {},
          const std::vector<std::pair<std::string, std::string>>& env = {}) {
  std::vector<std::string> args{"check",   spec.string(), "--out",  out.string(),
                                "--quiet", "--no-audit",  "--jobs", "1"};
  args.insert(args.end(), extra.begin(), extra.end());
  return cli(args, env);
}


/// `out` holds exactly the whole packet of the spec with SHA-256 `sha`: every MANIFEST hash
/// verifies and nothing else is in the folder.
bool whole_packet(const fs::path& out, const std::string& sha) {
  return fs::is_directory(out) && packet_spec_sha256(out.string()) == sha &&
         verify_manifest(out.string()).empty() && foreign_files(out.string()).empty();
}

bool contains(const std::string& text, const std::string& part) {
  return text.find(part) != std::string::npos;
}

/// The line `check` prints after the output checks and before the cases run.
constexpr const char* kCasesLine = " cases (";

}  // namespace

TEST_CASE("files a reviewer put into a packet are never deleted: the run refuses and names them",
          "[packet][reliability]") {
  const fs::path dir = scratch("reviewer"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  REQUIRE(check(spec, out).code == 0);
  const std::string sha = sha256_file(spec.string());
  write_file(out / "signed_review.txt", "approved, J. Doe");
  fs::create_directories(out / "markup");
  write_file(out / "markup" / "page3.txt", "redline");
  const auto intact = [&]() {
    CHECK(read_file(out / "signed_review.txt") == "approved, J. Doe");
    CHECK(read_file(out / "markup" / "page3.txt") == "redline");
    CHECK(packet_spec_sha256(out.string()) == sha);
    CHECK(verify_manifest(out.string()).empty());
    CHECK(leftovers(out).empty());
  };
  SECTION("the same spec again") {
    const Run r = check(spec, out);
    CHECK(r.code == 2);
    CHECK(contains(r.err, "markup/page3.txt, signed_review.txt"));
    CHECK_FALSE(contains(r.err, kCasesLine));
    intact();
  }
  SECTION("with --force") {
    CHECK(check(spec, out, {"--force"}).code == 2);
    intact();
  }
  SECTION("a new revision") {
    write_file(spec, spec_yaml("hook block", 6));
    CHECK(check(spec, out).code == 2);
    write_file(spec, spec_yaml("hook block", 5));
    intact();
  }
  SECTION("many files: ten are named, then how many more") {
    for (int k = 0; k < 12; ++k) write_file(out / fmt::format("note{:02}.txt", k), "x");
    const Run r = check(spec, out);
    CHECK(r.code == 2);
    CHECK(contains(r.err, "note08.txt and 4 more"));
    CHECK(fs::exists(out / "note11.txt"));
  }
}

TEST_CASE("a folder that is not a packet is never replaced, even with --force", "[packet][reliability]") {
  // `check spec_dir/spec.yaml --out spec_dir --force` once deleted the spec and its notes.
  const fs::path dir = scratch("spec-folder");
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  write_file(dir / "notes.txt", "design notes");
  const Run r = check(spec, dir, {"--force"});
  CHECK(r.code == 2);
  CHECK(contains(r.err, "not a swaybound packet"));
  CHECK(contains(r.err, "notes.txt, spec.yaml"));
  CHECK(read_file(dir / "notes.txt") == "design notes");
  CHECK(sha256_file(spec.string()) == sha256_hex(spec_yaml("hook block", 5)));
  CHECK(leftovers(dir).empty());
  // A folder inside it is the way out.
  CHECK(check(spec, dir / "packet").code == 0);
  CHECK(whole_packet(dir / "packet", sha256_file(spec.string())));
}

TEST_CASE("a packet file changed after it was written is not overwritten", "[packet][reliability]") {
  const fs::path dir = scratch("changed"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  REQUIRE(check(spec, out).code == 0);
  std::ofstream(out / "report.html", std::ios::app) << "<!-- reviewer's comment -->";
  const std::string edited = read_file(out / "report.html");
  const Run r = check(spec, out);
  CHECK(r.code == 2);
  CHECK(contains(r.err, "changed after swaybound wrote them"));
  CHECK(contains(r.err, "report.html"));
  CHECK(read_file(out / "report.html") == edited);
}

TEST_CASE("a new revision of a design replaces its packet without --force, another design needs it",
          "[packet][reliability]") {
  const fs::path dir = scratch("revisions"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  REQUIRE(check(spec, out).code == 0);
  CHECK(packet_spec_name(out.string()) == "hook block");
  write_file(spec, spec_yaml("hook block", 6));
  Run r = check(spec, out);
  CHECK(r.code == 0);
  CHECK(contains(r.err, "replacing the previous revision of 'hook block'"));
  const std::string second = sha256_file(spec.string());
  CHECK(whole_packet(out, second));
  write_file(spec, spec_yaml("boom tip", 6));
  r = check(spec, out);
  CHECK(r.code == 2);
  CHECK(contains(r.err, "another design, 'hook block'"));
  CHECK_FALSE(contains(r.err, kCasesLine));
  CHECK(whole_packet(out, second));
  CHECK(leftovers(out).empty());
  CHECK(check(spec, out, {"--force"}).code == 0);
  CHECK(whole_packet(out, sha256_file(spec.string())));
  CHECK(packet_spec_name(out.string()) == "boom tip");
}

TEST_CASE("a packet written before design names were recorded stays readable and replaceable",
          "[packet][reliability]") {
  const fs::path dir = scratch("legacy"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  const auto make_legacy = [&]() {
    // The MANIFEST as earlier versions wrote it: no spec_name line (MANIFEST is not in its own list).
    std::istringstream in(read_file(out / "MANIFEST"));
    std::string line, text;
    while (std::getline(in, line))
      if (line.rfind("spec_name: ", 0) != 0) text += line + "\n";
    write_file(out / "MANIFEST", text);
  };
  REQUIRE(check(spec, out).code == 0);
  const std::string first = sha256_file(spec.string());
  make_legacy();
  CHECK(packet_spec_name(out.string()).empty());
  CHECK(packet_spec_sha256(out.string()) == first);
  CHECK(verify_manifest(out.string()).empty());
  CHECK(check(spec, out).code == 0);  // the same spec: replaced as before
  make_legacy();
  write_file(spec, spec_yaml("hook block", 6));
  const Run r = check(spec, out);
  CHECK(r.code == 2);
  CHECK(contains(r.err, "records no design name"));
  CHECK(whole_packet(out, first));
  CHECK(check(spec, out, {"--force"}).code == 0);
  CHECK(whole_packet(out, sha256_file(spec.string())));
}

namespace {

/// Whether this file system can exchange two folders in one step (renameat2 RENAME_EXCHANGE).
bool exchange_supported(const fs::path& dir) {
  fs::create_directories(dir / "a");
  fs::create_directories(dir / "b");
  const bool ok =
      ::renameat2(AT_FDCWD, (dir / "a").c_str(), AT_FDCWD, (dir / "b").c_str(), RENAME_EXCHANGE) == 0;
  fs::remove_all(dir / "a");
  fs::remove_all(dir / "b");
  return ok;
}

/// Kills a run that replaces a packet at `step` (SIGKILL from the test hook), then checks what a
/// crash there must leave: the whole old packet (`new_expected` false) or the whole new one, and
/// some leftovers of the killed run; then runs again and checks that the new packet is in place
/// and nothing of either run is left beside it.
void kill_at(const std::string& step, bool fallback, bool new_expected) {
  INFO("step " << step << (fallback ? " (no exchange)" : ""));
  const fs::path dir = scratch(fmt::format("kill-{}-{}", step, fallback)), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  REQUIRE(check(spec, out).code == 0);
  const std::string old_sha = sha256_file(spec.string());
  write_file(spec, spec_yaml("hook block", 6));
  const std::string new_sha = sha256_file(spec.string());
  std::vector<std::pair<std::string, std::string>> env{{"SWAYBOUND_TEST_KILL_AT", step}};
  if (fallback) env.emplace_back("SWAYBOUND_TEST_NO_EXCHANGE", "1");
  const Run killed = check(spec, out, {}, env);
  REQUIRE(killed.signal == SIGKILL);
  CHECK_FALSE(leftovers(out).empty());
  if (step == "moved-aside") {
    // Between the two renames there is no target; the next run puts the old packet back first
    // (checked here by killing that run right after its recovery step).
    CHECK_FALSE(fs::exists(out));
    const Run recovering = check(spec, out, {}, {{"SWAYBOUND_TEST_KILL_AT", "recovered"}});
    REQUIRE(recovering.signal == SIGKILL);
    CHECK(whole_packet(out, old_sha));
  } else {
    CHECK(whole_packet(out, new_expected ? new_sha : old_sha));
  }
  const Run next = check(spec, out);
  CHECK(next.code == 0);
  CHECK(whole_packet(out, new_sha));
  CHECK(leftovers(out).empty());
}

}  // namespace

TEST_CASE("a SIGKILL at any step of the replacement leaves the whole old or the whole new packet",
          "[packet][reliability][interrupt]") {
  const std::vector<std::string> before{"locked", "recovered", "temp-created", "manifest-written", "synced"};
  const std::vector<std::string> after{"parent-synced", "old-half-removed", "old-removed"};
  SECTION("with an atomic exchange") {
    if (!exchange_supported(scratch("exchange-probe"))) {
      WARN("this file system has no RENAME_EXCHANGE; the exchange steps are not tested here");
      return;
    }
    for (const auto& step : before) kill_at(step, false, false);
    kill_at("exchanged", false, true);
    for (const auto& step : after) kill_at(step, false, true);
  }
  SECTION("without it (rename aside, then in)") {
    for (const auto& step : before) kill_at(step, true, false);
    kill_at("moved-aside", true, false);
    kill_at("renamed-in", true, true);
    for (const auto& step : after) kill_at(step, true, true);
  }
  SECTION("writing a first packet") {
    const fs::path dir = scratch("kill-first"), out = dir / "packet";
    const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
    REQUIRE(check(spec, out, {}, {{"SWAYBOUND_TEST_KILL_AT", "synced"}}).signal == SIGKILL);
    CHECK_FALSE(fs::exists(out));
    REQUIRE(check(spec, out, {}, {{"SWAYBOUND_TEST_KILL_AT", "renamed-in"}}).signal == SIGKILL);
    CHECK(whole_packet(out, sha256_file(spec.string())));
    CHECK(check(spec, out).code == 0);
    CHECK(leftovers(out).empty());
  }
}

TEST_CASE("folders beside a packet that are not provably a killed run's are left alone",
          "[packet][reliability]") {
  const fs::path dir = scratch("not-ours"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  // Named like a temporary but recorded by no run.
  const fs::path lookalike = dir / ".packet.swaybound-partial-999999-0123456789abcdef";
  fs::create_directories(lookalike);
  write_file(lookalike / "keep.txt", "not swaybound's");
  REQUIRE(check(spec, out).code == 0);
  CHECK(read_file(lookalike / "keep.txt") == "not swaybound's");
  // Recorded, but its process is alive (this test process): not removed either.
  const std::string token = "00000000000000aa";
  const fs::path live = dir / fmt::format(".packet.swaybound-partial-{}-{}", ::getpid(), token);
  fs::create_directories(live);
  write_file(dir / ".packet.swaybound-lock",
             fmt::format("swaybound output lock 1\nholder: {}\nrun: {} {}\n", ::getpid(), ::getpid(), token));
  CHECK(check(spec, out).code == 0);
  CHECK(fs::exists(live));
  CHECK(fs::exists(lookalike / "keep.txt"));
}

TEST_CASE("leftovers of killed runs of earlier versions are recovered or removed when provably theirs",
          "[packet][reliability]") {
  // Earlier versions wrote into .NAME.partial-PID and moved the old packet to .NAME.partial-PID.old;
  // a SIGKILL between their two renames left no packet at all.
  const fs::path dir = scratch("legacy-leftovers"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  REQUIRE(check(spec, out).code == 0);
  const std::string old_sha = sha256_file(spec.string());
  long dead = 999999;
  while (::kill(static_cast<pid_t>(dead), 0) == 0 || errno != ESRCH) ++dead;
  fs::rename(out, dir / fmt::format(".packet.partial-{}.old", dead));
  const fs::path half = dir / fmt::format(".packet.partial-{}", dead);
  fs::create_directories(half);
  write_file(half / "cases.csv", "case,peak\n");
  // Named the same way but holding a file no packet has: not provably a run's, so kept.
  const fs::path lookalike = dir / fmt::format(".packet.partial-{}", dead + 1);
  fs::create_directories(lookalike);
  write_file(lookalike / "notes.txt", "keep");
  write_file(spec, spec_yaml("hook block", 6));
  REQUIRE(check(spec, out, {}, {{"SWAYBOUND_TEST_KILL_AT", "recovered"}}).signal == SIGKILL);
  CHECK(whole_packet(out, old_sha));
  CHECK_FALSE(fs::exists(half));
  CHECK_FALSE(fs::exists(dir / fmt::format(".packet.partial-{}.old", dead)));
  CHECK(read_file(lookalike / "notes.txt") == "keep");
  const Run next = check(spec, out);
  CHECK(next.code == 0);
  CHECK(whole_packet(out, sha256_file(spec.string())));
}

TEST_CASE("size follows the same rule for its output folder", "[packet][reliability][sizing]") {
  const fs::path dir = scratch("size"), out = dir / "sized";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5, 1, 10) + R"(sizing:
  variables:
    - {path: "links[arm].pivot.damper.coefficient", range: [0.5 N m s/rad, 10 N m s/rad], cost: 1}
  budget: {evaluations: 20}
)");
  REQUIRE(cli({"size", spec.string(), "--out", out.string(), "--quiet"}).code == 0);
  const std::string sha = sha256_file(spec.string());
  write_file(out / "signed_review.txt", "approved");
  const Run r = cli({"size", spec.string(), "--out", out.string(), "--quiet", "--force"});
  CHECK(r.code == 2);
  CHECK(contains(r.err, "signed_review.txt"));
  CHECK(read_file(out / "signed_review.txt") == "approved");
  CHECK(packet_spec_sha256(out.string()) == sha);
  CHECK(verify_manifest(out.string()).empty());
  CHECK(leftovers(out).empty());
}

TEST_CASE("two runs writing one packet at once: the second refuses at once and names the first",
          "[packet][reliability]") {
  const fs::path dir = scratch("two-runs"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  REQUIRE(check(spec, out).code == 0);
  const std::string sha = sha256_file(spec.string());
  const fs::path slow = write_file(dir / "slow.yaml", spec_yaml("hook block", 0.01, 2000, 3000));
  const fs::path first_err = dir / "first.err";
  const pid_t first =
      start_cli({"check", slow.string(), "--out", out.string(), "--quiet", "--jobs", "1"}, {}, first_err);
  const fs::path lock = dir / ".packet.swaybound-lock";
  // Up to 30 s for the first run to take the lock (start-up is slow on a loaded machine).
  for (int k = 0; k < 1200 && !contains(read_file(lock), fmt::format("holder: {}", first)); ++k)
    std::this_thread::sleep_for(std::chrono::milliseconds(25));
  REQUIRE(contains(read_file(lock), fmt::format("holder: {}", first)));
  const auto start = std::chrono::steady_clock::now();
  const Run second = check(spec, out);
  const std::chrono::duration<double> took = std::chrono::steady_clock::now() - start;
  CHECK(second.code == 2);
  CHECK(contains(second.err, fmt::format("another swaybound run (process {}) is writing", first)));
  CHECK_FALSE(contains(second.err, kCasesLine));
  CHECK(took.count() < 5.0);
  ::kill(first, SIGTERM);
  const Run first_run = finish_cli(first, first_err);
  CHECK(first_run.code == 128 + SIGTERM);
  CHECK(whole_packet(out, sha));
  CHECK(leftovers(out).empty());
}

TEST_CASE("files put into the packet while a run is going stop its replacement", "[packet][reliability]") {
  const fs::path dir = scratch("during"), out = dir / "packet";
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  REQUIRE(check(spec, out).code == 0);
  const std::string sha = sha256_file(spec.string());
  write_file(spec, spec_yaml("hook block", 0.01, 24, 2000));
  const fs::path err = dir / "run.err";
  const pid_t pid =
      start_cli({"check", spec.string(), "--out", out.string(), "--quiet", "--jobs", "1"}, {}, err);
  const auto partial_exists = [&]() {
    for (const auto& name : leftovers(out))
      if (contains(name, "swaybound-partial")) return true;
    return false;
  };
  // Up to 30 s for the run to start: on a loaded machine (two sanitizer builds and a suite beside
  // it) start-up alone took more than the 4 s this loop waited before.
  for (int k = 0; k < 3000 && !partial_exists(); ++k)
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  REQUIRE(partial_exists());
  write_file(out / "signed_review.txt", "approved");
  const Run r = finish_cli(pid, err);
  CHECK(r.code == 2);
  CHECK(contains(r.err, "signed_review.txt"));
  CHECK(contains(r.err, "the new packet was not put in place"));
  CHECK(read_file(out / "signed_review.txt") == "approved");
  fs::remove(out / "signed_review.txt");
  CHECK(whole_packet(out, sha));
  CHECK(leftovers(out).empty());
}

TEST_CASE("output that cannot be written is reported before any case runs", "[packet][reliability]") {
  const fs::path dir = scratch("unwritable");
  const fs::path spec = write_file(dir / "spec.yaml", spec_yaml("hook block", 5));
  SECTION("an empty --out") {
    const fs::path cwd = fs::current_path();
    fs::current_path(dir);
    const Run r = check(spec, "");
    fs::current_path(cwd);
    CHECK(r.code == 2);
    CHECK(contains(r.err, "(--out) is empty"));
    CHECK_FALSE(contains(r.err, kCasesLine));
    CHECK_FALSE(contains(r.err, "internal error"));
    std::vector<std::string> entries;
    for (const auto& entry : fs::directory_iterator(dir)) entries.push_back(entry.path().filename().string());
    CHECK(entries == std::vector<std::string>{"spec.yaml"});
  }
  SECTION("a file where the folder should be, even with --force") {
    write_file(dir / "packet", "a file");
    const Run r = check(spec, dir / "packet", {"--force"});
    CHECK(r.code == 2);
    CHECK(contains(r.err, "is not a folder"));
    CHECK(read_file(dir / "packet") == "a file");
    CHECK(leftovers(dir / "packet").empty());
  }
  SECTION("a trailing slash names the same folder") {
    CHECK(check(spec, dir.string() + "/packet/").code == 0);
    CHECK(whole_packet(dir / "packet", sha256_file(spec.string())));
    CHECK(check(spec, dir.string() + "/packet/").code == 0);
    CHECK(leftovers(dir / "packet").empty());
  }
  SECTION("a mount point") {
    fs::path mount;
    for (const char* candidate : {"/dev/shm", "/proc", "/sys"}) {
      struct stat own {
      }, parent{};
      if (::stat(candidate, &own) == 0 && ::stat(fs::path(candidate).parent_path().c_str(), &parent) == 0 &&
          own.st_dev != parent.st_dev) {
        mount = candidate;
        break;
      }
    }
    if (mount.empty()) {
      WARN("no mount point found to test with");
      return;
    }
    const Run r = check(spec, mount);
    CHECK(r.code == 2);
    CHECK(contains(r.err, "is a mount point"));
    CHECK_FALSE(contains(r.err, kCasesLine));
    CHECK(leftovers(mount).empty());
  }
  SECTION("a folder that cannot be written") {
    if (::geteuid() == 0) {
      WARN("running as root, which may write a read-only folder; the unwritable-folder check is skipped");
      return;
    }
    fs::create_directories(dir / "locked");
    fs::permissions(dir / "locked", fs::perms::owner_read | fs::perms::owner_exec);
    const Run r = check(spec, dir / "locked" / "packet");
    fs::permissions(dir / "locked", fs::perms::owner_all);
    CHECK(r.code == 2);
    CHECK(contains(r.err, "cannot write beside"));
    CHECK_FALSE(contains(r.err, kCasesLine));
    CHECK(fs::is_empty(dir / "locked"));
  }
}
