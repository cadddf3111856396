#include "swaybound/report/packet.hpp"

#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <fmt/format.h>

#include "swaybound/core/error.hpp"
#include "swaybound/core/hash.hpp"
#include "swaybound/core/version.hpp"

namespace swaybound {

namespace fs = std::filesystem;

namespace {
constexpr const char* kManifest = "MANIFEST";
constexpr const char* kManifestHeader = "swaybound packet manifest 1";

std::string read_text(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}
}  // namespace

std::string now_utc_iso8601() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buffer[32];
  std::strftime(buffer, sizeof buffer, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buffer;
}

std::string packet_spec_sha256(const std::string& dir) {
  const fs::path manifest = fs::path(dir) / kManifest;
  std::error_code ec;
  if (!fs::is_regular_file(manifest, ec)) return "";
  std::istringstream in(read_text(manifest));
  std::string line;
  if (!std::getline(in, line) || line != kManifestHeader) return "";
  while (std::getline(in, line))
    if (line.rfind("spec_sha256: ", 0) == 0) return line.substr(13);
  return "";
}

std::vector<std::string> verify_manifest(const std::string& dir) {
  std::vector<std::string> bad;
  std::istringstream in(read_text(fs::path(dir) / kManifest));
  std::string line;
  bool files = false;
  while (std::getline(in, line)) {
    if (line == "files:") {
      files = true;
      continue;
    }
    if (!files || line.size() < 67) continue;
    const std::string hash = line.substr(0, 64), name = line.substr(66);
    std::error_code ec;
    if (!fs::is_regular_file(fs::path(dir) / name, ec) || sha256_file((fs::path(dir) / name).string()) != hash)
      bad.push_back(name);
  }
  if (!files) bad.push_back(kManifest);
  return bad;
}

PacketWriter::PacketWriter(std::string dir, const std::string& spec_sha256, bool force) : dir_(std::move(dir)) {
  const fs::path target(dir_);
  std::error_code ec;
  if (fs::exists(target, ec) && !force) {
    if (!fs::is_directory(target, ec))
      throw RunError(fmt::format("{} exists and is not a folder; choose another --out or pass --force", dir_));
    const bool empty = fs::is_empty(target, ec);
    const std::string previous = packet_spec_sha256(dir_);
    if (!empty && previous.empty())
      throw RunError(fmt::format("{} holds files that are not a swaybound packet; choose another --out or pass "
                                 "--force to replace the folder",
                                 dir_));
    if (!empty && previous != spec_sha256)
      throw RunError(fmt::format("{} holds a packet made from a different spec (SHA-256 {}...); pass --force to "
                                 "replace it, or choose another --out",
                                 dir_, previous.substr(0, 12)));
  }
  const fs::path parent = target.has_parent_path() ? target.parent_path() : fs::path(".");
  fs::create_directories(parent, ec);
  temp_ = (parent / fmt::format(".{}.partial-{}", target.filename().string(), ::getpid())).string();
  fs::remove_all(temp_, ec);
  if (!fs::create_directory(temp_, ec) || ec)
    throw RunError(fmt::format("cannot create a folder beside {} to write the packet: {}", dir_,
                               ec ? ec.message() : "unknown error"));
}

PacketWriter::~PacketWriter() {
  if (committed_) return;
  std::error_code ec;
  fs::remove_all(temp_, ec);
}

std::string PacketWriter::path(const std::string& name) const { return (fs::path(temp_) / name).string(); }

void PacketWriter::write(const std::string& name, const std::string& content) {
  std::ofstream out(path(name), std::ios::binary);
  out << content;
  out.flush();
  if (!out) throw RunError(fmt::format("writing {} failed (disk full or not writable?)", path(name)));
}

void PacketWriter::commit(const ManifestInfo& info) {
  std::vector<std::string> names;
  for (const auto& entry : fs::directory_iterator(temp_))
    if (entry.is_regular_file() && entry.path().filename() != kManifest) names.push_back(entry.path().filename().string());
  std::sort(names.begin(), names.end());
  std::string m = std::string(kManifestHeader) + "\n";
  m += fmt::format("tool: swaybound {} (commit {})\n", tool_version(), git_commit());
  m += fmt::format("compiler: {}\n", compiler_id());
  m += fmt::format("date: {}\n", info.date_utc);
  m += fmt::format("spec: {}\n", info.spec_file);
  m += fmt::format("spec_sha256: {}\n", info.spec_sha256);
  for (const auto& s : info.settings) m += s + "\n";
  m += "files:\n";
  for (const auto& name : names) m += fmt::format("{}  {}\n", sha256_file(path(name)), name);
  write(kManifest, m);
  // Swap in: the old packet moves aside, the new one takes its name, the old one is removed.
  const fs::path target(dir_);
  const fs::path old = fs::path(temp_).string() + ".old";
  std::error_code ec;
  if (fs::exists(target, ec)) fs::rename(target, old);
  fs::rename(temp_, target);
  committed_ = true;
  fs::remove_all(old, ec);
}

}  // namespace swaybound
