#pragma once
// Agreement between a detector's labels and a reference labelling: per
// class, sample-level Cohen's kappa (the class against all others), event
// precision / recall / F1 with one-to-one matching by largest overlap, the
// onset and offset differences of matched events, the mean event durations
// on both sides, and the confusion matrix. Stretches added one after the
// other (recordings of a corpus) are pooled: kappa comes from the summed
// confusion matrix, event figures from the summed counts.

#include <array>
#include <cstdint>
#include <vector>

#include "pipeline/events.h"

namespace gazemill {

inline constexpr std::size_t kLabelCount = 7;

/// Every figure that is undefined (a class never detected has no precision,
/// one never in the reference no recall, no matched event no onset
/// difference) is NaN, never 0.
struct ClassAgreement {
  SampleLabel label = SampleLabel::fixation;
  double kappa = 0;  // NaN when neither side has the class
  std::uint64_t reference_samples = 0, detected_samples = 0;
  std::uint64_t reference_events = 0, detected_events = 0, matched_events = 0;
  double precision = 0;  // matched / detected events; NaN when none detected
  double recall = 0;     // matched / reference events; NaN when none in the reference
  double f1 = 0;         // NaN when precision or recall is
  double mean_onset_difference_ms = 0, mean_abs_onset_difference_ms = 0;    // detected - reference, matched events
  double mean_offset_difference_ms = 0, mean_abs_offset_difference_ms = 0;
  // Mean event duration (ms) of all reference and all detected events, and
  // detected minus reference: the bias a mean fixation duration inherits.
  double reference_mean_duration_ms = 0, detected_mean_duration_ms = 0, mean_duration_difference_ms = 0;
  // Mean of (detected - reference) duration over matched pairs.
  double matched_duration_difference_ms = 0;
};

struct AgreementReport {
  std::vector<ClassAgreement> classes;  // fixation, saccade, pso, blink, loss, pursuit
  std::array<std::array<std::uint64_t, kLabelCount>, kLabelCount> confusion{};  // [reference][detected]
  std::uint64_t samples = 0;
  const ClassAgreement& of(SampleLabel label) const {
    for (const auto& c : classes) {
      if (c.label == label) return c;
    }
    return classes.front();  // "other" has no figures of its own
  }
};

/// Collects labelled stretches (e.g. one per recording); events never span two stretches.
class AgreementScorer {
 public:
  void add(const std::vector<SampleLabel>& reference, const std::vector<SampleLabel>& detected,
           const std::vector<Microseconds>& time_us);
  /// Adds what another scorer collected (pooling per-file scorers).
  void merge(const AgreementScorer& other);
  AgreementReport report() const;

 private:
  struct Run {
    Microseconds start_us, end_us;
    std::size_t first, last;  // sample indices into the stretch, [first, last)
  };
  std::array<std::array<std::uint64_t, kLabelCount>, kLabelCount> confusion_{};
  std::array<std::uint64_t, kLabelCount> ref_events_{}, det_events_{}, matched_{};
  std::array<double, kLabelCount> onset_{}, onset_abs_{}, offset_{}, offset_abs_{};
  std::array<double, kLabelCount> ref_duration_{}, det_duration_{};  // ms, summed over events
};

/// Cohen's kappa of a 2 x 2 table: both, reference only, detected only, neither.
double cohen_kappa(std::uint64_t both, std::uint64_t ref_only, std::uint64_t det_only, std::uint64_t neither);

}  // namespace gazemill
