#pragma once
// Checks made before long work starts: that a store can be written where it
// is asked for, and that the disk has room for it, so that an hour of ingest
// does not end in "cannot create file".

#include <cstdint>
#include <string>

namespace gazemill {

enum class SpaceVerdict { enough, tight, too_little };

/// `needed_bytes` is a rough estimate of what the run writes. Below half of
/// it the output cannot fit; below all of it, it may not.
SpaceVerdict judge_free_space(std::uint64_t free_bytes, std::uint64_t needed_bytes);

/// A rough estimate of the store's size from its inputs: in the fixture
/// study the store ingest writes was 0.25 times its exports' text and 0.88
/// times their gzip files, so plain files count a quarter and gzip files
/// once. Later stages add to it (the whole run's store was 2.4 times the
/// gzip files), so this is a floor: less than half of it cannot do.
std::uint64_t estimated_store_bytes(std::uint64_t plain_input_bytes, std::uint64_t gzip_input_bytes);

/// Throws InputError naming the path and the reason when `store_path` is a
/// folder, or its folder does not exist or cannot be written (a file is
/// created there and removed).
void check_store_folder(const std::string& store_path);

/// Throws InputError naming the folder, the free and the needed space when
/// the disk holding `store_path` has too little room for `needed_bytes`;
/// logs a warning when it is tight.
void check_free_space(const std::string& store_path, std::uint64_t needed_bytes);

}  // namespace gazemill
