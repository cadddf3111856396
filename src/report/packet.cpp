#include "swaybound/report/packet.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>
#include <utility>

#include <fmt/format.h>

#include "packet_switch.hpp"
#include "swaybound/core/error.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/core/version.hpp"

namespace swaybound {

namespace fs = std::filesystem;
using packet_detail::kill_point;

namespace {
constexpr const char* kManifest = "MANIFEST";

std::string read_text(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

bool is_sha256_hex(const std::string& s) {
  return s.size() == 64 && std::all_of(s.begin(), s.end(), [](char c) {
           return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'f');
         });
}

/// DIR/MANIFEST read back; empty (not a packet) when there is none.
PacketManifest read_manifest(const fs::path& dir) {
  std::error_code ec;
  if (!fs::is_regular_file(dir / kManifest, ec)) return {};
  return parse_packet_manifest(read_text(dir / kManifest));
}

/// The spec name as one MANIFEST line holds it (line breaks become spaces).
std::string manifest_name(std::string name) {
  std::replace(name.begin(), name.end(), '\n', ' ');
  std::replace(name.begin(), name.end(), '\r', ' ');
  return name;
}

/// Up to ten names, then "and N more".
std::string listing(const std::vector<std::string>& names) {
  std::string out;
  const std::size_t shown = std::min<std::size_t>(names.size(), 10);
  for (std::size_t i = 0; i < shown; ++i) out += (i ? ", " : "") + names[i];
  if (names.size() > shown) out += fmt::format(" and {} more", names.size() - shown);
  return out;
}

/// Whether `folder` is the root of a mounted file system (a packet cannot be renamed over it).
bool is_mount_point(const fs::path& folder) {
  struct statx x {};
  if (::statx(AT_FDCWD, folder.c_str(), AT_SYMLINK_NOFOLLOW, STATX_BASIC_STATS, &x) == 0 &&
      (x.stx_attributes_mask & STATX_ATTR_MOUNT_ROOT))
    return (x.stx_attributes & STATX_ATTR_MOUNT_ROOT) != 0;
  struct stat own {
  }, parent{};
  return ::stat(folder.c_str(), &own) == 0 && ::stat(folder.parent_path().c_str(), &parent) == 0 &&
         own.st_dev != parent.st_dev;
}

}  // namespace

PacketManifest parse_packet_manifest(const std::string& text) {
  PacketManifest m;
  std::istringstream in(text);
  std::string line;
  bool first = true;
  while (std::getline(in, line)) {
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (first) {
      m.header = line;
      first = false;
    } else if (!m.has_files) {
      if (line == "files:")
        m.has_files = true;
      else if (const auto colon = line.find(": "); colon != std::string::npos)
        m.keys.emplace(line.substr(0, colon), line.substr(colon + 2));
    } else if (!line.empty()) {
      if (line.size() > 66 && is_sha256_hex(line.substr(0, 64)) && line.compare(64, 2, "  ") == 0)
        m.files.emplace_back(line.substr(0, 64), line.substr(66));
      else
        m.malformed.push_back(line);
    }
  }
  return m;
}

std::string now_utc_iso8601() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buffer[32];
  std::strftime(buffer, sizeof buffer, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buffer;
}

std::string packet_spec_sha256(const std::string& dir) {
  const PacketManifest m = read_manifest(dir);
  const auto it = m.keys.find("spec_sha256");
  return m.is_packet() && it != m.keys.end() ? it->second : "";
}

std::string packet_spec_name(const std::string& dir) {
  const PacketManifest m = read_manifest(dir);
  const auto it = m.keys.find("spec_name");
  return m.is_packet() && it != m.keys.end() ? it->second : "";
}

std::vector<std::string> verify_manifest(const std::string& dir) {
  std::vector<std::string> bad;
  const PacketManifest m = read_manifest(dir);
  for (const auto& [hash, name] : m.files) {
    std::error_code ec;
    const fs::path file = fs::path(dir) / name;
    if (!fs::is_regular_file(file, ec) || sha256_file(file.string()) != hash) bad.push_back(name);
  }
  if (!m.has_files || !m.malformed.empty()) bad.push_back(kManifest);  // a file line it cannot read
  return bad;
}

std::vector<std::string> foreign_files(const std::string& dir) {
  const PacketManifest m = read_manifest(dir);
  std::set<std::string> own;
  if (m.is_packet() && m.has_files) {
    own.insert(kManifest);
    for (const auto& file : m.files) own.insert(fs::path(file.second).lexically_normal().generic_string());
  }
  std::vector<std::string> foreign;
  std::error_code ec;
  for (auto it = fs::recursive_directory_iterator(dir, ec); !ec && it != fs::recursive_directory_iterator();
       it.increment(ec)) {
    const std::string relative = it->path().lexically_relative(dir).generic_string();
    std::error_code entry_error;
    if (it->is_directory(entry_error) && !it->is_symlink(entry_error)) {
      if (fs::is_empty(it->path(), entry_error)) foreign.push_back(relative + "/");
    } else if (own.count(relative) == 0) {
      foreign.push_back(relative);
    }
  }
  if (ec) foreign.push_back(fmt::format("(the folder could not be read whole: {})", ec.message()));
  std::sort(foreign.begin(), foreign.end());
  return foreign;
}

PacketWriter::PacketWriter(std::string dir, const std::string& spec_name, const std::string& spec_sha256,
                           bool force)
    : dir_(std::move(dir)), spec_name_(manifest_name(spec_name)), spec_sha256_(spec_sha256), force_(force) {
  if (dir_.empty())
    throw RunError(
        "the output folder (--out) is empty; give the folder to write the packet to, e.g. --out "
        "reports/check");
  fs::path target = fs::absolute(dir_).lexically_normal();
  if (!target.has_filename() && target != target.root_path()) target = target.parent_path();  // "DIR/" is DIR
  std::error_code ec;
  if (fs::is_symlink(fs::symlink_status(target, ec))) {
    // Write where the link points; the link itself stays.
    target = fs::canonical(target, ec);
    if (ec)
      throw RunError(
          fmt::format("{} is a symbolic link to nothing ({}); choose another --out", dir_, ec.message()));
  }
  if (target == target.root_path())
    throw RunError(fmt::format(
        "--out {} is the root folder; choose a folder for the packet, e.g. --out reports/check", dir_));
  const auto status = fs::symlink_status(target, ec);
  if (fs::exists(status) && !fs::is_directory(status))
    throw RunError(
        fmt::format("{} exists and is not a folder; swaybound never replaces what it did not write (--force "
                    "does not change that): choose another --out",
                    dir_));
  if (fs::is_directory(status) && is_mount_point(target))
    throw RunError(
        fmt::format("{} is a mount point; a packet is written beside its folder and renamed into place, "
                    "which cannot be done to a mount point: choose a folder inside it, e.g. --out {}/packet",
                    dir_, dir_));
  target_path_ = target.string();
  const fs::path parent = target.parent_path();
  fs::create_directories(parent, ec);
  if (ec)
    throw RunError(
        fmt::format("cannot create the folder {} for the packet {}: {}; choose an --out in a folder you "
                    "can write to",
                    parent.string(), dir_, ec.message()));
  // From here to the end of the run the lock is held, so no other run writes or checks the target.
  lock_ = std::make_unique<packet_detail::OutputLock>(target, dir_);
  try {
    kill_point("locked");
    std::vector<packet_detail::RunRecord> runs =
        packet_detail::clean_stale_runs(target, lock_->recorded(), notices_);
    packet_detail::clean_legacy_temporaries(target, notices_);
    lock_->record(runs);
    kill_point("recovered");
    if (const std::string notice = check_overwrite(); !notice.empty()) notices_.push_back(notice);
    const packet_detail::RunRecord self{static_cast<long>(::getpid()), packet_detail::new_token()};
    runs.push_back(self);
    lock_->record(runs);  // recorded before the folders exist, so a killed run's folders are known
    temp_ = packet_detail::partial_folder(target, self).string();
    old_ = packet_detail::old_folder(target, self).string();
    if (!fs::create_directory(temp_, ec) || ec)
      throw RunError(
          fmt::format("cannot create a folder beside {} to write the packet: {}; choose an --out in a "
                      "folder you can write to",
                      dir_, ec ? ec.message() : "it exists"));
    kill_point("temp-created");
  } catch (...) {
    finish();
    throw;
  }
}

std::string PacketWriter::check_overwrite() const {
  const fs::path target(target_path_);
  std::error_code ec;
  const auto status = fs::symlink_status(target, ec);
  if (!fs::exists(status)) return "";
  if (!fs::is_directory(status))
    throw RunError(
        fmt::format("{} exists and is not a folder; swaybound never replaces what it did not write (--force "
                    "does not change that): choose another --out",
                    dir_));
  if (fs::is_empty(target, ec)) return "";  // nothing to lose
  const PacketManifest m = read_manifest(target);
  const std::vector<std::string> foreign = foreign_files(target_path_);
  if (!m.is_packet() || !m.has_files)
    throw RunError(
        fmt::format("{} is not empty and is not a swaybound packet (no MANIFEST): {}. swaybound never "
                    "deletes files it did not write (--force does not change that): choose another --out, "
                    "e.g. a new folder inside it, or move the files out",
                    dir_, listing(foreign)));
  if (!foreign.empty())
    throw RunError(
        fmt::format("{} holds files that swaybound did not write (not in its MANIFEST): {}. swaybound "
                    "never deletes them (--force does not change that): move them out of {}, or choose "
                    "another --out",
                    dir_, listing(foreign), dir_));
  std::vector<std::string> changed;
  for (const auto& name : verify_manifest(target_path_))
    if (fs::exists(target / name, ec)) changed.push_back(name);
  if (!changed.empty())
    throw RunError(
        fmt::format("files of the packet in {} were changed after swaybound wrote them (their SHA-256 no "
                    "longer matches its MANIFEST): {}. swaybound does not overwrite them (--force does not "
                    "change that): move them out of {}, or choose another --out",
                    dir_, listing(changed), dir_));
  const auto key = [&m](const char* name) {
    const auto it = m.keys.find(name);
    return it == m.keys.end() ? std::string() : it->second;
  };
  const std::string previous_name = key("spec_name"), previous_sha = key("spec_sha256");
  const bool same_design = !previous_name.empty() && previous_name == spec_name_;
  if (previous_sha == spec_sha256_ && (previous_name.empty() || same_design)) return "";
  if (same_design)
    return fmt::format("{}: replacing the previous revision of '{}' (spec SHA-256 {}... -> {}...)", dir_,
                       spec_name_, previous_sha.substr(0, 12), spec_sha256_.substr(0, 12));
  const std::string what =
      previous_name.empty()
          ? fmt::format("a packet of a different spec (SHA-256 {}...) that records no design name",
                        previous_sha.substr(0, 12))
          : fmt::format("the packet of another design, '{}'", previous_name);
  if (force_) return fmt::format("{}: replacing {} (--force)", dir_, what);
  throw RunError(fmt::format(
      "{} holds {}{}; pass --force to replace it, or choose another --out{}", dir_, what,
      previous_name.empty() || spec_name_.empty() ? "" : fmt::format(" (this spec is '{}')", spec_name_),
      spec_name_.empty() ? " (a spec with a `name:` replaces its own earlier revisions without --force)"
                         : ""));
}

void PacketWriter::finish() {
  if (!lock_) return;
  try {
    std::vector<packet_detail::RunRecord> runs = lock_->recorded();
    std::error_code ec;
    const bool own_left = (!temp_.empty() && fs::exists(fs::symlink_status(temp_, ec))) ||
                          (!old_.empty() && fs::exists(fs::symlink_status(old_, ec)));
    if (!own_left)
      runs.erase(std::remove_if(runs.begin(), runs.end(), [](const auto& r) { return r.pid == ::getpid(); }),
                 runs.end());
    if (!runs.empty()) lock_->record(runs);
    lock_->release(runs.empty());  // no temporaries of any run left: the lock file goes too
  } catch (...) {
    lock_->release(false);
  }
  lock_.reset();
}

PacketWriter::~PacketWriter() {
  if (!committed_ && !temp_.empty()) {
    std::error_code ec;
    fs::remove_all(temp_, ec);
  }
  finish();
}

std::vector<std::string> PacketWriter::take_notices() {
  return std::exchange(notices_, {});
}

std::string PacketWriter::path(const std::string& name) const {
  return (fs::path(temp_) / name).string();
}

void PacketWriter::write(const std::string& name, const std::string& content) {
  std::ofstream out(path(name), std::ios::binary);
  out << content;
  out.flush();
  if (!out) throw RunError(fmt::format("writing {} failed (disk full or not writable?)", path(name)));
}

void PacketWriter::commit(const ManifestInfo& info) {
  std::vector<std::string> names;
  for (const auto& entry : fs::directory_iterator(temp_))
    if (entry.is_regular_file() && entry.path().filename() != kManifest)
      names.push_back(entry.path().filename().string());
  std::sort(names.begin(), names.end());
  std::string m = std::string(kPacketManifestHeader) + "\n";
  m += fmt::format("tool: swaybound {} (commit {})\n", tool_version(), git_commit());
  m += fmt::format("compiler: {}\n", compiler_id());
  m += fmt::format("date: {}\n", info.date_utc);
  m += fmt::format("spec: {}\n", info.spec_file);
  m += fmt::format("spec_name: {}\n", manifest_name(info.spec_name));
  m += fmt::format("spec_sha256: {}\n", info.spec_sha256);
  for (const auto& s : info.settings) m += s + "\n";
  if (!info.execution.empty()) m += fmt::format("execution: {}\n", info.execution);
  m += "files:\n";
  for (const auto& name : names) m += fmt::format("{}  {}\n", sha256_file(path(name)), name);
  write(kManifest, m);
  kill_point("manifest-written");
  packet_detail::sync_folder(temp_);
  kill_point("synced");
  // Files may have been put into the target while this run was going: never switch over them.
  try {
    check_overwrite();
  } catch (const RunError& e) {
    throw RunError(std::string(e.what()) +
                   " (found when the run ended; the new packet was not put in place)");
  }
  const fs::path previous = packet_detail::switch_into_place(temp_, target_path_, old_);
  committed_ = true;
  if (!previous.empty()) {
    try {
      packet_detail::remove_folder(previous);
    } catch (const RunError& e) {
      notices_.push_back(fmt::format("{}; the next run into {} removes it", e.what(), dir_));
    }
  }
  finish();
}

}  // namespace swaybound
