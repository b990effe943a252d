#pragma once
// Typed, strict access to one TOML table of the protocol: every read names
// the key and line on error, and finish() rejects keys nobody asked for.

#include <optional>
#include <set>
#include <string>
#include <vector>

#include <toml++/toml.h>

namespace gazemill {

class TomlSection {
 public:
  TomlSection(const toml::table& table, std::string path, std::string file);

  bool has(const std::string& key) const;
  std::optional<std::string> string(const std::string& key);
  std::string required_string(const std::string& key);
  std::optional<double> number(const std::string& key);   // integer or float
  double required_number(const std::string& key);
  std::optional<std::int64_t> integer(const std::string& key);
  std::int64_t required_integer(const std::string& key);
  std::optional<bool> boolean(const std::string& key);
  std::optional<std::vector<std::string>> strings(const std::string& key);
  std::optional<TomlSection> table(const std::string& key);
  /// An array of tables ([[key]] blocks), each named key[1], key[2], ...
  std::vector<TomlSection> table_array(const std::string& key);
  /// Every key with its node, marking them all as known (free-form maps).
  const toml::table& raw() const { return table_; }
  std::size_t line() const { return table_.source().begin.line; }
  const std::string& file() const { return file_; }
  /// Every key of this table, marking them all as known (free-form maps).
  std::vector<std::string> keys();

  /// Throws InputError for the first key that was never read.
  void finish() const;

  /// The full dotted name of a key, e.g. "input.table.time_column".
  std::string name_of(const std::string& key) const;
  std::size_t line_of(const std::string& key) const;
  /// Throws InputError naming this key, its line and the problem.
  [[noreturn]] void fail(const std::string& key, const std::string& problem) const;

 private:
  const toml::node* node(const std::string& key);
  const toml::table& table_;
  std::string path_;
  std::string file_;
  std::set<std::string> used_;
};

}  // namespace gazemill
