#include "app/clean.h"

#include <algorithm>
#include <exception>
#include <map>
#include <optional>
#include <utility>

#include "filters/cleaning_engine.h"
#include "io/cleaning_io.h"
#include "io/region_files.h"
#include "io/study_store.h"
#include "measures/region_mapper.h"
#include "pipeline/design.h"
#include "pipeline/input_error.h"

namespace gazemill {

namespace {

// One recording's trials, appended to `into` (null: only counted), the ids
// taken from `next_fixation` and `next_trial` in recording order.
void append_recording(CleanParticipant* into, const RecordingEvents& r, const DesignSpec& design, std::uint32_t& next_fixation,
                      std::uint32_t& next_trial) {
  const Recording& rec = r.meta;
  const DetectedEvents& ev = r.events;
  std::size_t fx = 0, bl = 0, ls = 0, td = 0;
  for (const Trial& t : rec.trials) {
    // Events are stored trial by trial in trial order.
    std::size_t fx_end = fx;
    while (fx_end < ev.fixations.size() && ev.fixations[fx_end].trial == t.id) ++fx_end;
    if (!into) {
      ++next_trial;
      next_fixation += static_cast<std::uint32_t>(fx_end - fx);
      fx = fx_end;
      continue;
    }
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
    for (; td < ev.trials.size() && ev.trials[td].trial == t.id; ++td) {
      ct.samples = ev.trials[td].samples;
      ct.missing_samples = ev.trials[td].missing_samples;
    }
    ct.fixations.reserve(fx_end - fx);
    for (; fx < fx_end; ++fx) {
      CleanFixation f;
      f.id = next_fixation++;
      f.fixation = ev.fixations[fx];
      f.duration_ms = f.fixation.duration_ms();
      ct.fixations.push_back(f);
    }
    for (; bl < ev.blinks.size() && ev.blinks[bl].trial == t.id; ++bl) ct.blinks.push_back(ev.blinks[bl]);
    for (; ls < ev.losses.size() && ev.losses[ls].trial == t.id; ++ls) ct.losses.emplace_back(ev.losses[ls].start_us, ev.losses[ls].end_us);
    into->trials.push_back(std::move(ct));
  }
}

// The rules' failures name the protocol's rule.
template <class F>
auto naming_the_rule(const Protocol& protocol, F&& f) {
  try {
    return f();
  } catch (const RuleApplyError& e) {
    const CleaningRuleSpec& rule = protocol.cleaning.at(e.rule);
    throw InputError({protocol.path, rule.line, "cleaning[" + std::to_string(e.rule + 1) + "]"}, "rule '" + rule.name + "': " + e.what());
  } catch (const std::invalid_argument& e) {
    throw InputError({protocol.path, 0, "cleaning"}, e.what());
  }
}

}  // namespace

CleaningState cleaning_state_from(const std::vector<RecordingEvents>& recordings, const DesignSpec& design) {
  CleaningState state;
  state.factors = design.factors;
  std::map<std::string, std::size_t> participant_index;
  std::uint32_t next_fixation = 0, next_trial = 0;
  for (const RecordingEvents& r : recordings) {
    if (&r == &recordings.front()) state.screen = r.meta.screen;
    auto [it, added] = participant_index.emplace(r.meta.participant, state.participants.size());
    if (added) {
      CleanParticipant p;
      p.id = static_cast<std::uint32_t>(state.participants.size());
      p.participant = r.meta.participant;
      state.participants.push_back(p);
    }
    append_recording(&state.participants[it->second], r, design, next_fixation, next_trial);
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
  return naming_the_rule(protocol, [&] { return run_cleaning(std::move(input), protocol.cleaning); });
}

AuditReport clean_events_by_participant(const Protocol& protocol, const std::vector<RecordingEvents>& recordings,
                                        const std::function<void(CleaningOutcome&&)>& each) {
  // Each recording's first ids, as one state of the whole study numbers them.
  std::vector<std::pair<std::uint32_t, std::uint32_t>> first_ids;
  std::uint32_t next_fixation = 0, next_trial = 0;
  std::vector<std::string> order;  // participants as first met
  std::map<std::string, std::vector<std::size_t>> of;  // their recordings, in study order
  for (std::size_t i = 0; i < recordings.size(); ++i) {
    first_ids.emplace_back(next_fixation, next_trial);
    append_recording(nullptr, recordings[i], protocol.design, next_fixation, next_trial);
    auto& mine = of[recordings[i].meta.participant];
    if (mine.empty()) order.push_back(recordings[i].meta.participant);
    mine.push_back(i);
  }
  std::optional<RegionCatalogue> regions;
  if (protocol.regions.present()) regions = load_regions(protocol);
  std::size_t k = 0;
  auto next = [&](CleaningState& state) {
    if (k == order.size()) return false;
    state.factors = protocol.design.factors;
    state.screen = recordings.front().meta.screen;  // as for the whole study: the first recording's
    CleanParticipant p;
    p.id = static_cast<std::uint32_t>(k);
    p.participant = order[k];
    for (const std::size_t i : of.at(order[k])) {
      auto [fixation, trial] = first_ids[i];
      append_recording(&p, recordings[i], protocol.design, fixation, trial);
    }
    state.participants.push_back(std::move(p));
    if (regions) map_regions(state, *regions, protocol.regions);
    ++k;
    return true;
  };
  // What `each` throws is its own, not a rule's: carried past the rules' naming.
  struct Stopped {};
  std::exception_ptr failed;
  auto guarded = [&](CleaningOutcome&& part) {
    try {
      each(std::move(part));
    } catch (...) {
      failed = std::current_exception();
      throw Stopped{};
    }
  };
  try {
    return naming_the_rule(protocol, [&] { return run_cleaning_by_participant(next, protocol.cleaning, protocol.design.factors, guarded); });
  } catch (const Stopped&) {
    std::rethrow_exception(failed);
  }
}

std::map<std::string, CleanedRecording> cleaned_recordings(CleaningState&& state, const std::map<std::string, const Recording*>& meta) {
  std::map<std::string, CleanedRecording> by_id;
  // Held to the end of the run beside the events: exactly as many as are kept.
  std::map<std::string, std::size_t> kept;
  for (const auto& p : state.participants) {
    for (const auto& t : p.trials) {
      kept[t.recording] += static_cast<std::size_t>(std::count_if(t.fixations.begin(), t.fixations.end(), [](const CleanFixation& f) { return f.kept; }));
    }
  }
  for (const auto& [id, n] : kept) {
    CleanedRecording& c = by_id[id];
    c.meta = *meta.at(id);
    c.kept.reserve(n);
  }
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
  return by_id;
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
