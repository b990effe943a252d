#include "app/toml_section.h"

#include "pipeline/edit_distance.h"
#include "pipeline/input_error.h"

namespace gazemill {

TomlSection::TomlSection(const toml::table& table, std::string path, std::string file)
    : table_(table), path_(std::move(path)), file_(std::move(file)) {}

std::string TomlSection::name_of(const std::string& key) const { return path_.empty() ? key : path_ + "." + key; }

std::size_t TomlSection::line_of(const std::string& key) const {
  if (const toml::node* n = table_.get(key)) return n->source().begin.line;
  return table_.source().begin.line;
}

void TomlSection::fail(const std::string& key, const std::string& problem) const {
  throw InputError({file_, line_of(key), name_of(key)}, problem);
}

bool TomlSection::has(const std::string& key) const { return table_.contains(key); }

const toml::node* TomlSection::node(const std::string& key) {
  used_.insert(key);
  return table_.get(key);
}

std::optional<std::string> TomlSection::string(const std::string& key) {
  const toml::node* n = node(key);
  if (!n) return std::nullopt;
  if (!n->is_string()) fail(key, "expected a string");
  return n->value<std::string>();
}

std::string TomlSection::required_string(const std::string& key) {
  auto v = string(key);
  if (!v) throw InputError({file_, table_.source().begin.line, name_of(key)}, "required key is missing (expected a string)");
  return *v;
}

std::optional<double> TomlSection::number(const std::string& key) {
  const toml::node* n = node(key);
  if (!n) return std::nullopt;
  if (!n->is_number()) fail(key, "expected a number");
  return n->value<double>();
}

double TomlSection::required_number(const std::string& key) {
  auto v = number(key);
  if (!v) throw InputError({file_, table_.source().begin.line, name_of(key)}, "required key is missing (expected a number)");
  return *v;
}

std::optional<std::int64_t> TomlSection::integer(const std::string& key) {
  const toml::node* n = node(key);
  if (!n) return std::nullopt;
  if (!n->is_integer()) fail(key, "expected a whole number");
  return n->value<std::int64_t>();
}

std::int64_t TomlSection::required_integer(const std::string& key) {
  auto v = integer(key);
  if (!v) throw InputError({file_, table_.source().begin.line, name_of(key)}, "required key is missing (expected a whole number)");
  return *v;
}

std::optional<bool> TomlSection::boolean(const std::string& key) {
  const toml::node* n = node(key);
  if (!n) return std::nullopt;
  if (!n->is_boolean()) fail(key, "expected true or false");
  return n->value<bool>();
}

std::optional<std::vector<std::string>> TomlSection::strings(const std::string& key) {
  const toml::node* n = node(key);
  if (!n) return std::nullopt;
  const toml::array* a = n->as_array();
  if (!a) fail(key, "expected a list of strings");
  std::vector<std::string> out;
  for (const auto& e : *a) {
    if (!e.is_string()) {
      throw InputError({file_, e.source().begin.line, name_of(key)}, "expected a list of strings; an element is not a string");
    }
    out.push_back(*e.value<std::string>());
  }
  return out;
}

std::optional<TomlSection> TomlSection::table(const std::string& key) {
  const toml::node* n = node(key);
  if (!n) return std::nullopt;
  if (!n->is_table()) fail(key, "expected a table");
  return TomlSection(*n->as_table(), name_of(key), file_);
}

std::vector<TomlSection> TomlSection::table_array(const std::string& key) {
  const toml::node* n = node(key);
  std::vector<TomlSection> out;
  if (!n) return out;
  const toml::array* a = n->as_array();
  if (!a || !a->is_array_of_tables()) fail(key, "expected [[" + name_of(key) + "]] blocks (an array of tables)");
  for (std::size_t i = 0; i < a->size(); ++i) {
    out.emplace_back(*a->get(i)->as_table(), name_of(key) + "[" + std::to_string(i + 1) + "]", file_);
  }
  return out;
}

std::vector<std::string> TomlSection::keys() {
  std::vector<std::string> out;
  for (const auto& [k, v] : table_) {
    out.emplace_back(k.str());
    used_.insert(out.back());
  }
  return out;
}

void TomlSection::finish() const {
  for (const auto& [k, v] : table_) {
    const std::string key(k.str());
    if (!used_.count(key)) {
      // The keys this section reads and was not given: what a misspelt key likely meant.
      std::vector<std::string> absent;
      for (const auto& known : used_) {
        if (!table_.contains(known)) absent.push_back(known);
      }
      const std::string meant = likely_meant(key, absent);
      throw InputError({file_, v.source().begin.line, name_of(key)},
                       meant.empty() ? "unknown key (check its spelling and the section it is in)" : "unknown key; did you mean " + meant + "?");
    }
  }
}

}  // namespace gazemill
