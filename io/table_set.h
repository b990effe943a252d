#pragma once
// A folder of output tables written as one set: every file goes into a
// temporary folder beside the target, with a manifest naming the store and
// the stage keys the tables came from, and the folder then takes the place
// of the old one in one rename. A half-written set is never in place, and
// tables that no longer match their store can be told by their manifest.

#include <functional>
#include <string>
#include <string_view>
#include <vector>

namespace gazemill {

inline constexpr const char* kManifestName = "manifest.json";

/// Takes a table's text a piece at a time (see TableSet::write_in_pieces).
using TextPieces = std::function<void(std::string_view)>;

class TableSet {
 public:
  /// Starts a set for `folder` (created or replaced on commit).
  explicit TableSet(std::string folder);
  ~TableSet();  // removes the temporary folder unless committed
  TableSet(const TableSet&) = delete;
  TableSet& operator=(const TableSet&) = delete;

  /// Writes one file of the set. Throws InputError naming it when it cannot be written.
  void add(const std::string& name, const std::string& text);
  /// Writes one file of the set from text that `make` hands over in pieces,
  /// so that a large table never sits whole in memory. Safe on any thread
  /// for distinct names; the file joins the set when `added` names it (on
  /// the set's own thread, in the set's order).
  void write_in_pieces(const std::string& name, const std::function<void(const TextPieces&)>& make) const;
  /// Several files at once, each a piece at a time: `make` is given one
  /// TextPieces per name, in the order of `names`.
  void write_in_pieces(const std::vector<std::string>& names, const std::function<void(const std::vector<TextPieces>&)>& make) const;
  void added(const std::string& name) { names_.push_back(name); }
  /// Writes the manifest and puts the set in place of the folder.
  void commit(const std::string& manifest_json);
  const std::vector<std::string>& names() const { return names_; }

 private:
  std::string folder_;
  std::string temp_;
  std::vector<std::string> names_;
  bool committed_ = false;
};

/// The manifest text of a table folder without its list of files ("" when
/// absent): what the tables were made from.
std::string read_manifest(const std::string& folder);

/// Whether every file the manifest lists is there as it was written (its
/// size and modification time): false for a file deleted, cut short or
/// edited since, and for a set from before these were kept.
bool table_set_intact(const std::string& folder);

/// Throws InputError when `folder` cannot take a table set: it is a file, or
/// holds files and no manifest, or a file its manifest does not list (a
/// user's own file, which replacing the folder would delete).
void check_table_folder(const std::string& folder);

}  // namespace gazemill
