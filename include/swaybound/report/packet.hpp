#pragma once
// A packet folder written safely: every file goes into a temporary folder beside the target, and
// the folder is renamed into place only when complete, so an interrupted or failed run leaves the
// previous packet intact and no half packet. Replacing a packet made from a different spec (or a
// folder that is not a packet) needs `force`.
#include <string>
#include <vector>

namespace swaybound {

struct ManifestInfo {
  std::string spec_file;        ///< name of the spec copy inside the packet
  std::string spec_sha256;
  std::string date_utc;         ///< ISO 8601
  std::vector<std::string> settings;  ///< "key: value" lines (solver, seeds, cases), host-independent
};

class PacketWriter {
 public:
  /// Checks the overwrite rule (throws RunError with the fix when it forbids replacing `dir`) and
  /// creates the temporary folder (throws RunError when it cannot be written).
  PacketWriter(std::string dir, const std::string& spec_sha256, bool force);
  ~PacketWriter();  ///< removes the temporary folder unless committed
  PacketWriter(const PacketWriter&) = delete;
  PacketWriter& operator=(const PacketWriter&) = delete;

  /// Path of `name` inside the temporary folder (for writers that open files themselves).
  std::string path(const std::string& name) const;
  /// Writes `content` to `name` (throws RunError on any write error, e.g. a full disk).
  void write(const std::string& name, const std::string& content);
  /// Writes MANIFEST (every file with its SHA-256, tool, compiler, settings) and renames the
  /// folder into place.
  void commit(const ManifestInfo& info);
  const std::string& target() const { return dir_; }

 private:
  std::string dir_, temp_;
  bool committed_ = false;
};

/// The spec SHA-256 recorded in a packet's MANIFEST, or "" when `dir` holds no packet.
std::string packet_spec_sha256(const std::string& dir);

/// Verifies every file line of DIR/MANIFEST against the files; returns the names that differ or
/// are missing (empty: the packet is intact).
std::vector<std::string> verify_manifest(const std::string& dir);

/// Current UTC time as ISO 8601, e.g. 2026-12-01T22:40:00Z.
std::string now_utc_iso8601();

}  // namespace swaybound
