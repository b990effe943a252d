#include "measures/measure_aggregates.h"

#include <cmath>
#include <functional>
#include <map>

namespace gazemill {
namespace {

// Welford's running mean and variance (Knuth, TAOCP vol. 2, 4.2.2): exact
// enough for any study and one pass.
struct Running {
  std::size_t n = 0;
  double mean = 0, m2 = 0;
  void add(const std::optional<double>& v) {
    if (!v) return;
    ++n;
    const double d = *v - mean;
    mean += d / static_cast<double>(n);
    m2 += d * (*v - mean);
  }
  MeasureStats stats() const {
    MeasureStats s;
    s.n = n;
    if (n >= 1) s.mean = mean;
    if (n >= 2) s.sd = std::sqrt(m2 / static_cast<double>(n - 1));
    return s;
  }
};

std::optional<double> share(std::size_t part, std::size_t whole) {
  if (whole == 0) return std::nullopt;
  return static_cast<double>(part) / static_cast<double>(whole);
}

AggregateTable aggregate(const std::vector<MeasureRow>& rows, std::vector<std::string> key_columns,
                         const std::function<std::optional<std::vector<std::string>>(const MeasureRow&)>& key_of) {
  struct Group {
    std::size_t readings = 0, first_pass = 0, fixated = 0, skipped = 0, regressed_out = 0, regressed_in = 0;
    std::map<std::string, Running> durations;
  };
  // Ordered by key then cell; region numbers sort as numbers (padded in the map key).
  std::map<std::pair<std::vector<std::string>, std::string>, Group> groups;
  std::map<std::pair<std::vector<std::string>, std::string>, std::vector<std::string>> shown;
  for (const auto& r : rows) {
    const auto k = key_of(r);
    if (!k) continue;
    std::vector<std::string> sortable = *k;
    for (auto& s : sortable) {
      if (!s.empty() && s.find_first_not_of("0123456789") == std::string::npos) s = std::string(12 - std::min<std::size_t>(12, s.size()), '0') + s;
    }
    Group& g = groups[{sortable, r.cell}];
    shown[{sortable, r.cell}] = *k;
    ++g.readings;
    g.skipped += r.skipped;
    g.fixated += r.fixated;
    if (!r.skipped) {
      ++g.first_pass;
      g.regressed_out += r.regression_out.value_or(false);
    }
    if (r.fixated) g.regressed_in += r.regression_in.value_or(false);
    for (const auto& m : duration_measure_names()) g.durations[m].add(measure_value(r, m));
  }
  AggregateTable out;
  out.key_columns = std::move(key_columns);
  for (const auto& [k, g] : groups) {
    MeasureAggregate a;
    a.key = shown.at(k);
    a.cell = k.second;
    a.region_readings = g.readings;
    a.first_pass_readings = g.first_pass;
    a.fixated_readings = g.fixated;
    a.skipping_probability = share(g.skipped, g.readings);
    a.ever_fixated_probability = share(g.fixated, g.readings);
    a.regression_out_probability = share(g.regressed_out, g.first_pass);
    a.regression_in_probability = share(g.regressed_in, g.fixated);
    for (const auto& m : duration_measure_names()) {
      const auto it = g.durations.find(m);
      a.durations[m] = it == g.durations.end() ? MeasureStats{} : it->second.stats();
    }
    out.rows.push_back(std::move(a));
  }
  return out;
}

}  // namespace

AggregateTable aggregate_by_item_region(const std::vector<MeasureRow>& rows) {
  return aggregate(rows, {"item", "region"}, [](const MeasureRow& r) { return std::vector<std::string>{r.item, std::to_string(r.region)}; });
}

AggregateTable aggregate_by_role(const std::vector<MeasureRow>& rows) {
  return aggregate(rows, {"region_role"}, [](const MeasureRow& r) -> std::optional<std::vector<std::string>> {
    if (r.region_role.empty()) return std::nullopt;
    return std::vector<std::string>{r.region_role};
  });
}

AggregateTable aggregate_by_participant(const std::vector<MeasureRow>& rows) {
  return aggregate(rows, {"participant"}, [](const MeasureRow& r) { return std::vector<std::string>{r.participant}; });
}

}  // namespace gazemill
