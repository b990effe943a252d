#include "io/measures_io.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>
#include <map>
#include <memory>
#include <set>
#include <string_view>

#include "io/hdf5_util.h"
#include "io/number_text.h"
#include "pipeline/design.h"

namespace gazemill {
namespace {

std::string na(const std::optional<double>& v) {
  if (!v) return "NA";
  return general_text(*v, 6);
}

// A view of s, or of "NA": valid as long as s (a getter's result lives to the end of its statement).
std::string_view text_or_na(const std::string& s) { return s.empty() ? std::string_view("NA") : std::string_view(s); }

// The trial variables that are neither the item nor a factor, by name.
std::vector<std::string> other_variables(const std::vector<MeasureRow>& rows, const DesignSpec& design) {
  std::set<std::string> names;
  const std::map<std::string, std::string>* last = nullptr;  // a trial's rows share theirs
  for (const auto& r : rows) {
    if (!r.variables || r.variables.get() == last) continue;
    last = r.variables.get();
    for (const auto& [k, v] : *r.variables) names.insert(k);
  }
  std::vector<std::string> out;
  for (const auto& n : names) {
    if (n == design.item_variable || std::find(design.factors.begin(), design.factors.end(), n) != design.factors.end()) continue;
    out.push_back(n);
  }
  return out;
}

// Column name -> value getter, shared by the TSV files and the store.
struct Column {
  std::string name;
  std::function<std::optional<double>(const MeasureRow&)> number;  // empty for text columns
  std::function<std::string(const MeasureRow&)> text;             // "" when absent
};

std::vector<Column> trial_columns(const std::vector<MeasureRow>& rows, const DesignSpec& design) {
  const auto& factors = design.factors;
  std::vector<Column> c;
  auto text = [&](std::string n, std::function<std::string(const MeasureRow&)> f) { c.push_back({std::move(n), {}, std::move(f)}); };
  text("participant", [](const MeasureRow& r) { return r.participant; });
  text("session", [](const MeasureRow& r) { return r.session; });
  text("trial", [](const MeasureRow& r) { return r.trial; });
  text("item", [](const MeasureRow& r) { return r.item; });
  // Each cell's levels split once: a study has a handful of cells and 50 000 rows.
  auto levels_of = std::make_shared<std::map<std::string, std::vector<std::string>, std::less<>>>();
  if (!factors.empty()) {
    for (const auto& r : rows) {
      if (!levels_of->count(r.cell)) levels_of->emplace(r.cell, cell_levels(r.cell));
    }
  }
  for (std::size_t f = 0; f < factors.size(); ++f) {
    text(factors[f], [f, levels_of](const MeasureRow& r) {
      const auto it = levels_of->find(r.cell);
      if (it != levels_of->end()) return f < it->second.size() ? it->second[f] : std::string();
      const auto levels = cell_levels(r.cell);
      return f < levels.size() ? levels[f] : std::string();
    });
  }
  for (const auto& v : other_variables(rows, design)) {
    text(v, [v](const MeasureRow& r) {
      if (!r.variables) return std::string();
      auto it = r.variables->find(v);
      return it == r.variables->end() ? std::string() : it->second;
    });
  }
  return c;
}

std::vector<Column> wide_columns(const std::vector<MeasureRow>& rows, const DesignSpec& design) {
  std::vector<Column> c = trial_columns(rows, design);
  auto text = [&](std::string n, std::function<std::string(const MeasureRow&)> f) { c.push_back({std::move(n), {}, std::move(f)}); };
  auto num = [&](std::string n, std::function<std::optional<double>(const MeasureRow&)> f) { c.push_back({std::move(n), std::move(f), {}}); };
  num("region", [](const MeasureRow& r) { return r.region; });
  text("region_label", [](const MeasureRow& r) { return r.region_label; });
  text("region_role", [](const MeasureRow& r) { return r.region_role; });
  num("region_letters", [](const MeasureRow& r) { return r.region_letters ? std::optional<double>(r.region_letters) : std::nullopt; });
  num("region_words", [](const MeasureRow& r) { return r.region_words ? std::optional<double>(r.region_words) : std::nullopt; });
  num("region_line", [](const MeasureRow& r) { return r.region_line; });
  num("region_last_line", [](const MeasureRow& r) { return r.region_last_line; });
  for (std::size_t k = 0; k < measure_names().size(); ++k) num(measure_names()[k], [k](const MeasureRow& r) { return measure_value(r, k); });
  for (const char* side : {"preceding", "following"}) {
    const bool before = std::string(side) == "preceding";
    auto nb = [before](const MeasureRow& r) -> const std::optional<NeighbourMeasures>& { return before ? r.before : r.after; };
    const std::string p = std::string(side) + "_";
    num(p + "region", [nb](const MeasureRow& r) { return nb(r) ? std::optional<double>(nb(r)->region) : std::nullopt; });
    text(p + "region_label", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->label : std::string(); });
    num(p + "region_letters", [nb](const MeasureRow& r) {
      return nb(r) && nb(r)->letters ? std::optional<double>(nb(r)->letters) : std::nullopt;
    });
    num(p + "skipped_first_pass", [nb](const MeasureRow& r) { return nb(r) ? std::optional<double>(nb(r)->skipped ? 1 : 0) : std::nullopt; });
    num(p + "first_fixation_ms", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->first_fixation_ms : std::nullopt; });
    num(p + "gaze_duration_ms", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->gaze_duration_ms : std::nullopt; });
    num(p + "total_time_ms", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->total_time_ms : std::nullopt; });
  }
  return c;
}

