#include "detectors/scoring.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <tuple>

namespace gazemill {

double cohen_kappa(std::uint64_t both, std::uint64_t ref_only, std::uint64_t det_only, std::uint64_t neither) {
  const double n = static_cast<double>(both + ref_only + det_only + neither);
  if (n == 0) return 0.0;
  const double po = static_cast<double>(both + neither) / n;
  const double ref_yes = static_cast<double>(both + ref_only) / n, det_yes = static_cast<double>(both + det_only) / n;
  const double pe = ref_yes * det_yes + (1 - ref_yes) * (1 - det_yes);
  return pe >= 1.0 ? 1.0 : (po - pe) / (1.0 - pe);
}

void AgreementScorer::add(const std::vector<SampleLabel>& ref, const std::vector<SampleLabel>& det,
                          const std::vector<Microseconds>& t) {
  const std::size_t n = std::min({ref.size(), det.size(), t.size()});
  for (std::size_t i = 0; i < n; ++i) ++confusion_[static_cast<std::size_t>(ref[i])][static_cast<std::size_t>(det[i])];
  // The usual step between samples; a longer step (between trials, a dropout)
  // ends an event, so no event spans a stretch without samples.
  std::vector<Microseconds> steps;
  for (std::size_t i = 1; i < n; ++i) steps.push_back(t[i] - t[i - 1]);
  Microseconds step = 0;
  if (!steps.empty()) {
    std::nth_element(steps.begin(), steps.begin() + static_cast<std::ptrdiff_t>(steps.size() / 2), steps.end());
    step = steps[steps.size() / 2];
  }
  auto runs_of = [&](const std::vector<SampleLabel>& labels, SampleLabel c) {
    std::vector<Run> runs;
    std::size_t i = 0;
    while (i < n) {
      if (labels[i] != c) {
        ++i;
        continue;
      }
      std::size_t j = i + 1;
      while (j < n && labels[j] == c && 2 * (t[j] - t[j - 1]) <= 3 * step) ++j;
      runs.push_back({t[i], t[j - 1] + step, i, j});
      i = j;
    }
    return runs;
  };
  for (std::size_t c = 0; c < kLabelCount; ++c) {
    const auto label = static_cast<SampleLabel>(c);
    const auto r = runs_of(ref, label), d = runs_of(det, label);
    ref_events_[c] += r.size();
    det_events_[c] += d.size();
    for (const Run& e : r) ref_duration_[c] += static_cast<double>(e.end_us - e.start_us) / 1000.0;
    for (const Run& e : d) det_duration_[c] += static_cast<double>(e.end_us - e.start_us) / 1000.0;
    // All overlapping pairs, best overlap first; each event is matched at most once.
    std::vector<std::tuple<std::size_t, std::size_t, std::size_t>> pairs;  // overlap, ref, det
    std::size_t k = 0;
    for (std::size_t a = 0; a < r.size(); ++a) {
      while (k < d.size() && d[k].last <= r[a].first) ++k;
      for (std::size_t b = k; b < d.size() && d[b].first < r[a].last; ++b) {
        const std::size_t overlap = std::min(r[a].last, d[b].last) - std::max(r[a].first, d[b].first);
        pairs.emplace_back(overlap, a, b);
      }
    }
    std::sort(pairs.begin(), pairs.end(), [](const auto& x, const auto& y) { return std::get<0>(x) > std::get<0>(y); });
    std::vector<bool> used_r(r.size()), used_d(d.size());
    for (const auto& [overlap, a, b] : pairs) {
      if (used_r[a] || used_d[b]) continue;
      used_r[a] = used_d[b] = true;
      ++matched_[c];
      const double on = static_cast<double>(d[b].start_us - r[a].start_us) / 1000.0;
      const double off = static_cast<double>(d[b].end_us - r[a].end_us) / 1000.0;
      onset_[c] += on;
      onset_abs_[c] += std::abs(on);
      offset_[c] += off;
      offset_abs_[c] += std::abs(off);
    }
  }
}

void AgreementScorer::merge(const AgreementScorer& o) {
  for (std::size_t a = 0; a < kLabelCount; ++a) {
    for (std::size_t b = 0; b < kLabelCount; ++b) confusion_[a][b] += o.confusion_[a][b];
    ref_events_[a] += o.ref_events_[a];
    det_events_[a] += o.det_events_[a];
    matched_[a] += o.matched_[a];
    onset_[a] += o.onset_[a];
    onset_abs_[a] += o.onset_abs_[a];
    offset_[a] += o.offset_[a];
    offset_abs_[a] += o.offset_abs_[a];
    ref_duration_[a] += o.ref_duration_[a];
    det_duration_[a] += o.det_duration_[a];
  }
}

AgreementReport AgreementScorer::report() const {
  constexpr double kUndefined = std::numeric_limits<double>::quiet_NaN();
  AgreementReport rep;
  rep.confusion = confusion_;
  for (const auto& row : confusion_) {
    for (auto v : row) rep.samples += v;
  }
  for (SampleLabel l : {SampleLabel::fixation, SampleLabel::saccade, SampleLabel::pso, SampleLabel::blink, SampleLabel::loss,
                        SampleLabel::pursuit}) {
    const std::size_t c = static_cast<std::size_t>(l);
    ClassAgreement a;
    a.label = l;
    std::uint64_t both = confusion_[c][c], ref_only = 0, det_only = 0;
    for (std::size_t o = 0; o < kLabelCount; ++o) {
      a.reference_samples += confusion_[c][o];
      a.detected_samples += confusion_[o][c];
    }
    ref_only = a.reference_samples - both;
    det_only = a.detected_samples - both;
    // Kappa is undefined for a class that neither side used.
    a.kappa = a.reference_samples + a.detected_samples == 0 ? std::nan("")
                                                            : cohen_kappa(both, ref_only, det_only, rep.samples - both - ref_only - det_only);
    a.reference_events = ref_events_[c];
    a.detected_events = det_events_[c];
    a.matched_events = matched_[c];
    // Undefined figures stay NaN: a class never detected has no precision,
    // one never in the reference no recall, and F1 needs both.
    const double det_n = static_cast<double>(a.detected_events), ref_n = static_cast<double>(a.reference_events);
    a.precision = a.detected_events ? static_cast<double>(a.matched_events) / det_n : kUndefined;
    a.recall = a.reference_events ? static_cast<double>(a.matched_events) / ref_n : kUndefined;
    a.f1 = !a.detected_events || !a.reference_events ? kUndefined
           : a.matched_events ? 2 * a.precision * a.recall / (a.precision + a.recall)
                              : 0.0;
    a.reference_mean_duration_ms = a.reference_events ? ref_duration_[c] / ref_n : kUndefined;
    a.detected_mean_duration_ms = a.detected_events ? det_duration_[c] / det_n : kUndefined;
    a.mean_duration_difference_ms = a.detected_mean_duration_ms - a.reference_mean_duration_ms;  // NaN if either is
    a.mean_onset_difference_ms = a.mean_abs_onset_difference_ms = kUndefined;
    a.mean_offset_difference_ms = a.mean_abs_offset_difference_ms = a.matched_duration_difference_ms = kUndefined;
    if (a.matched_events) {
      const double m = static_cast<double>(a.matched_events);
      a.mean_onset_difference_ms = onset_[c] / m;
      a.mean_abs_onset_difference_ms = onset_abs_[c] / m;
      a.mean_offset_difference_ms = offset_[c] / m;
      a.mean_abs_offset_difference_ms = offset_abs_[c] / m;
      a.matched_duration_difference_ms = (offset_[c] - onset_[c]) / m;
    }
    rep.classes.push_back(a);
  }
  return rep;
}

}  // namespace gazemill
