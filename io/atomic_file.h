#pragma once
// Outputs are written under a temporary name beside their target and renamed
// when complete, so a failed run never leaves a file that looks finished.

#include <string>

namespace gazemill {

/// The temporary name a file is written under before it is renamed to `path`:
/// hidden, in the same folder (so the rename is atomic), marked with the process id.
std::string temporary_path_beside(const std::string& path);

/// Writes `text` to path via temporary_path_beside and a rename. Throws InputError.
void write_file_atomically(const std::string& path, const std::string& text);

}  // namespace gazemill
