#include "alignment/drift_registry.h"

#include <cmath>
#include <functional>
#include <stdexcept>

#include "alignment/attach_corrector.h"
#include "alignment/chain_corrector.h"
#include "alignment/cluster_corrector.h"
#include "alignment/compare_corrector.h"
#include "alignment/majority_vote.h"
#include "alignment/merge_corrector.h"
#include "alignment/regress_corrector.h"
#include "alignment/segment_corrector.h"
#include "alignment/split_corrector.h"
#include "alignment/stretch_corrector.h"
#include "alignment/warp_corrector.h"

namespace gazemill {
namespace {

std::string joined(const std::vector<std::string>& names) {
  std::string s;
  for (const auto& n : names) s += (s.empty() ? "" : ", ") + n;
  return s;
}

// Binds parameter names to fields, then applies the given values.
class Binder {
 public:
  explicit Binder(std::string method) : method_(std::move(method)) {}
  Binder& positive(const std::string& name, double& field) {
    return bind(name, [&field, name](double v) {
      if (!(v > 0)) throw std::invalid_argument("parameter " + name + " must be above zero");
      field = v;
    });
  }
  Binder& non_negative(const std::string& name, double& field) {
    return bind(name, [&field, name](double v) {
      if (!(v >= 0)) throw std::invalid_argument("parameter " + name + " must be zero or more");
      field = v;
    });
  }
  Binder& whole(const std::string& name, int& field, int most) {
    return bind(name, [&field, name, most](double v) {
      if (!(v >= 1 && v <= most) || v != std::floor(v)) {
        throw std::invalid_argument("parameter " + name + " must be a whole number from 1 to " + std::to_string(most));
      }
      field = static_cast<int>(v);
    });
  }
  void apply(const std::map<std::string, double>& given) const {
    for (const auto& [name, value] : given) {
      auto it = setters_.find(name);
      if (it == setters_.end()) {
        std::vector<std::string> known;
        for (const auto& [k, f] : setters_) known.push_back(k);
        throw std::invalid_argument("drift method " + method_ + " has no parameter " + name +
                                    (known.empty() ? "; it takes none" : "; it has: " + joined(known)));
      }
      if (!std::isfinite(value)) throw std::invalid_argument("parameter " + name + " of " + method_ + " must be a finite number");
      it->second(value);
    }
  }

 private:
  Binder& bind(const std::string& name, std::function<void(double)> set) {
    setters_[name] = std::move(set);
    return *this;
  }
  std::string method_;
  std::map<std::string, std::function<void(double)>> setters_;
};

std::vector<std::string> single_method_names() {
  return {"attach", "chain", "cluster", "compare", "merge", "regress", "segment", "split", "stretch", "warp"};
}

std::unique_ptr<DriftCorrector> make_single(const std::string& name, const std::map<std::string, double>& params) {
  if (name == "attach" || name == "cluster" || name == "segment" || name == "split" || name == "warp") {
    Binder(name).apply(params);
    if (name == "attach") return std::make_unique<AttachCorrector>();
    if (name == "cluster") return std::make_unique<ClusterCorrector>();
    if (name == "segment") return std::make_unique<SegmentCorrector>();
    if (name == "split") return std::make_unique<SplitCorrector>();
    return std::make_unique<WarpCorrector>();
  }
  if (name == "chain") {
    ChainParams p;
    Binder(name).positive("x_threshold_font_heights", p.x_threshold_font_heights)
        .positive("y_threshold_font_heights", p.y_threshold_font_heights)
        .apply(params);
    return std::make_unique<ChainCorrector>(p);
  }
  if (name == "compare") {
    CompareParams p;
    Binder(name).positive("gaze_line_break_line_share", p.gaze_line_break_line_share)
        .whole("candidate_lines", p.candidate_lines, 1000)
        .apply(params);
    return std::make_unique<CompareCorrector>(p);
  }
  if (name == "merge") {
    MergeParams p;
    Binder(name).positive("y_threshold_line_heights", p.y_threshold_line_heights)
        .non_negative("max_gradient", p.max_gradient)
        .positive("max_error_line_heights", p.max_error_line_heights)
        .positive("max_mean_y_difference_line_heights", p.max_mean_y_difference_line_heights)
        .apply(params);
    return std::make_unique<MergeCorrector>(p);
  }
  if (name == "regress") {
    RegressParams p;
    Binder(name).non_negative("max_slope", p.max_slope)
        .non_negative("max_offset_line_heights", p.max_offset_line_heights)
        .positive("min_sd_px", p.min_sd_px)
        .positive("max_sd_px", p.max_sd_px)
        .apply(params);
    if (p.min_sd_px > p.max_sd_px) throw std::invalid_argument("parameter min_sd_px of regress must not exceed max_sd_px");
    return std::make_unique<RegressCorrector>(p);
  }
  if (name == "stretch") {
    StretchParams p;
    Binder(name).positive("min_stretch", p.min_stretch)
        .positive("max_stretch", p.max_stretch)
        .non_negative("max_offset_line_heights", p.max_offset_line_heights)
        .apply(params);
    if (p.min_stretch > p.max_stretch) throw std::invalid_argument("parameter min_stretch of stretch must not exceed max_stretch");
    return std::make_unique<StretchCorrector>(p);
  }
  throw std::invalid_argument("unknown drift method " + name + "; known: " + joined(drift_method_names()));
}

}  // namespace

std::vector<std::string> drift_method_names() {
  auto names = single_method_names();
  names.push_back("majority");
  return names;
}

std::vector<std::string> default_majority_members() { return {"warp", "segment", "cluster", "regress", "chain"}; }

std::unique_ptr<DriftCorrector> make_majority_corrector(const std::vector<std::string>& members, const std::map<std::string, double>& params) {
  if (members.empty()) throw std::invalid_argument("a majority needs at least one member method");
  std::map<std::string, std::map<std::string, double>> by_member;
  for (const auto& [key, value] : params) {
    const auto dot = key.find('.');
    const std::string member = dot == std::string::npos ? std::string() : key.substr(0, dot);
    bool listed = false;
    for (const auto& m : members) listed = listed || m == member;
    if (!listed) {
      throw std::invalid_argument("drift method majority has no parameter " + key + "; it takes <member>.<parameter> for its members " +
                                  joined(members));
    }
    by_member[member][key.substr(dot + 1)] = value;
  }
  std::vector<std::unique_ptr<DriftCorrector>> made;
  for (const auto& m : members) {
    if (m == "majority") throw std::invalid_argument("a majority cannot be a member of a majority");
    const auto it = by_member.find(m);
    made.push_back(make_single(m, it == by_member.end() ? std::map<std::string, double>{} : it->second));
  }
  return std::make_unique<MajorityCorrector>(std::move(made));
}

std::unique_ptr<DriftCorrector> make_drift_corrector(const std::string& name, const std::map<std::string, double>& params) {
  if (name == "majority") return make_majority_corrector(default_majority_members(), params);
  return make_single(name, params);
}

}  // namespace gazemill