// An aggregate table's columns: key, factors, counts, probabilities, statistics.
struct AggregateColumn {
  std::string name;
  std::function<std::optional<double>(const MeasureAggregate&)> number;
  std::function<std::string(const MeasureAggregate&)> text;
};

std::vector<AggregateColumn> aggregate_columns(const AggregateTable& t, const std::vector<std::string>& factors) {
  std::vector<AggregateColumn> c;
  for (std::size_t k = 0; k < t.key_columns.size(); ++k) {
    c.push_back({t.key_columns[k], {}, [k](const MeasureAggregate& a) { return a.key.at(k); }});
  }
  for (std::size_t f = 0; f < factors.size(); ++f) {
    c.push_back({factors[f], {}, [f](const MeasureAggregate& a) {
                   const auto levels = cell_levels(a.cell);
                   return f < levels.size() ? levels[f] : std::string();
                 }});
  }
  auto count = [](std::size_t MeasureAggregate::*m) {
    return [m](const MeasureAggregate& a) { return std::optional<double>(static_cast<double>(a.*m)); };
  };
  c.push_back({"region_readings", count(&MeasureAggregate::region_readings), {}});
  c.push_back({"first_pass_readings", count(&MeasureAggregate::first_pass_readings), {}});
  c.push_back({"fixated_readings", count(&MeasureAggregate::fixated_readings), {}});
  c.push_back({"skipping_probability", [](const MeasureAggregate& a) { return a.skipping_probability; }, {}});
  c.push_back({"ever_fixated_probability", [](const MeasureAggregate& a) { return a.ever_fixated_probability; }, {}});
  c.push_back({"regression_out_probability", [](const MeasureAggregate& a) { return a.regression_out_probability; }, {}});
  c.push_back({"regression_in_probability", [](const MeasureAggregate& a) { return a.regression_in_probability; }, {}});
  for (const auto& m : duration_measure_names()) {
    c.push_back({"mean_" + m, [m](const MeasureAggregate& a) { return a.durations.at(m).mean; }, {}});
    c.push_back({"sd_" + m, [m](const MeasureAggregate& a) { return a.durations.at(m).sd; }, {}});
    c.push_back({"n_" + m, [m](const MeasureAggregate& a) { return std::optional<double>(static_cast<double>(a.durations.at(m).n)); }, {}});
  }
  return c;
}

template <typename Row, typename Col>
std::string tsv(const std::vector<Row>& rows, const std::vector<Col>& cols) {
  std::string out;
  for (std::size_t i = 0; i < cols.size(); ++i) out += (i ? "\t" : "") + cols[i].name;
  out += "\n";
  for (const auto& r : rows) {
    for (std::size_t i = 0; i < cols.size(); ++i) {
      if (i) out += "\t";
      if (cols[i].number) {
        out += na(cols[i].number(r));
      } else {
        out += text_or_na(cols[i].text(r));
      }
    }
    out += "\n";
  }
  return out;
}

// The columns as the store holds them: numbers with NaN for NA, texts with "" for NA.
template <typename Row, typename Col>
StoredTable stored_columns(const std::vector<Row>& rows, const std::vector<Col>& cols) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  StoredTable t;
  t.rows = rows.size();
  for (const auto& c : cols) {
    if (c.number) {
      std::vector<double>& v = t.numbers[c.name];
      v.reserve(rows.size());
      for (const auto& r : rows) v.push_back(c.number(r).value_or(kNaN));
    } else {
      std::vector<std::string>& v = t.texts[c.name];
      v.reserve(rows.size());
      for (const auto& r : rows) v.push_back(c.text(r));
    }
  }
  return t;
}

void write_columns(H5::Group& g, const StoredTable& t) {
  for (const auto& [name, v] : t.numbers) {
    h5::write_column(g, name, v, name.ends_with("_ms") ? "ms" : name.ends_with("_deg") ? "deg" : "");
    H5::DataSet ds = g.openDataSet(name);
    h5::set_attr(ds, "missing", std::string("NaN"));
  }
  for (const auto& [name, v] : t.texts) {
    h5::write_strings(g, name, v);
    H5::DataSet ds = g.openDataSet(name);
    h5::set_attr(ds, "missing", std::string(""));
  }
}

