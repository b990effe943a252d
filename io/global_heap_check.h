#pragma once
// A check of an HDF5 file's global heap collections before HDF5 reads them.
// Variable-length strings (our attributes and text columns) live in these
// collections; HDF5 1.10 trusts each object's stored length and copies that
// many bytes, so one damaged length crashes the program instead of raising
// an error (found by scripts/fuzz; tests/hardening/stores/README.md). The walk
// follows the collection layout of the HDF5 File Format Specification
// (version 2 and later, "Global Heap"): signature "GCOL", version 1, three
// reserved bytes, the collection's size, then objects of a 16-byte header
// (index, reference count, reserved, size) and data padded to 8 bytes, with
// object 0 the free space at the end. Every object must end inside its
// collection, as HDF5's own reader assumes without checking.

#include <string>

namespace gazemill {

/// Throws InputError naming `path` and the byte offset when a global heap
/// collection in the file holds an object that runs past the collection's
/// end. A file checked unchanged before (same device, inode, size and
/// modification time) is not read again in this process.
void check_global_heaps(const std::string& path);

/// Marks the file at `path`, as it is now, as checked: for a store this
/// process has just written (from inputs it checked), so that reading it
/// back does not scan it again.
void trust_global_heaps(const std::string& path);

}  // namespace gazemill
