#include "app/align.h"

#include <fmt/format.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <filesystem>
#include <limits>
#include <map>
#include <set>

#include "alignment/drift_registry.h"
#include "app/parallel_recordings.h"
#include "io/review_file.h"
#include "io/trial_drawing.h"
#include "measures/region_mapper.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

namespace {

DriftText text_of(const RegionLayout& layout, const AlignmentSpec& spec) {
  DriftText t;
  for (const auto& l : layout.lines) t.line_y_px.push_back(l.centre_px());
  t.line_height_px = layout.lines.size() > 1 ? layout.lines[1].centre_px() - layout.lines[0].centre_px()
                                             : layout.lines.front().bottom_px - layout.lines.front().top_px;
  t.font_height_px = spec.font_height_px > 0 ? spec.font_height_px : 0.5 * t.line_height_px;
  t.word_x_px = layout.word_centre_x_px;
  for (auto& w : t.word_x_px) {
    if (w.empty()) w.push_back(0.5 * (layout.lines.front().top_px + layout.lines.front().bottom_px));  // a line without words
  }
  return t;
}

}  // namespace

namespace {

// The same kept fixations, as drift correction sees them: ids, positions, durations.
bool same_fixations(const CleanFixation* a, const CleanFixation* b, std::size_t n) {
  for (std::size_t i = 0; i < n; ++i) {
    if (a[i].id != b[i].id || a[i].fixation.x_px != b[i].fixation.x_px || a[i].fixation.y_px != b[i].fixation.y_px ||
        a[i].duration_ms != b[i].duration_ms) {
      return false;
    }
  }
  return true;
}

bool trial_kept(const CleanedRecording& rec, const std::string& trial) {
  const auto v = rec.trial_kept.find(trial);
  return v == rec.trial_kept.end() || v->second;
}

}  // namespace

