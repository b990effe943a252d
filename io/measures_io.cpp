#include "io/measures_io.h"

#include <fmt/format.h>

#include <cmath>
#include <functional>
#include <limits>
#include <set>

#include "io/hdf5_util.h"

namespace gazemill {
namespace {

std::string na(const std::optional<double>& v) {
  if (!v) return "NA";
  return fmt::format("{:.6g}", *v);
}

std::set<std::string> variable_names(const std::vector<MeasureRow>& rows) {
  std::set<std::string> names;
  for (const auto& r : rows) {
    for (const auto& [k, v] : r.variables) names.insert(k);
  }
  return names;
}

std::string text_or_na(const std::string& s) { return s.empty() ? "NA" : s; }

// Column name -> value getter, shared by the wide TSV and the store.
struct Column {
  std::string name;
  std::function<std::optional<double>(const MeasureRow&)> number;  // empty for text columns
  std::function<std::string(const MeasureRow&)> text;
};

std::vector<Column> wide_columns(const std::vector<MeasureRow>& rows) {
  std::vector<Column> c;
  auto text = [&](std::string n, std::function<std::string(const MeasureRow&)> f) { c.push_back({std::move(n), {}, std::move(f)}); };
  auto num = [&](std::string n, std::function<std::optional<double>(const MeasureRow&)> f) { c.push_back({std::move(n), std::move(f), {}}); };
  text("participant", [](const MeasureRow& r) { return r.participant; });
  text("session", [](const MeasureRow& r) { return text_or_na(r.session); });
  text("trial", [](const MeasureRow& r) { return r.trial; });
  text("item", [](const MeasureRow& r) { return r.item; });
  text("condition", [](const MeasureRow& r) { return r.condition; });
  for (const auto& v : variable_names(rows)) {
    text(v, [v](const MeasureRow& r) {
      auto it = r.variables.find(v);
      return it == r.variables.end() ? std::string("NA") : it->second;
    });
  }
  num("region", [](const MeasureRow& r) { return r.region; });
  text("region_label", [](const MeasureRow& r) { return r.region_label; });
  text("region_role", [](const MeasureRow& r) { return text_or_na(r.region_role); });
  num("region_letters", [](const MeasureRow& r) { return r.region_letters ? std::optional<double>(r.region_letters) : std::nullopt; });
  num("region_line", [](const MeasureRow& r) { return r.region_line; });
  num("region_last_line", [](const MeasureRow& r) { return r.region_last_line; });
  for (const auto& m : measure_names()) num(m, [m](const MeasureRow& r) { return measure_value(r, m); });
  for (const char* side : {"previous", "next"}) {
    const bool prev = std::string(side) == "previous";
    auto nb = [prev](const MeasureRow& r) -> const std::optional<NeighbourMeasures>& { return prev ? r.previous : r.next; };
    const std::string p = std::string(side) + "_";
    num(p + "region", [nb](const MeasureRow& r) { return nb(r) ? std::optional<double>(nb(r)->region) : std::nullopt; });
    text(p + "region_label", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->label : std::string("NA"); });
    num(p + "region_letters", [nb](const MeasureRow& r) {
      return nb(r) && nb(r)->letters ? std::optional<double>(nb(r)->letters) : std::nullopt;
    });
    num(p + "skipped", [nb](const MeasureRow& r) { return nb(r) ? std::optional<double>(nb(r)->skipped ? 1 : 0) : std::nullopt; });
    num(p + "first_fixation_ms", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->first_fixation_ms : std::nullopt; });
    num(p + "gaze_duration_ms", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->gaze_duration_ms : std::nullopt; });
    num(p + "total_time_ms", [nb](const MeasureRow& r) { return nb(r) ? nb(r)->total_time_ms : std::nullopt; });
  }
  return c;
}

