#include "packet_switch.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <sys/random.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <set>
#include <sstream>

#include <fmt/format.h>

#include "swaybound/core/error.hpp"
#include "swaybound/report/packet.hpp"

namespace swaybound::packet_detail {

namespace {

constexpr const char* kLockHeader = "swaybound output lock 1";

fs::path beside(const fs::path& target, const std::string& suffix) {
  return target.parent_path() / fmt::format(".{}{}", target.filename().string(), suffix);
}

std::string error_text(int error) {
  return std::strerror(error);
}

/// Whether process `pid` may still be running (kill(pid, 0) says it exists or is not ours).
bool process_alive(long pid) {
  if (pid <= 0) return false;
  return ::kill(static_cast<pid_t>(pid), 0) == 0 || errno == EPERM;
}

void fsync_path(const fs::path& path, int flags) {
  const int fd = ::open(path.c_str(), flags | O_CLOEXEC);
  if (fd < 0)
    throw RunError(fmt::format("cannot open {} to flush it to disk: {}", path.string(), error_text(errno)));
  const int status = ::fsync(fd);
  const int error = errno;
  ::close(fd);
  // Some file systems cannot fsync a folder (EINVAL); the data itself was flushed.
  if (status != 0 && !(error == EINVAL && (flags & O_DIRECTORY)))
    throw RunError(fmt::format("flushing {} to disk failed: {}", path.string(), error_text(error)));
}

std::string read_all(int fd) {
  std::string text;
  char buffer[4096];
  if (::lseek(fd, 0, SEEK_SET) < 0) return text;
  ssize_t n;
  while ((n = ::read(fd, buffer, sizeof buffer)) > 0) text.append(buffer, static_cast<std::size_t>(n));
  return text;
}

/// The holder's pid recorded in a lock file's text, or 0.
long holder_pid(const std::string& text) {
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line))
    if (line.rfind("holder: ", 0) == 0) return std::strtol(line.c_str() + 8, nullptr, 10);
  return 0;
}

bool valid_token(const std::string& token) {
  if (token.size() != 16) return false;
  for (const char c : token)
    if (!((c >= '0' && c <= '9') || (c >= 'a' && c <= 'f'))) return false;
  return true;
}

}  // namespace

fs::path partial_folder(const fs::path& target, const RunRecord& run) {
  return beside(target, fmt::format(".swaybound-partial-{}-{}", run.pid, run.token));
}
fs::path old_folder(const fs::path& target, const RunRecord& run) {
  return beside(target, fmt::format(".swaybound-old-{}-{}", run.pid, run.token));
}
fs::path lock_file(const fs::path& target) {
  return beside(target, ".swaybound-lock");
}

