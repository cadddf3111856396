#pragma once
// A packet folder written safely. Every file goes into a temporary folder beside the target; when
// complete, the files and folders are flushed to disk and the folder takes the target's place in
// one atomic step, so a run that is interrupted, fails or is killed leaves either the whole
// previous packet or the whole new one. An exclusive lock beside the target keeps two runs from
// writing it at once, and each run cleans up the temporaries of earlier runs that were killed.
//
// The overwrite rule: a packet's own files are those listed in its MANIFEST plus MANIFEST itself.
// Anything else in the target folder (a reviewer's signed copy, notes, a subfolder), a packet file
// changed since it was written, or a target that is a file or a mount point: the run refuses
// before any work, listing what is in the way, and `force` does not change that. A packet of the
// same design (the same spec `name:`) is replaced without `force` (a new revision); a packet of
// another design needs `force`.
#include <map>
#include <memory>
#include <string>
#include <vector>

namespace swaybound {

namespace packet_detail {
class OutputLock;
}

struct ManifestInfo {
  std::string spec_file;  ///< name of the spec copy inside the packet
  std::string spec_name;  ///< the spec's `name:` (the design); recorded as "spec_name:"
  std::string spec_sha256;
  std::string date_utc;               ///< ISO 8601
  std::vector<std::string> settings;  ///< "key: value" lines (solver, seeds, cases), host-independent
  std::string execution;  ///< how the cases ran, e.g. "2 MPI ranks x 1 thread each"; empty: not recorded
};

class PacketWriter {
 public:
  /// Before any work: checks that `dir` can be written and the overwrite rule allows replacing it,
  /// takes the lock, cleans up after killed runs and creates the temporary folder. Throws
  /// RunError with what is wrong and the fix (nothing is written then). `spec_name` and
  /// `spec_sha256` identify the design and revision of the packet to be written.
  PacketWriter(std::string dir, const std::string& spec_name, const std::string& spec_sha256, bool force);
  ~PacketWriter();  ///< removes the temporary folder unless committed, and releases the lock
  PacketWriter(const PacketWriter&) = delete;
  PacketWriter& operator=(const PacketWriter&) = delete;

  /// Path of `name` inside the temporary folder (for writers that open files themselves).
  std::string path(const std::string& name) const;
  /// Writes `content` to `name` (throws RunError on any write error, e.g. a full disk).
  void write(const std::string& name, const std::string& content);
  /// Writes MANIFEST (every file with its SHA-256, tool, compiler, settings) and puts the folder
  /// in place of the target (throws RunError, leaving the previous packet, when files that are not
  /// the packet's own appeared in the target during the run).
  void commit(const ManifestInfo& info);
  const std::string& target() const { return dir_; }
  /// What the writer did that a user should hear of (a previous revision replaced, temporaries of
  /// a killed run removed or its packet restored); cleared by each call.
  std::vector<std::string> take_notices();

 private:
  /// Throws RunError when the overwrite rule forbids replacing the target; else what replacing it
  /// means ("" for nothing to say).
  std::string check_overwrite() const;
  /// Releases the lock, keeping this run in the lock file's record while its folders remain.
  void finish();

  std::string dir_;  ///< as given
  std::string spec_name_, spec_sha256_;
  bool force_ = false;
  std::string target_path_;  ///< absolute, normalised, symbolic link resolved
  std::string temp_, old_;   ///< this run's folders beside the target
  std::unique_ptr<packet_detail::OutputLock> lock_;
  std::vector<std::string> notices_;
  bool committed_ = false;
};

inline constexpr const char* kPacketManifestHeader = "swaybound packet manifest 1";

/// MANIFEST as PacketWriter::commit writes it: the header line, "key: value" lines (any number,
/// any keys), "files:", then one "SHA-256  name" line per file. One reader for the writer's own
/// overwrite rules and for `verify`.
struct PacketManifest {
  std::string header;                                      ///< first line
  std::map<std::string, std::string> keys;                 ///< lines before "files:"
  bool has_files = false;                                  ///< a "files:" line was found
  std::vector<std::pair<std::string, std::string>> files;  ///< (SHA-256, name) in file order
  std::vector<std::string> malformed;                      ///< file lines that are not "SHA-256  name"
  bool is_packet() const { return header == kPacketManifestHeader; }
};

/// Parses MANIFEST text (CR-LF tolerated).
PacketManifest parse_packet_manifest(const std::string& text);

/// The spec SHA-256 recorded in a packet's MANIFEST, or "" when `dir` holds no packet.
std::string packet_spec_sha256(const std::string& dir);

/// The spec name (the design) recorded in a packet's MANIFEST, or "" when `dir` holds no packet or
/// one written before names were recorded.
std::string packet_spec_name(const std::string& dir);

/// Verifies every file line of DIR/MANIFEST against the files; returns the names that differ or
/// are missing (empty: the packet is intact).
std::vector<std::string> verify_manifest(const std::string& dir);

/// Every file in `dir` and its subfolders (paths relative to `dir`, sorted; an empty subfolder as
/// "name/") that is not MANIFEST or listed in it: what swaybound did not write there. For a folder
/// without a packet MANIFEST, everything in it.
std::vector<std::string> foreign_files(const std::string& dir);

/// Current UTC time as ISO 8601, e.g. 2026-12-01T22:40:00Z.
std::string now_utc_iso8601();

}  // namespace swaybound