std::vector<std::pair<std::string, std::function<std::optional<double>(const MeasureAggregate&)>>> aggregate_columns() {
  return {{"rows", [](const MeasureAggregate& a) { return std::optional<double>(static_cast<double>(a.rows)); }},
          {"fixation_probability", [](const MeasureAggregate& a) { return a.fixation_probability; }},
          {"skipping_probability", [](const MeasureAggregate& a) { return a.skipping_probability; }},
          {"regression_out_probability", [](const MeasureAggregate& a) { return a.regression_out_probability; }},
          {"mean_first_fixation_ms", [](const MeasureAggregate& a) { return a.mean_first_fixation_ms; }},
          {"mean_single_fixation_ms", [](const MeasureAggregate& a) { return a.mean_single_fixation_ms; }},
          {"mean_gaze_duration_ms", [](const MeasureAggregate& a) { return a.mean_gaze_duration_ms; }},
          {"mean_go_past_ms", [](const MeasureAggregate& a) { return a.mean_go_past_ms; }},
          {"mean_total_time_ms", [](const MeasureAggregate& a) { return a.mean_total_time_ms; }},
          {"mean_rereading_ms", [](const MeasureAggregate& a) { return a.mean_rereading_ms; }}};
}

}  // namespace

std::string measures_long_tsv(const std::vector<MeasureRow>& rows) {
  const auto vars = variable_names(rows);
  std::string out = "participant\tsession\ttrial\titem\tcondition";
  for (const auto& v : vars) out += "\t" + v;
  out += "\tregion\tregion_label\tregion_role\tmeasure\tvalue\n";
  for (const auto& r : rows) {
    std::string head = r.participant + "\t" + text_or_na(r.session) + "\t" + r.trial + "\t" + r.item + "\t" + r.condition;
    for (const auto& v : vars) {
      auto it = r.variables.find(v);
      head += "\t" + (it == r.variables.end() ? std::string("NA") : it->second);
    }
    head += "\t" + std::to_string(r.region) + "\t" + r.region_label + "\t" + text_or_na(r.region_role) + "\t";
    for (const auto& m : measure_names()) out += head + m + "\t" + na(measure_value(r, m)) + "\n";
  }
  return out;
}

std::string measures_wide_tsv(const std::vector<MeasureRow>& rows) {
  const auto cols = wide_columns(rows);
  std::string out;
  for (std::size_t i = 0; i < cols.size(); ++i) out += (i ? "\t" : "") + cols[i].name;
  out += "\n";
  for (const auto& r : rows) {
    for (std::size_t i = 0; i < cols.size(); ++i) {
      if (i) out += "\t";
      out += cols[i].number ? na(cols[i].number(r)) : cols[i].text(r);
    }
    out += "\n";
  }
  return out;
}

std::string aggregates_tsv(const std::vector<MeasureAggregate>& rows, const std::string& group_column) {
  const auto cols = aggregate_columns();
  std::string out = group_column + "\tcondition";
  for (const auto& [n, f] : cols) out += "\t" + n;
  out += "\n";
  for (const auto& a : rows) {
    out += a.group + "\t" + a.condition;
    for (const auto& [n, f] : cols) out += "\t" + na(f(a));
    out += "\n";
  }
  return out;
}

void write_measures(StudyStoreWriter& store, const std::vector<MeasureRow>& rows, const std::vector<MeasureAggregate>& by_region,
                    const std::vector<MeasureAggregate>& by_role, const std::vector<MeasureAggregate>& by_participant) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  H5::Group m = store.group("measures");
  H5::Group wide = h5::create_group(m, "wide");
  for (const auto& c : wide_columns(rows)) {
    if (c.number) {
      std::vector<double> v;
      for (const auto& r : rows) v.push_back(c.number(r).value_or(kNaN));
      h5::write_column(wide, c.name, v, c.name.size() > 3 && c.name.substr(c.name.size() - 3) == "_ms" ? "ms" : "");
    } else {
      std::vector<std::string> v;
      for (const auto& r : rows) v.push_back(c.text(r));
      h5::write_strings(wide, c.name, v);
    }
  }
  auto write_aggregates = [&](const std::string& name, const std::vector<MeasureAggregate>& a) {
    H5::Group g = h5::create_group(m, name);
    std::vector<std::string> group, cond;
    for (const auto& x : a) {
      group.push_back(x.group);
      cond.push_back(x.condition);
    }
    h5::write_strings(g, "group", group);
    h5::write_strings(g, "condition", cond);
    for (const auto& [n, f] : aggregate_columns()) {
      std::vector<double> v;
      for (const auto& x : a) v.push_back(f(x).value_or(kNaN));
      h5::write_column(g, n, v);
    }
  };
  write_aggregates("by_region", by_region);
  write_aggregates("by_role", by_role);
  write_aggregates("by_participant", by_participant);
}

}  // namespace gazemill
