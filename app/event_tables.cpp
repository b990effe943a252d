#include "app/event_tables.h"

#include <cmath>
#include <limits>
#include <map>
#include <optional>
#include <thread>

#include "app/parallel_recordings.h"
#include "io/alignment_io.h"
#include "io/event_tables_io.h"
#include "io/cleaning_io.h"
#include "io/study_store.h"
#include "measures/region_mapper.h"
#include "pipeline/regions.h"

namespace gazemill {
namespace {

// What one recording's rows are made from: lent by the run, or read from the
// store (on the caller's thread, before the rows are made on several).
struct RecordingSources {
  std::optional<RecordingEvents> from_store;
  const Recording* meta = nullptr;
  const DetectedEvents* events = nullptr;
  std::vector<CleanFixation> read_kept;
  const std::vector<CleanFixation>* kept = nullptr;  // null: not cleaned
  std::vector<RemovedFixation> read_removed;
  const std::vector<RemovedFixation>* removed = nullptr;  // null: nothing removed
  const RecordingAlignment* lines = nullptr;             // null: not aligned
  std::uint32_t first_input_id = 0;                      // cleaning numbers every fixation of the study in order
};

EventTables recording_rows(const std::string& id, const RecordingSources& in, const Protocol& protocol, const RegionCatalogue* regions) {
  EventTables out;
  const Recording& rec = *in.meta;
  const DetectedEvents& ev = *in.events;
  // By input id; the first of a repeated id counts, as before.
  std::map<std::uint32_t, const CleanFixation*> kept;
  std::map<std::uint32_t, const RemovedFixation*> removed;
  if (in.kept) {
    for (const auto& f : *in.kept) kept.emplace(f.id, &f);
  }
  if (in.removed) {
    for (const auto& x : *in.removed) removed.emplace(x.input_id, &x);
  }
  const bool cleaned = in.kept != nullptr;
  std::uint32_t next_id = in.first_input_id;
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
    // Each line's left edge (its leftmost box), found when a fixation first lands on it.
    std::map<int, double> left_of_line;
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
          row.duration_ms = k->second->duration_ms;
          row.x_px = k->second->fixation.x_px;
          row.y_px = k->second->fixation.y_px;
        } else if (const auto r = removed.find(input_id); r != removed.end()) {
          row.kept = false;
          row.removed_by = r->second->rule;
          row.removal_reason = r->second->reason;
        }
      }
      if (in.lines && row.kept) {
        if (const auto l = in.lines->fixations.find(input_id); l != in.lines->fixations.end() && l->second.line >= 0) {
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
            auto [left, fresh] = left_of_line.try_emplace(l->second.line, 1e300);
            if (fresh) {
              for (const auto& r : layout->regions) {
                for (const auto& b : r.boxes) {
                  if (b.line == l->second.line) left->second = std::min(left->second, b.left_px);
                }
              }
            }
            if (left->second < 1e300 && layout->char_width_px > 0) row.line_chars = (row.x_px - left->second) / layout->char_width_px;
          }
        }
      }
      out.fixations.push_back(std::move(row));
    }
    // Merged-into numbers, once every fixation of the trial has its number.
    for (std::size_t i = first_row; i < out.fixations.size(); ++i) {
      const std::uint32_t input_id = next_id - static_cast<std::uint32_t>(out.fixations.size() - i);
      if (const auto r = removed.find(input_id); r != removed.end() && r->second->merged_into) {
        if (const auto n = number_of.find(*r->second->merged_into); n != number_of.end()) out.fixations[i].merged_into = n->second;
      }
    }
    for (std::size_t n = 1; sc < ev.saccades.size() && ev.saccades[sc].trial == t.id; ++sc, ++n) out.saccades.push_back({trial.get(), n, ev.saccades[sc]});
    for (std::size_t n = 1; bl < ev.blinks.size() && ev.blinks[bl].trial == t.id; ++bl, ++n) out.blinks.push_back({trial.get(), n, ev.blinks[bl]});
    out.trials.push_back(std::move(trial));
  }
  return out;
}

}  // namespace

struct EventTableSources::Impl {
  const Protocol* protocol = nullptr;
  const RegionCatalogue* regions = nullptr;
  std::vector<std::string> ids;
  std::vector<RecordingSources> sources;
  std::vector<RecordingAlignment> read_alignment;
};