std::vector<RecordingAlignment> align_study(const Protocol& protocol, const RegionCatalogue& regions,
                                            const std::vector<CleanedRecording>& recordings, unsigned threads,
                                            const PreviousAlignment* previous, std::size_t* trials_reused) {
  const AlignmentSpec& spec = protocol.alignment;
  // A person's decisions, checked against the study before any work.
  // By recording id and trial: trial numbers may start again in each session.
  std::map<std::pair<std::string, std::string>, const TrialReview*> review_of;
  std::vector<TrialReview> reviews;
  std::string review_path;
  if (!spec.review_file.empty()) {
    const fs::path base = fs::absolute(fs::path(protocol.path)).parent_path();
    review_path = fs::path(spec.review_file).is_absolute() ? spec.review_file : (base / spec.review_file).string();
    reviews = read_review_file(review_path);
    std::map<std::string, std::vector<const Recording*>> of_participant;
    for (const auto& rec : recordings) of_participant[rec.meta.participant].push_back(&rec.meta);
    auto has_trial = [](const Recording& r, const std::string& trial) {
      return std::any_of(r.trials.begin(), r.trials.end(), [&](const Trial& t) { return t.id == trial; });
    };
    auto session_name = [](const Recording& r) { return r.session.empty() ? std::string("(none)") : r.session; };
    for (const auto& r : reviews) {
      const auto mine = of_participant.find(r.participant);
      if (mine == of_participant.end()) {
        std::string known;
        std::size_t listed = 0;
        for (const auto& [p, recs] : of_participant) {
          if (listed++ == 12) {
            known += ", ...";
            break;
          }
          known += (known.empty() ? "" : ", ") + p;
        }
        throw InputError({review_path, r.line, "participant"}, "no participant " + r.participant + " in this study; its participants are " + known);
      }
      std::vector<const Recording*> with_trial;
      for (const Recording* rec : mine->second) {
        if ((r.session.empty() || rec->session == r.session) && has_trial(*rec, r.trial)) with_trial.push_back(rec);
      }
      if (!r.session.empty() && std::none_of(mine->second.begin(), mine->second.end(), [&](const Recording* x) { return x->session == r.session; })) {
        std::string sessions;
        for (const Recording* rec : mine->second) sessions += (sessions.empty() ? "" : ", ") + session_name(*rec);
        throw InputError({review_path, r.line, "session"}, "participant " + r.participant + " has no session " + r.session + "; its sessions are " + sessions);
      }
      if (with_trial.empty()) {
        throw InputError({review_path, r.line, "trial"}, "participant " + r.participant + (r.session.empty() ? "" : ", session " + r.session) +
                                                           " has no trial " + r.trial + " in this study");
      }
      if (with_trial.size() > 1) {
        std::string sessions;
        for (const Recording* rec : with_trial) sessions += (sessions.empty() ? "" : " and ") + session_name(*rec);
        throw InputError({review_path, r.line, "trial"}, "participant " + r.participant + " has a trial " + r.trial + " in sessions " + sessions +
                                                           ": add a session column to say which one this row is for");
      }
      if (r.decision == ReviewDecision::method) {
        try {
          make_drift_corrector(r.value);
        } catch (const std::invalid_argument& e) {
          throw InputError({review_path, r.line, "value"}, e.what());
        }
      }
      if (const auto [it, fresh] = review_of.emplace(std::make_pair(with_trial.front()->id, r.trial), &r); !fresh) {
        throw InputError({review_path, r.line, "trial"}, "participant " + r.participant + ", trial " + r.trial + " of session " +
                                                           session_name(*with_trial.front()) + " is reviewed twice (also on line " +
                                                           std::to_string(it->second->line) + ")");
      }
    }
  }
  const auto corrector = spec.members.empty() ? make_drift_corrector(spec.method, spec.parameters)
                                              : make_majority_corrector(spec.members, spec.parameters);
  const bool attach = spec.method == "attach";
  // Which fixations are on the text at all: within the protocol's reach of a
  // line (max_line_distance_px, default one line height), whatever the method.
  RegionSpec reach = protocol.regions;
  reach.off_line_nearest = true;
  std::map<std::string, std::pair<const CleanedRecording*, const RecordingAlignment*>> before;
  if (previous) {
    for (const auto& c : previous->cleaned) before[c.meta.id].first = &c;
    for (const auto& a : previous->alignment) before[a.recording].second = &a;
  }
  std::atomic<std::size_t> reused{0};
  auto align_recording = [&](const CleanedRecording& rec) {
    RecordingAlignment a;
    a.recording = rec.meta.id;
    // The previous run's kept fixations of each trial, and its aligned trials, by trial id.
    const auto was = before.find(rec.meta.id);
    const CleanedRecording* old_rec = was == before.end() ? nullptr : was->second.first;
    const RecordingAlignment* old_lines = was == before.end() ? nullptr : was->second.second;
    std::map<std::string, std::pair<std::size_t, std::size_t>> old_range;
    std::map<std::string, const AlignedTrial*> old_trial;
    if (old_rec && old_lines) {
      for (std::size_t i = 0; i < old_rec->kept.size();) {
        std::size_t j = i;
        while (j < old_rec->kept.size() && old_rec->kept[j].fixation.trial == old_rec->kept[i].fixation.trial) ++j;
        old_range[old_rec->kept[i].fixation.trial] = {i, j};
        i = j;
      }
      for (const auto& t : old_lines->trials) old_trial[t.trial] = &t;
    }
    // A trial kept before and now, with the same kept fixations: its lines as they were.
    auto reuse = [&](const std::string& trial, std::size_t begin, std::size_t end) {
      const auto t = old_trial.find(trial);
      if (t == old_trial.end() || !trial_kept(*old_rec, trial)) return false;
      const auto r = old_range.find(trial);
      const std::size_t n = end - begin;
      const std::size_t old_n = r == old_range.end() ? 0 : r->second.second - r->second.first;
      if (n != old_n || (n > 0 && !same_fixations(&rec.kept[begin], &old_rec->kept[r->second.first], n))) return false;
      for (std::size_t i = begin; i < end; ++i) {
        if (!old_lines->fixations.count(rec.kept[i].id)) return false;
      }
      for (std::size_t i = begin; i < end; ++i) a.fixations[rec.kept[i].id] = old_lines->fixations.at(rec.kept[i].id);
      a.trials.push_back(*t->second);
      ++reused;
      return true;
    };
    std::size_t k = 0;
    for (const Trial& t : rec.meta.trials) {
      const std::size_t begin = k;
      while (k < rec.kept.size() && rec.kept[k].fixation.trial == t.id) ++k;
      const auto verdict = rec.trial_kept.find(t.id);
      if (verdict != rec.trial_kept.end() && !verdict->second) continue;
      if (!old_trial.empty() && reuse(t.id, begin, k)) continue;
      const std::string& item = t.variable(protocol.design.item_variable);
      const RegionLayout* layout = regions.find(item, t.variables);
      if (!layout) {
        throw InputError({regions.source(), 0, "item"}, "no regions for " + regions.describe(item, t.variables) + " (recording " +
                                                             rec.meta.id + ", trial " + t.id + ")");
      }
      DriftInput input;
      input.text = text_of(*layout, spec);
      std::vector<std::uint32_t> ids;
      for (std::size_t i = begin; i < k; ++i) {
        const CleanFixation& f = rec.kept[i];
        // attach keeps the protocol's own rule for fixations between lines (off_line).
        const RegionSpec& rule = attach ? protocol.regions : reach;
        if (place_fixation(*layout, f.fixation.x_px, f.fixation.y_px, rule).line < 0) {
          a.fixations[f.id] = {-1, std::numeric_limits<double>::quiet_NaN()};
          continue;
        }
        input.fixations.push_back({f.fixation.x_px, f.fixation.y_px, f.duration_ms});
        ids.push_back(f.id);
      }
      DriftOutput result = corrector->correct(input);
      const auto c = result.fit.find("confidence");
      const double confidence = c == result.fit.end() ? 1.0 : c->second;
      AlignedTrial trial{t.id, spec.method, confidence, confidence < spec.min_confidence, result.fit, "", false};
      if (const auto r = review_of.find({rec.meta.id, t.id}); r != review_of.end()) {
        const TrialReview& v = *r->second;
        trial.flagged = false;  // a person has looked at it
        trial.review = std::string(to_string(v.decision)) + (v.value.empty() ? "" : " " + v.value) + ": " + v.reason +
                       (v.reviewer.empty() ? "" : " (" + v.reviewer + ")");
        switch (v.decision) {
          case ReviewDecision::accept: break;
          case ReviewDecision::exclude: trial.excluded = true; break;
          case ReviewDecision::method:
            result = make_drift_corrector(v.value)->correct(input);
            trial.method = v.value;
            break;
          case ReviewDecision::shift_lines:
            if (std::abs(v.number) >= static_cast<double>(input.text.line_y_px.size())) {
              throw InputError({review_path, v.line, "value"}, "trial " + t.id + " of " + rec.meta.participant + " has " +
                                                                   std::to_string(input.text.line_y_px.size()) + " line(s) of text: shift_lines " +
                                                                   v.value + " would move every fixation off it");
            }
            for (std::size_t i = 0; i < result.line.size(); ++i) {
              const long moved = result.line[i] + static_cast<long>(v.number);
              const bool on = moved >= 0 && moved < static_cast<long>(input.text.line_y_px.size());
              result.line[i] = on ? static_cast<int>(moved) : -1;
              result.corrected_y_px[i] = on ? input.text.line_y_px[static_cast<std::size_t>(moved)] : std::numeric_limits<double>::quiet_NaN();
            }
            break;
          case ReviewDecision::offset_px: {
            DriftInput moved = input;
            for (auto& f : moved.fixations) f.y_px -= v.number;
            result = make_drift_corrector("attach")->correct(moved);
            trial.method = "attach after a reviewer's offset";
            break;
          }
        }
      }
      for (std::size_t i = 0; i < ids.size(); ++i) a.fixations[ids[i]] = {result.line[i], result.corrected_y_px[i]};
      a.trials.push_back(std::move(trial));
    }
    return a;
  };
  // Recordings are independent and the correctors pure: one per thread, the
  // results in study order, the first recording's error (in that order) thrown.
  std::vector<RecordingAlignment> out(recordings.size());
  for_each_recording(recordings.size(), threads, [&](std::size_t k) { out[k] = align_recording(recordings[k]); });
  if (trials_reused) *trials_reused = reused;
  return out;
}

