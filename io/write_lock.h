#pragma once
// One writer at a time for a store or an output folder: an advisory lock on a
// small hidden file beside it (".<name>.lock", holding the writer's process
// id), removed again when the writer lets go. The kernel drops the lock when
// its process dies, so a crashed writer never blocks the next one (its file
// stays, unlocked); readers take no lock and are never blocked.

#include <string>

namespace gazemill {

class WriteLock {
 public:
  /// Locks `path` (a store or a folder) for writing, creating the lock file.
  /// Throws InputError naming the holder's process id when another writer has it.
  explicit WriteLock(const std::string& path);
  ~WriteLock();
  WriteLock(const WriteLock&) = delete;
  WriteLock& operator=(const WriteLock&) = delete;

 private:
  std::string path_;  // of the lock file
  int fd_ = -1;
};

/// Removes the temporary files and folders a dead writer left beside `path`
/// (".<name>.partial-<pid>" whose process is gone). Call with the lock held.
/// Returns how many it removed.
int remove_leftover_temporaries(const std::string& path);

}  // namespace gazemill
