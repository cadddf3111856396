#pragma once
// The file-system side of PacketWriter (report/packet.hpp): the exclusive lock beside the output
// folder, the record of each run's temporary folders kept in that lock file (so a later run can
// tell which leftovers are provably a killed run's own and clean or recover them), the fsyncs and
// the one-step switch of the new packet into place. Internal to src/report.
#include <filesystem>
#include <string>
#include <vector>

namespace swaybound::packet_detail {

namespace fs = std::filesystem;

/// One run recorded in the lock file: its process id and the random token in its folder names.
struct RunRecord {
  long pid = 0;
  std::string token;
};

/// The names beside the target `NAME` that belong to the run `run`: `.NAME.swaybound-partial-PID-TOKEN`
/// (the new packet being written; after an exchange it holds the old packet until removed) and
/// `.NAME.swaybound-old-PID-TOKEN` (the old packet moved aside, only on file systems without an
/// atomic exchange).
fs::path partial_folder(const fs::path& target, const RunRecord& run);
fs::path old_folder(const fs::path& target, const RunRecord& run);
/// `.NAME.swaybound-lock` beside the target.
fs::path lock_file(const fs::path& target);

/// The lock held on the output folder for the whole run (the lock file's descriptor).
class OutputLock {
 public:
  /// Takes flock(LOCK_EX | LOCK_NB) on the lock file beside `target`; throws RunError naming the
  /// process that holds it (`shown` is the folder as the user wrote it, for messages).
  OutputLock(const fs::path& target, const std::string& shown);
  ~OutputLock();
  OutputLock(const OutputLock&) = delete;
  OutputLock& operator=(const OutputLock&) = delete;

  /// Runs recorded in the lock file by earlier runs (their temporaries may still exist).
  std::vector<RunRecord> recorded() const;
  /// Replaces the record with `runs` and this process as the holder, and fsyncs it.
  void record(const std::vector<RunRecord>& runs);
  /// Releases the lock; the lock file is removed when `remove` (nothing left to record).
  void release(bool remove);

 private:
  fs::path path_;
  int fd_ = -1;
};

/// Cleans up after earlier runs that were killed: for each recorded run whose process is gone,
/// restores its moved-aside old packet when the target is missing, and removes its temporary
/// folders. Returns the runs that could not be cleaned (kept in the record) and appends a line per
/// action taken to `notices`.
std::vector<RunRecord> clean_stale_runs(const fs::path& target, const std::vector<RunRecord>& runs,
                                        std::vector<std::string>& notices);

/// Cleans up after killed runs of swaybound versions before the lock file (folders
/// `.NAME.partial-PID` and `.NAME.partial-PID.old` of a process that is gone): a `.old` folder
/// holding a whole packet (every MANIFEST hash verifies, nothing else in it) is put back when the
/// target is missing, else removed; a `.partial-PID` folder is removed when it holds only files
/// with the names a packet's files have. Anything else is left alone.
void clean_legacy_temporaries(const fs::path& target, std::vector<std::string>& notices);

/// A new random token (16 hex digits).
std::string new_token();

/// fsync of every regular file in `folder`, then of the folder itself; throws RunError.
void sync_folder(const fs::path& folder);

/// Puts the complete packet `partial` in place of `target` in one step as seen by a crash:
/// renameat2(RENAME_EXCHANGE) when the target exists (`partial` then holds the old packet), else
/// a rename; on file systems without the exchange, the old packet is renamed to `old` first and a
/// later run restores it if the process dies between the two renames. fsyncs the parent folder.
/// Returns the folder now holding the old packet ("" when there was none).
fs::path switch_into_place(const fs::path& partial, const fs::path& target, const fs::path& old);

/// Removes a folder of ours (the old packet after the switch) file by file.
void remove_folder(const fs::path& folder);

/// Test hook: when the environment variable SWAYBOUND_TEST_KILL_AT equals `step`, the process
/// raises SIGKILL there (the interrupted-run tests kill the CLI at every step of the replacement).
void kill_point(const char* step);

}  // namespace swaybound::packet_detail
