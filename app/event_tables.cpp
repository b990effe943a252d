#include "app/event_tables.h"

#include <map>
#include <optional>

#include "io/alignment_io.h"
#include "io/cleaning_io.h"
#include "io/study_store.h"
#include "measures/region_mapper.h"
#include "pipeline/regions.h"

namespace gazemill {

EventTables event_tables(const StudyStoreReader& store, const Protocol& protocol, const RegionCatalogue* regions, bool cleaned, bool aligned,
                         KnownResults known) {
  EventTables out;
  std::map<std::string, const RecordingAlignment*> alignment;
  std::vector<RecordingAlignment> read;
  if (aligned) {
    if (!known.alignment) read = read_alignment(store);
    for (const auto& a : known.alignment ? *known.alignment : read) alignment.emplace(a.recording, &a);
  }
  std::map<std::string, const RecordingEvents*> known_events;
  if (known.events) {
    for (const auto& r : *known.events) known_events.emplace(r.meta.id, &r);
  }
  // Input ids as cleaning gave them: every fixation of every trial, recording by recording, in order.
  std::uint32_t next_id = 0;
  for (const auto& id : store.recording_ids()) {
    const auto k = known_events.find(id);
    std::optional<RecordingEvents> from_store;
    if (k == known_events.end()) from_store = RecordingEvents{store.read_recording(id, false), store.read_events(id)};
    const Recording& rec = from_store ? from_store->meta : k->second->meta;
    const DetectedEvents& ev = from_store ? from_store->events : k->second->events;
    std::map<std::uint32_t, CleanFixation> kept;
    std::map<std::uint32_t, RemovedFixation> removed;
    if (cleaned) {
      const CleanedRecording* lent = nullptr;
      if (known.cleaned) {
        for (const auto& c : *known.cleaned) {
          if (c.meta.id == id) lent = &c;
        }
      }
      std::vector<CleanFixation> read_kept;
      if (!lent) read_kept = read_clean_fixations(store, id);
      for (const auto& f : lent ? lent->kept : read_kept) kept.emplace(f.id, f);
      if (!known.removed) {
        for (auto& x : read_removed_fixations(store, id)) removed.emplace(x.input_id, x);
      } else if (const auto r = known.removed->find(id); r != known.removed->end()) {  // none: nothing removed
        for (const auto& x : r->second) removed.emplace(x.input_id, x);
      }
    }
    const RecordingAlignment* lines = aligned ? alignment.at(id) : nullptr;
    std::size_t fx = 0, sc = 0, bl = 0;
    for (const Trial& t : rec.trials) {
      auto trial = std::make_unique<EventTrial>();
      trial->participant = rec.participant;
      trial->session = rec.session;
      trial->recording = id;
      trial->trial = t.id;
      trial->start_us = t.start_us;
      trial->variables = t.variables;
      const RegionLayout* layout = regions ? regions->find(t.variable(protocol.design.item_variable), t.variables) : nullptr;
      std::map<std::uint32_t, std::size_t> number_of;  // input id -> number in the trial
      const std::size_t first_row = out.fixations.size();
      for (std::size_t n = 1; fx < ev.fixations.size() && ev.fixations[fx].trial == t.id; ++fx, ++n) {
        FixationRow row;
        row.trial = trial.get();
        row.number = n;
        row.event = ev.fixations[fx];
        row.duration_ms = row.event.duration_ms();
        row.x_px = row.event.x_px;
        row.y_px = row.event.y_px;
        const std::uint32_t input_id = next_id++;
        number_of[input_id] = n;
        if (cleaned) {
          if (const auto k = kept.find(input_id); k != kept.end()) {
            row.duration_ms = k->second.duration_ms;
            row.x_px = k->second.fixation.x_px;
            row.y_px = k->second.fixation.y_px;
          } else if (const auto r = removed.find(input_id); r != removed.end()) {
            row.kept = false;
            row.removed_by = r->second.rule;
            row.removal_reason = r->second.reason;
          }
        }
        if (lines && row.kept) {
          if (const auto l = lines->fixations.find(input_id); l != lines->fixations.end() && l->second.line >= 0) {
            row.line = l->second.line + 1;
            row.corrected_y_px = l->second.corrected_y_px;
            if (layout) {
              const FixationPlace where = place_fixation(*layout, row.x_px, l->second.corrected_y_px, protocol.regions);
              if (where.region >= 0) {
                const RegionInfo& info = layout->regions[static_cast<std::size_t>(where.region)];
                row.region = where.region + 1;
                row.region_label = info.label;
                row.region_role = info.role;
                row.landing_chars = where.landing_chars;
              }
              // Characters from the line's left edge (its first box).
              double left = 1e300;
              for (const auto& r : layout->regions) {
                for (const auto& b : r.boxes) {
                  if (b.line == l->second.line) left = std::min(left, b.left_px);
                }
              }
              if (left < 1e300 && layout->char_width_px > 0) row.line_chars = (row.x_px - left) / layout->char_width_px;
            }
          }
        }
        out.fixations.push_back(std::move(row));
      }
      // Merged-into numbers, once every fixation of the trial has its number.
      for (std::size_t i = first_row; i < out.fixations.size(); ++i) {
        const std::uint32_t input_id = next_id - static_cast<std::uint32_t>(out.fixations.size() - i);
        if (const auto r = removed.find(input_id); r != removed.end() && r->second.merged_into) {
          if (const auto n = number_of.find(*r->second.merged_into); n != number_of.end()) out.fixations[i].merged_into = n->second;
        }
      }
      for (std::size_t n = 1; sc < ev.saccades.size() && ev.saccades[sc].trial == t.id; ++sc, ++n) out.saccades.push_back({trial.get(), n, ev.saccades[sc]});
      for (std::size_t n = 1; bl < ev.blinks.size() && ev.blinks[bl].trial == t.id; ++bl, ++n) out.blinks.push_back({trial.get(), n, ev.blinks[bl]});
      out.trials.push_back(std::move(trial));
    }
  }
  return out;
}

}  // namespace gazemill