std::vector<std::string> level_fields(const std::string& cell, std::size_t factors) {
  auto levels = cell_levels(cell);
  levels.resize(factors);
  return levels;
}

}  // namespace

std::string placement_tsv(const PlacementCounts& counts, const std::vector<std::string>& factors) {
  std::string out = "participant";
  for (const auto& f : factors) out += "\t" + f;
  out += "\ton_region\tbeside_text\toff_lines\n";
  for (const auto& [key, c] : counts) {
    out += key.first;
    for (const auto& l : level_fields(key.second, factors.size())) {
      out += '\t';
      out += text_or_na(l);
    }
    out += fmt::format("\t{}\t{}\t{}\n", c.on_region, c.beside_text, c.off_lines);
  }
  return out;
}

void write_placement(StudyStoreWriter& store, const PlacementCounts& counts, const std::vector<std::string>& factors) {
  H5::Group g = store.group("measures/placement");
  std::vector<std::string> participant;
  std::vector<std::vector<std::string>> levels(factors.size());
  std::vector<std::uint64_t> on, beside, off;
  for (const auto& [key, c] : counts) {
    participant.push_back(key.first);
    const auto l = level_fields(key.second, factors.size());
    for (std::size_t f = 0; f < factors.size(); ++f) levels[f].push_back(l[f]);
    on.push_back(c.on_region);
    beside.push_back(c.beside_text);
    off.push_back(c.off_lines);
  }
  h5::write_strings(g, "participant", participant);
  H5::Group cell = h5::create_group(g, "cell");
  for (std::size_t f = 0; f < factors.size(); ++f) h5::write_strings(cell, factors[f], levels[f]);
  h5::write_column(g, "on_region", on);
  h5::write_column(g, "beside_text", beside);
  h5::write_column(g, "off_lines", off);
}

std::string measures_long_tsv(const std::vector<MeasureRow>& rows, const DesignSpec& design) {
  std::string out;
  out.reserve(rows.size() * measure_names().size() * 72);
  measures_long_tsv(rows, design, [&out](std::string_view piece) { out += piece; });
  return out;
}

void measures_long_tsv(const std::vector<MeasureRow>& rows, const DesignSpec& design, const TextPieces& pieces) {
  constexpr std::size_t kPiece = std::size_t{1} << 20;
  const auto head_cols = trial_columns(rows, design);
  const auto& names = measure_names();
  std::string out;
  out.reserve(kPiece + 4096);
  for (const auto& c : head_cols) out += c.name + "\t";
  out += "region\tregion_label\tregion_role\tmeasure\tvalue\n";
  // One line per measure of each row: the row's fields once, then appended in place.
  std::string head;
  for (const auto& r : rows) {
    head.clear();
    for (const auto& c : head_cols) {
      head += text_or_na(c.text(r));
      head += '\t';
    }
    head += std::to_string(r.region);
    head += '\t';
    head += text_or_na(r.region_label);
    head += '\t';
    head += text_or_na(r.region_role);
    head += '\t';
    for (std::size_t k = 0; k < names.size(); ++k) {
      out += head;
      out += names[k];
      out += '\t';
      out += na(measure_value(r, k));
      out += '\n';
    }
    if (out.size() >= kPiece) {
      pieces(out);
      out.clear();
    }
  }
  if (!out.empty()) pieces(out);
}

std::string measures_wide_tsv(const std::vector<MeasureRow>& rows, const DesignSpec& design) {
  return tsv(rows, wide_columns(rows, design));
}

StoredTable measures_wide_table(const std::vector<MeasureRow>& rows, const DesignSpec& design) {
  return stored_columns(rows, wide_columns(rows, design));
}

StoredTable aggregate_table(const AggregateTable& table, const std::vector<std::string>& factors) {
  return stored_columns(table.rows, aggregate_columns(table, factors));
}

std::string aggregates_tsv(const AggregateTable& table, const std::vector<std::string>& factors) {
  return tsv(table.rows, aggregate_columns(table, factors));
}

void write_measures(StudyStoreWriter& store, const StoredTable& wide, const std::vector<const StoredTable*>& aggregates,
                    const std::vector<std::string>& aggregate_names) {
  H5::Group m = store.group("measures");
  H5::Group w = h5::create_group(m, "wide");
  write_columns(w, wide);
  for (std::size_t i = 0; i < aggregates.size(); ++i) {
    H5::Group g = h5::create_group(m, aggregate_names.at(i));
    write_columns(g, *aggregates[i]);
  }
}

}  // namespace gazemill
