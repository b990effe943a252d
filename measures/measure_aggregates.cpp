#include "measures/measure_aggregates.h"

#include <functional>
#include <map>

namespace gazemill {
namespace {

struct Acc {
  std::size_t n = 0;
  double sum = 0;
  void add(const std::optional<double>& v) {
    if (v) {
      sum += *v;
      ++n;
    }
  }
  std::optional<double> mean() const { return n ? std::optional<double>(sum / static_cast<double>(n)) : std::nullopt; }
};

std::vector<MeasureAggregate> aggregate(const std::vector<MeasureRow>& rows, const std::function<std::string(const MeasureRow&)>& key) {
  struct Group {
    std::size_t rows = 0;
    Acc fixated, skipped, regout, ffd, sfd, gd, gp, tt, rr;
  };
  std::map<std::pair<std::string, std::string>, Group> groups;
  for (const auto& r : rows) {
    const std::string k = key(r);
    if (k.empty()) continue;
    Group& g = groups[{k, r.condition}];
    ++g.rows;
    g.fixated.add(r.fixated ? 1.0 : 0.0);
    g.skipped.add(r.skipped ? 1.0 : 0.0);
    if (r.regression_out) g.regout.add(*r.regression_out ? 1.0 : 0.0);
    g.ffd.add(r.first_fixation_ms);
    g.sfd.add(r.single_fixation_ms);
    g.gd.add(r.gaze_duration_ms);
    g.gp.add(r.go_past_ms);
    g.tt.add(r.total_time_ms);
    g.rr.add(r.rereading_ms);
  }
  std::vector<MeasureAggregate> out;
  for (const auto& [k, g] : groups) {
    MeasureAggregate a;
    a.group = k.first;
    a.condition = k.second;
    a.rows = g.rows;
    a.fixation_probability = g.fixated.mean();
    a.skipping_probability = g.skipped.mean();
    a.regression_out_probability = g.regout.mean();
    a.mean_first_fixation_ms = g.ffd.mean();
    a.mean_single_fixation_ms = g.sfd.mean();
    a.mean_gaze_duration_ms = g.gd.mean();
    a.mean_go_past_ms = g.gp.mean();
    a.mean_total_time_ms = g.tt.mean();
    a.mean_rereading_ms = g.rr.mean();
    out.push_back(a);
  }
  return out;
}

std::string padded(int region) {
  std::string s = std::to_string(region);
  return std::string(s.size() < 3 ? 3 - s.size() : 0, '0') + s;  // sorts 002 before 010
}

}  // namespace

std::vector<MeasureAggregate> aggregate_by_region(const std::vector<MeasureRow>& rows) {
  auto out = aggregate(rows, [](const MeasureRow& r) { return padded(r.region); });
  for (auto& a : out) a.group = std::to_string(std::stoi(a.group));
  return out;
}

std::vector<MeasureAggregate> aggregate_by_role(const std::vector<MeasureRow>& rows) {
  return aggregate(rows, [](const MeasureRow& r) { return r.region_role; });
}

std::vector<MeasureAggregate> aggregate_by_participant(const std::vector<MeasureRow>& rows) {
  return aggregate(rows, [](const MeasureRow& r) { return r.participant; });
}

}  // namespace gazemill