std::vector<std::pair<std::string, std::string>> flagged_trial_drawings(const Protocol& protocol, const RegionCatalogue& regions,
                                                                         const std::vector<CleanedRecording>& recordings,
                                                                         const std::vector<RecordingAlignment>& alignment) {
  std::vector<std::pair<std::string, std::string>> out;
  for (std::size_t r = 0; r < recordings.size() && r < alignment.size(); ++r) {
    const CleanedRecording& rec = recordings[r];
    const RecordingAlignment& a = alignment[r];
    for (const AlignedTrial& at : a.trials) {
      if (!at.flagged) continue;
      const auto t = std::find_if(rec.meta.trials.begin(), rec.meta.trials.end(), [&](const Trial& x) { return x.id == at.trial; });
      if (t == rec.meta.trials.end()) continue;
      const std::string& item = t->variable(protocol.design.item_variable);
      const RegionLayout* layout = regions.find(item, t->variables);
      if (!layout) continue;
      TrialDrawing d;
      d.title = fmt::format("{}, trial {} (item {}): {}, confidence {:.2f}", rec.meta.participant, at.trial, item, at.method, at.confidence);
      for (const auto& l : layout->lines) d.lines.emplace_back(l.top_px, l.bottom_px);
      for (const auto& region : layout->regions) {
        for (const auto& b : region.boxes) d.boxes.push_back({b.left_px, b.top_px, b.right_px, b.bottom_px, region.label});
      }
      for (const auto& f : rec.kept) {
        if (f.fixation.trial != at.trial) continue;
        const auto line = a.fixations.find(f.id);
        d.fixations.push_back({f.fixation.x_px, f.fixation.y_px,
                               line == a.fixations.end() ? std::numeric_limits<double>::quiet_NaN() : line->second.corrected_y_px,
                               f.duration_ms});
      }
      out.emplace_back(a.recording + "_trial" + at.trial + ".svg", trial_drawing_svg(d));
    }
  }
  return out;
}

}  // namespace gazemill
