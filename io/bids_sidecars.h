#pragma once
// Which BIDS metadata files apply to a data file, and how JSON sidecars at
// several folder levels merge: the Inheritance Principle of the BIDS
// specification v1.11.0 ("Common principles > The Inheritance Principle"):
//   rule 2: a metadata file applies to a data file when it is at the data
//           file's folder level or above, has the same suffix, and has no
//           entity absent from the data file's name;
//   rule 4: no two applicable files at one folder level;
//   rule 5: of tabular files only the lowest applicable one counts; JSON
//           files load from the top down, a lower file's key overriding the
//           same key above (a key is replaced whole, never merged inside).

#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace gazemill {

/// A BIDS file name taken apart: "sub-01_task-read_recording-eye1_physio.tsv.gz"
/// is entities sub=01, task=read, recording=eye1, suffix "physio", extension ".tsv.gz".
struct BidsName {
  std::vector<std::pair<std::string, std::string>> entities;  // in file-name order
  std::string suffix;
  std::string extension;  // from the first '.', e.g. ".tsv.gz"; "" when none
  /// The entity's label, or nullptr when the name has no such entity.
  const std::string* entity(const std::string& key) const;
};

/// Parses a file name (no folders). nullopt when it is not of the form
/// [key-label_]...suffix.extension (a part before the suffix without '-').
std::optional<BidsName> parse_bids_name(const std::string& file_name);

/// The dataset root of a file: the nearest folder above it that holds a
/// dataset_description.json; without one, the folder that holds its
/// outermost sub-<label> folder; else the file's own folder.
std::filesystem::path bids_dataset_root(const std::filesystem::path& data_file);

/// The metadata files with `suffix` and `extension` that apply to
/// `data_file` (which need not exist: its name and folder are what count),
/// from the dataset root down to the file's folder. Throws InputError naming
/// both files when two apply at one level (rule 4).
std::vector<std::string> applicable_bids_files(const std::string& data_file, const std::string& suffix, const std::string& extension);

/// Where a merged key's value came from.
struct SidecarKeyOrigin {
  std::string file;                     // the file whose value holds
  std::vector<std::string> overridden;  // files above it that gave the key too, top first
};

/// JSON sidecars merged by rule 5, with the file that supplied each key.
struct MergedSidecar {
  std::vector<std::string> files;                  // root first
  std::map<std::string, SidecarKeyOrigin> origin;  // every top-level key
  std::string json = "{}";                         // the merged object, as JSON text
  bool empty() const { return files.empty(); }
  /// The file that supplied `key`; the lowest file when none did ("" without files).
  std::string file_of(const std::string& key) const;
  /// One line per key: "Key: file (overrides file, ...)", for a debug log.
  std::vector<std::string> describe() const;
};

/// Merges `files` (root first; each a JSON object). Throws InputError naming
/// the file that is not valid JSON or not an object.
MergedSidecar merge_bids_sidecars(const std::vector<std::string>& files);

/// The applicable JSON sidecars of `data_file` with `suffix`, merged.
MergedSidecar inherited_sidecar(const std::string& data_file, const std::string& suffix);

}  // namespace gazemill