OutputLock::OutputLock(const fs::path& target, const std::string& shown) : path_(lock_file(target)) {
  // A run that finishes removes the lock file while it still holds the lock; a run that opened the
  // old file just before may then lock a file no longer in the folder, so it checks that the file
  // it locked is still the one at the path, and tries again if not.
  for (int attempt = 0; attempt < 20; ++attempt) {
    const int fd = ::open(path_.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (fd < 0)
      throw RunError(
          fmt::format("cannot write beside {} (the lock file {}): {}; choose an --out in a folder you can "
                      "write to",
                      shown, path_.filename().string(), error_text(errno)));
    if (::flock(fd, LOCK_EX | LOCK_NB) != 0) {
      const int error = errno;
      const long other = holder_pid(read_all(fd));
      ::close(fd);
      if (error == EWOULDBLOCK)
        throw RunError(
            fmt::format("another swaybound run{} is writing {} now; wait for it to finish, or choose "
                        "another --out",
                        other > 0 ? fmt::format(" (process {})", other) : "", shown));
      throw RunError(
          fmt::format("cannot lock {} beside {}: {}", path_.filename().string(), shown, error_text(error)));
    }
    struct stat locked {
    }, current{};
    if (::fstat(fd, &locked) == 0 && ::stat(path_.c_str(), &current) == 0 &&
        locked.st_ino == current.st_ino && locked.st_dev == current.st_dev) {
      fd_ = fd;
      return;
    }
    ::close(fd);
  }
  throw RunError(fmt::format("cannot take the lock {} beside {}: it keeps being replaced",
                             path_.filename().string(), shown));
}

OutputLock::~OutputLock() {
  release(false);
}

std::vector<RunRecord> OutputLock::recorded() const {
  std::vector<RunRecord> runs;
  std::istringstream in(read_all(fd_));
  std::string line;
  if (!std::getline(in, line) || line != kLockHeader) return runs;
  while (std::getline(in, line)) {
    if (line.rfind("run: ", 0) != 0) continue;
    std::istringstream fields(line.substr(5));
    RunRecord run;
    if (fields >> run.pid >> run.token && run.pid > 0 && valid_token(run.token)) runs.push_back(run);
  }
  return runs;
}

void OutputLock::record(const std::vector<RunRecord>& runs) {
  std::string text = fmt::format("{}\nholder: {}\n", kLockHeader, ::getpid());
  for (const auto& run : runs) text += fmt::format("run: {} {}\n", run.pid, run.token);
  if (::ftruncate(fd_, 0) != 0 ||
      ::pwrite(fd_, text.data(), text.size(), 0) != static_cast<ssize_t>(text.size()) || ::fsync(fd_) != 0)
    throw RunError(fmt::format("cannot write the lock file {}: {}", path_.string(), error_text(errno)));
}

void OutputLock::release(bool remove) {
  if (fd_ < 0) return;
  if (remove) ::unlink(path_.c_str());  // still locked, so no other run is between open and lock
  ::close(fd_);                         // releases the flock
  fd_ = -1;
}

std::vector<RunRecord> clean_stale_runs(const fs::path& target, const std::vector<RunRecord>& runs,
                                        std::vector<std::string>& notices) {
  std::vector<RunRecord> kept;
  for (const auto& run : runs) {
    // The lock is ours, so the recorded run no longer holds it; a live process with its pid is
    // either a reused pid or a run we cannot account for: leave its folders alone.
    if (run.pid == ::getpid() || process_alive(run.pid)) {
      kept.push_back(run);
      continue;
    }
    const fs::path partial = partial_folder(target, run), old = old_folder(target, run);
    std::error_code ec;
    bool clean = true;
    if (!fs::exists(fs::symlink_status(target, ec)) && fs::is_directory(fs::symlink_status(old, ec))) {
      // Killed between moving the old packet aside and renaming the new one in: put the old one back.
      fs::rename(old, target, ec);
      if (ec) {
        clean = false;
        notices.push_back(
            fmt::format("could not restore the previous packet from {}: {}", old.string(), ec.message()));
      } else {
        fsync_path(target.parent_path(), O_RDONLY | O_DIRECTORY);
        notices.push_back(
            fmt::format("restored the previous packet that an interrupted run (process {}) had moved "
                        "aside",
                        run.pid));
      }
    }
    for (const auto& folder : {partial, old}) {
      if (!fs::exists(fs::symlink_status(folder, ec))) continue;
      fs::remove_all(folder, ec);
      if (ec) {
        clean = false;
        notices.push_back(fmt::format("could not remove {}: {}", folder.string(), ec.message()));
      } else {
        notices.push_back(fmt::format("removed {}, left by an interrupted run (process {})",
                                      folder.filename().string(), run.pid));
      }
    }
    if (!clean) kept.push_back(run);
  }
  return kept;
}

void clean_legacy_temporaries(const fs::path& target, std::vector<std::string>& notices) {
  // The files `check` and `size` write; a legacy half-written folder holds some of them.
  static const std::set<std::string> packet_names{"MANIFEST",
                                                  "cases.csv",
                                                  "results.json",
                                                  "spec.yaml",
                                                  "input_spec.yaml",
                                                  "report.pdf",
                                                  "report.html",
                                                  "sized_spec.yaml",
                                                  "sizing.md",
                                                  "sizing.json",
                                                  "sizing_history.csv",
                                                  "convergence_objective.svg",
                                                  "convergence_margin.svg",
                                                  "convergence_objective.png",
                                                  "convergence_margin.png"};
  const std::string prefix = fmt::format(".{}.partial-", target.filename().string());
  std::error_code ec;
  std::vector<fs::path> candidates;
  for (auto it = fs::directory_iterator(target.parent_path(), ec); !ec && it != fs::directory_iterator();
       it.increment(ec)) {
    const std::string name = it->path().filename().string();
    if (name.rfind(prefix, 0) == 0 && it->is_directory() && !it->is_symlink())
      candidates.push_back(it->path());
  }
  std::sort(candidates.begin(), candidates.end());
  for (const auto& folder : candidates) {
    std::string rest = folder.filename().string().substr(prefix.size());
    const bool old = rest.size() > 4 && rest.compare(rest.size() - 4, 4, ".old") == 0;
    if (old) rest.resize(rest.size() - 4);
    if (rest.empty() || rest.size() > 9 || rest.find_first_not_of("0123456789") != std::string::npos)
      continue;
    const long pid = std::stol(rest);
    if (process_alive(pid)) continue;
    if (old) {
      if (!verify_manifest(folder.string()).empty() || !foreign_files(folder.string()).empty()) continue;
      if (!fs::exists(fs::symlink_status(target, ec))) {
        fs::rename(folder, target, ec);
        if (ec) continue;
        fsync_path(target.parent_path(), O_RDONLY | O_DIRECTORY);
        notices.push_back(
            fmt::format("restored the previous packet from {}, which an interrupted run (process {}) "
                        "had moved aside",
                        folder.filename().string(), pid));
        continue;
      }
    } else {
      bool ours = true;
      for (auto it = fs::directory_iterator(folder, ec); ours && !ec && it != fs::directory_iterator();
           it.increment(ec))
        ours = it->is_regular_file() && !it->is_symlink() &&
               packet_names.count(it->path().filename().string()) > 0;
      if (!ours || ec) continue;
    }
    fs::remove_all(folder, ec);
    if (!ec)
      notices.push_back(fmt::format("removed {}, left by an interrupted run (process {})",
                                    folder.filename().string(), pid));
  }
}

std::string new_token() {
  unsigned long long value = 0;
  if (::getrandom(&value, sizeof value, 0) != static_cast<ssize_t>(sizeof value))
    value = static_cast<unsigned long long>(std::chrono::steady_clock::now().time_since_epoch().count()) ^
            (static_cast<unsigned long long>(::getpid()) << 32);
  return fmt::format("{:016x}", value);
}

void sync_folder(const fs::path& folder) {
  for (const auto& entry : fs::directory_iterator(folder))
    if (entry.is_regular_file()) fsync_path(entry.path(), O_RDONLY);
  fsync_path(folder, O_RDONLY | O_DIRECTORY);
}

fs::path switch_into_place(const fs::path& partial, const fs::path& target, const fs::path& old) {
  std::error_code ec;
  const bool replacing = fs::exists(fs::symlink_status(target, ec));
  const auto fail = [&](const char* what, int error) {
    return RunError(fmt::format("{} {} failed: {}", what, target.string(), error_text(error)));
  };
  fs::path previous;
  if (!replacing) {
    if (::rename(partial.c_str(), target.c_str()) != 0) throw fail("renaming the new packet to", errno);
    kill_point("renamed-in");
  } else {
    const bool exchange_allowed = std::getenv("SWAYBOUND_TEST_NO_EXCHANGE") == nullptr;
    int error = EINVAL;
    if (exchange_allowed &&
        ::renameat2(AT_FDCWD, partial.c_str(), AT_FDCWD, target.c_str(), RENAME_EXCHANGE) == 0) {
      previous = partial;
      kill_point("exchanged");
    } else {
      if (exchange_allowed) error = errno;
      if (error != EINVAL && error != ENOSYS && error != ENOTSUP)
        throw fail("exchanging the new packet with", error);
      // No atomic exchange here: move the old packet aside, then the new one in. A run killed in
      // between leaves no target and a complete old packet, which the next run restores.
      if (::rename(target.c_str(), old.c_str()) != 0) throw fail("moving aside the previous packet", errno);
      kill_point("moved-aside");
      if (::rename(partial.c_str(), target.c_str()) != 0) {
        const int rename_error = errno;
        ::rename(old.c_str(), target.c_str());
        throw fail("renaming the new packet to", rename_error);
      }
      previous = old;
      kill_point("renamed-in");
    }
  }
  fsync_path(target.parent_path(), O_RDONLY | O_DIRECTORY);
  kill_point("parent-synced");
  return previous;
}

void remove_folder(const fs::path& folder) {
  std::error_code ec;
  std::vector<fs::path> files;
  for (auto it = fs::directory_iterator(folder, ec); !ec && it != fs::directory_iterator(); it.increment(ec))
    if (it->is_regular_file()) files.push_back(it->path());
  if (!files.empty()) {
    fs::remove(files.front(), ec);
    kill_point("old-half-removed");
  }
  fs::remove_all(folder, ec);
  if (ec) throw RunError(fmt::format("cannot remove {}: {}", folder.string(), ec.message()));
  kill_point("old-removed");
}

void kill_point(const char* step) {
  const char* at = std::getenv("SWAYBOUND_TEST_KILL_AT");
  if (at != nullptr && std::strcmp(at, step) == 0) std::raise(SIGKILL);
}

}  // namespace swaybound::packet_detail
