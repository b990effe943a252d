#include "app/clean.h"

#include <algorithm>
#include <map>
#include <utility>

#include "filters/cleaning_engine.h"
#include "io/cleaning_io.h"
#include "io/region_files.h"
#include "io/study_store.h"
#include "measures/region_mapper.h"
#include "pipeline/design.h"
#include "pipeline/input_error.h"

namespace gazemill {

CleaningState cleaning_state_from(const std::vector<RecordingEvents>& recordings, const DesignSpec& design) {
  CleaningState state;
  state.factors = design.factors;
  std::map<std::string, std::size_t> participant_index;
  std::uint32_t next_fixation = 0, next_trial = 0;
  bool first = true;
  for (const RecordingEvents& r : recordings) {
    const Recording& rec = r.meta;
    const DetectedEvents& ev = r.events;
    if (first) {
      state.screen = rec.screen;
      first = false;
    }
    auto [it, added] = participant_index.emplace(rec.participant, state.participants.size());
    if (added) {
      CleanParticipant p;
      p.id = static_cast<std::uint32_t>(state.participants.size());
      p.participant = rec.participant;
      state.participants.push_back(p);
    }
    CleanParticipant& participant = state.participants[it->second];
    std::size_t fx = 0, bl = 0, ls = 0, td = 0;
    for (const Trial& t : rec.trials) {
      CleanTrial ct;
      ct.id = next_trial++;
      ct.recording = rec.id;
      ct.participant = rec.participant;
      ct.trial = t.id;
      ct.item = t.variable(design.item_variable);
      ct.cell = cell_key(design_levels(design, t.variables));
      ct.variables = t.variables;
      ct.markers = t.markers;
      ct.start_us = t.start_us;
      ct.end_us = t.end_us;
      // Events are stored trial by trial in trial order.
      for (; td < ev.trials.size() && ev.trials[td].trial == t.id; ++td) {
        ct.samples = ev.trials[td].samples;
        ct.missing_samples = ev.trials[td].missing_samples;
      }
      std::size_t fx_end = fx;  // held for the whole study: no growth's slack
      while (fx_end < ev.fixations.size() && ev.fixations[fx_end].trial == t.id) ++fx_end;
      ct.fixations.reserve(fx_end - fx);
      for (; fx < ev.fixations.size() && ev.fixations[fx].trial == t.id; ++fx) {
        CleanFixation f;
        f.id = next_fixation++;
        f.fixation = ev.fixations[fx];
        f.duration_ms = f.fixation.duration_ms();
        ct.fixations.push_back(f);
      }
      for (; bl < ev.blinks.size() && ev.blinks[bl].trial == t.id; ++bl) ct.blinks.push_back(ev.blinks[bl]);
      for (; ls < ev.losses.size() && ev.losses[ls].trial == t.id; ++ls) ct.losses.emplace_back(ev.losses[ls].start_us, ev.losses[ls].end_us);
      participant.trials.push_back(std::move(ct));
    }
  }
  return state;
}

void map_regions(CleaningState& state, const RegionCatalogue& regions, const RegionSpec& spec) {
  for (auto& p : state.participants) {
    for (auto& t : p.trials) {
      const RegionLayout* layout = regions.find(t.item, t.variables);
      if (!layout) {
        throw InputError({regions.source(), 0, "item"}, "no regions for " + regions.describe(t.item, t.variables) + " (participant " + t.participant +
                                                 ", trial " + t.trial + ")");
      }
      for (auto& f : t.fixations) f.region = place_fixation(*layout, f.fixation.x_px, f.fixation.y_px, spec).region;
      for (const auto& r : layout->regions) {
        if (!r.role.empty()) t.region_roles.emplace(r.role, r.id);
      }
      t.region_count = static_cast<int>(layout->regions.size());
      t.regions_mapped = true;
    }
  }
}

CleaningOutcome clean_events(const Protocol& protocol, const std::vector<RecordingEvents>& recordings) {
  CleaningState input = cleaning_state_from(recordings, protocol.design);
  if (protocol.regions.present()) map_regions(input, load_regions(protocol), protocol.regions);
  try {
    return run_cleaning(std::move(input), protocol.cleaning);
  } catch (const RuleApplyError& e) {
    const CleaningRuleSpec& rule = protocol.cleaning.at(e.rule);
    throw InputError({protocol.path, rule.line, "cleaning[" + std::to_string(e.rule + 1) + "]"}, "rule '" + rule.name + "': " + e.what());
  } catch (const std::invalid_argument& e) {
    throw InputError({protocol.path, 0, "cleaning"}, e.what());
  }
}

std::vector<CleanedRecording> cleaned_recordings(CleaningState&& state, const std::vector<RecordingEvents>& recordings) {
  std::map<std::string, CleanedRecording> by_id;
  for (const auto& r : recordings) by_id[r.meta.id].meta = r.meta;
  // Held to the end of the run beside the events: exactly as many as are kept.
  std::map<std::string, std::size_t> kept;
  for (const auto& p : state.participants) {
    for (const auto& t : p.trials) {
      kept[t.recording] += static_cast<std::size_t>(std::count_if(t.fixations.begin(), t.fixations.end(), [](const CleanFixation& f) { return f.kept; }));
    }
  }
  for (const auto& [id, n] : kept) by_id.at(id).kept.reserve(n);
  for (auto& p : state.participants) {
    for (auto& t : p.trials) {
      CleanedRecording& c = by_id.at(t.recording);
      c.trial_kept[t.trial] = t.kept;
      for (auto& f : t.fixations) {
        if (f.kept) c.kept.push_back(std::move(f));
      }
      std::vector<CleanFixation>().swap(t.fixations);
    }
  }
  std::vector<CleanedRecording> out;
  for (const auto& r : recordings) out.push_back(std::move(by_id.at(r.meta.id)));
  return out;
}

std::vector<CleanedRecording> cleaned_recordings(const StudyStoreReader& store) {
  std::vector<CleanedRecording> out;
  for (const auto& id : store.recording_ids()) {
    CleanedRecording c;
    c.meta = store.read_recording(id, false);
    c.kept = read_clean_fixations(store, id);
    c.trial_kept = read_clean_trial_verdicts(store, id);
    out.push_back(std::move(c));
  }
  return out;
}

}  // namespace gazemill