EventTableSources::EventTableSources(const StudyStoreReader& store, const Protocol& protocol, const RegionCatalogue* regions, bool cleaned,
                                     bool aligned, KnownResults known)
    : impl_(std::make_unique<Impl>()) {
  impl_->protocol = &protocol;
  impl_->regions = regions;
  std::map<std::string, const RecordingAlignment*> alignment;
  if (aligned) {
    if (!known.alignment) impl_->read_alignment = read_alignment(store);
    for (const auto& a : known.alignment ? *known.alignment : impl_->read_alignment) alignment.emplace(a.recording, &a);
  }
  std::map<std::string, const RecordingEvents*> known_events;
  if (known.events) {
    for (const auto& r : *known.events) known_events.emplace(r.meta.id, &r);
  }
  std::map<std::string, const CleanedRecording*> known_cleaned;
  if (known.cleaned) {
    for (const auto& c : *known.cleaned) known_cleaned[c.meta.id] = &c;  // the last of a repeated id, as before
  }
  // What the store must give is read here, in study order (one reader, one thread).
  impl_->ids = store.recording_ids();
  const std::vector<std::string>& ids = impl_->ids;
  std::vector<RecordingSources>& sources = impl_->sources;
  sources.resize(ids.size());
  std::uint32_t next_id = 0;  // input ids as cleaning gave them: every fixation of every trial, recording by recording
  for (std::size_t k = 0; k < ids.size(); ++k) {
    const std::string& id = ids[k];
    RecordingSources& s = sources[k];
    if (const auto e = known_events.find(id); e != known_events.end()) {
      s.meta = &e->second->meta;
      s.events = &e->second->events;
    } else {
      s.from_store = RecordingEvents{store.read_recording(id, false), store.read_events(id)};
      s.meta = &s.from_store->meta;
      s.events = &s.from_store->events;
    }
    if (cleaned) {
      if (const auto c = known_cleaned.find(id); c != known_cleaned.end()) {
        s.kept = &c->second->kept;
      } else {
        s.read_kept = read_clean_fixations(store, id);
        s.kept = &s.read_kept;
      }
      if (!known.removed) {
        s.read_removed = read_removed_fixations(store, id);
        s.removed = &s.read_removed;
      } else if (const auto r = known.removed->find(id); r != known.removed->end()) {  // none: nothing removed
        s.removed = &r->second;
      }
    }
    if (aligned) s.lines = alignment.at(id);
    s.first_input_id = next_id;
    next_id += static_cast<std::uint32_t>(s.events->fixations.size());
  }
}

EventTableSources::~EventTableSources() = default;

std::size_t EventTableSources::recordings() const { return impl_->ids.size(); }

std::set<std::string> EventTableSources::trial_variables() const {
  std::set<std::string> names;
  for (const auto& s : impl_->sources) {
    for (const Trial& t : s.meta->trials) {
      for (const auto& [k, v] : t.variables) names.insert(k);
    }
  }
  return names;
}

EventTables EventTableSources::rows(std::size_t k) const { return recording_rows(impl_->ids[k], impl_->sources[k], *impl_->protocol, impl_->regions); }

void write_event_tables(const EventTableSources& sources, const DesignSpec& design, unsigned jobs, const std::array<TextPieces, 3>& files) {
  const EventTableColumns columns(sources.trial_variables(), design);
  files[0](fixations_header(columns));
  files[1](saccades_header(columns));
  files[2](blinks_header(columns));
  const std::size_t threads = std::max(1u, jobs ? jobs : std::thread::hardware_concurrency());
  const std::size_t batch = 2 * threads;  // recordings whose text is held at once
  for (std::size_t first = 0; first < sources.recordings(); first += batch) {
    const std::size_t count = std::min(batch, sources.recordings() - first);
    std::vector<std::array<std::string, 3>> text(count);
    for_each_recording(count, static_cast<unsigned>(threads), [&](std::size_t i) {
      const EventTables rows = sources.rows(first + i);
      append_fixation_rows(rows, columns, text[i][0]);
      append_saccade_rows(rows, columns, text[i][1]);
      append_blink_rows(rows, columns, text[i][2]);
    });
    for (const auto& t : text) {
      for (std::size_t f = 0; f < 3; ++f) files[f](t[f]);
    }
  }
}

}  // namespace gazemill
