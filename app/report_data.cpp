#include "app/report_data.h"

#include <spdlog/spdlog.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <map>
#include <numbers>
#include <set>
#include <span>
#include <atomic>
#include <exception>
#include <thread>

#include <nlohmann/json.hpp>
#include <fmt/chrono.h>
#include <fmt/format.h>

#include "app/parallel_recordings.h"
#include "app/protocol_parser.h"
#include "app/sample_digest.h"
#include "app/warning_log.h"
#include "gazemill/version.h"
#include "io/alignment_io.h"
#include "io/cleaning_io.h"
#include "io/compressed_samples.h"
#include "io/region_files.h"
#include "io/report_html.h"
#include "io/report_store.h"
#include "io/sample_digest_io.h"
#include "io/sha256.h"
#include "io/study_store.h"
#include "measures/data_quality.h"
#include "pipeline/design.h"
#include "pipeline/input_error.h"
#include "pipeline/stage.h"

namespace gazemill {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::string now_utc() {
  return fmt::format("{:%Y-%m-%dT%H:%M:%SZ}", fmt::gmtime(std::chrono::system_clock::to_time_t(std::chrono::system_clock::now())));
}

double median_of(std::vector<double> v) { return summarise(std::move(v)).median; }

// A round number at or above v (1, 2 or 5 times a power of ten), for axis ranges.
double nice_ceiling(double v) {
  if (!(v > 0)) return 1;
  const double p = std::pow(10.0, std::floor(std::log10(v)));
  for (double m : {1.0, 2.0, 5.0, 10.0}) {
    if (m * p >= v) return m * p;
  }
  return 10 * p;
}

// Stage states as `inspect` shows them: stale when marked so or when the
// upstream result is no longer the one it was made from.
std::vector<ReportStage> stage_states(const StudyStoreReader& store) {
  std::vector<ReportStage> out;
  std::optional<StageRecord> before;
  for (Stage s : kStages) {
    const auto r = store.stage_record(s);
    ReportStage rs;
    rs.stage = to_string(s);
    if (!r) {
      rs.state = to_string(StageState::absent);
    } else {
      const bool upstream_moved = s != Stage::ingest && (!before || before->key != r->upstream_key);
      const bool stale = r->state == StageState::stale || upstream_moved;
      rs.state = to_string(stale ? StageState::stale : StageState::current);
      rs.created_utc = r->created_utc;
      rs.tool_version = r->tool_version;
      rs.settings_json = r->settings_json;
      rs.protocol_sha256 = r->protocol_text.empty() ? std::string() : sha256_hex(r->protocol_text);
      if (stale) rs.note = r->stale_reason.empty() ? "made from results that have changed since" : r->stale_reason;
    }
    out.push_back(std::move(rs));
    before = r;
  }
  for (const auto& [stage, w] : kept_warnings(store)) {
    for (auto& rs : out) {
      if (rs.stage == to_string(stage) && rs.state == to_string(StageState::current)) rs.warnings.push_back(w);
    }
  }
  return out;
}

// The protocol text of the latest stage that ran (it names the design and
// regions the later results were made with), else the ingest's.
std::pair<std::string, std::string> latest_protocol(const StudyStoreReader& store, const Provenance& prov) {
  for (auto it = std::rbegin(kStages); it != std::rend(kStages); ++it) {
    const auto r = store.stage_record(*it);
    if (r && !r->protocol_text.empty()) return {r->protocol_text, r->protocol_path};
  }
  return {prov.protocol_text, prov.protocol_path};
}

struct ParticipantAccumulator {
  ParticipantQuality quality;
  ParticipantEvents events;
  std::vector<double> rms, stds, fixation_ms, amplitude_deg, velocity_ratio;
  double interval_sd_weighted = 0;  // sum of sd^2 x regular intervals, for a pooled SD
  std::uint64_t regular_intervals = 0;
  std::uint64_t leftward = 0;
  std::vector<double> rates;
};

struct Gathered {
  std::map<std::string, ParticipantAccumulator> participants;
  std::vector<double> fixation_ms, kept_fixation_ms, amplitude_deg, peak_velocity;
};

// One recording's signal quality (its sample digest) added to its participant's.
void add_quality(const Recording& rec, const SampleDigest& d, ParticipantAccumulator& to) {
  ParticipantQuality& q = to.quality;
  ++q.recordings;
  q.trials += rec.trials.size();
  q.samples += d.samples;
  q.missing_samples += d.missing_samples;
  q.trial_samples += d.trial_samples;
  q.trial_missing_samples += d.trial_missing_samples;
  q.intervals += d.intervals;
  q.irregular_intervals += d.irregular_intervals;
  q.gaps += d.gaps;
  q.non_increasing += d.non_increasing;
  q.longest_gap_us = std::max(q.longest_gap_us, d.longest_gap_us);
  q.nominal_rate_hz = rec.sample_rate_hz;
  to.rates.insert(to.rates.end(), d.trial_rates_hz.begin(), d.trial_rates_hz.end());
  to.interval_sd_weighted += d.interval_variance_sum_us2;
  to.regular_intervals += d.regular_intervals;
  to.rms.insert(to.rms.end(), d.fixation_rms_s2s_deg.begin(), d.fixation_rms_s2s_deg.end());
  to.stds.insert(to.stds.end(), d.fixation_std_deg.begin(), d.fixation_std_deg.end());
}

void finish_quality(ParticipantAccumulator& acc) {
  ParticipantQuality& q = acc.quality;
  q.measured_rate_hz = median_of(acc.rates);
  if (acc.regular_intervals > 0) q.interval_sd_us = std::sqrt(acc.interval_sd_weighted / static_cast<double>(acc.regular_intervals));
  const ValueSummary rms = summarise(acc.rms);
  q.precision_fixations = rms.n;
  q.rms_s2s_deg = rms.median;
  q.rms_s2s_q1_deg = rms.q1;
  q.rms_s2s_q3_deg = rms.q3;
  q.std_deg = median_of(acc.stds);
}

// The viewer's record of one trial: kept and removed fixations, the alignment, the time course.
struct TrialSources {
  const Trial* trial = nullptr;
  std::vector<const CleanFixation*> kept;          // when clean ran
  std::vector<const RemovedFixationRow*> removed;  // when clean ran
  std::vector<const FixationEvent*> detected;      // positions of removed fixations; all fixations when clean did not run
  const TrialVerdictRow* verdict = nullptr;
  const AlignedTrial* aligned = nullptr;
};

}  // namespace

namespace {

class Assembler {
 public:
  Assembler(const std::string& path, const ReportDataOptions& o) : store_path_(path), store_(path), o_(o) {
    if (o.events) {
      for (const auto& r : *o.events) known_.emplace(r.meta.id, &r);
    }
    if (o.cleaned) {
      for (const auto& r : *o.cleaned) cleaned_.emplace(r.meta.id, &r);
    }
  }

  ReportModel run() {
    const auto t0 = std::chrono::steady_clock::now();
    auto lap = [&t0](const char* what) { spdlog::debug("report: {} after {:.2f} s", what, std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count()); };
    run_summary();
    load_protocol();
    const bool have_clean = store_.exists("audit");
    if (have_clean) cleaning();
    lap("summary and cleaning");
    std::vector<RecordingAlignment> alignment;
    const std::vector<RecordingAlignment>* lines = &alignment;
    if (store_.exists("recordings") && !ids_.empty() && stage_ran(Stage::align)) {
      if (o_.alignment) {
        lines = o_.alignment;
      } else {
        try {
          alignment = read_alignment(store_);
        } catch (const InputError& e) {
          m_.run.notes.push_back(std::string("line assignments not shown: ") + e.what());
        }
      }
    }
    for (const auto& a : *lines) aligned_[a.recording] = &a;
    m_.drift.present = !lines->empty();
    recordings(have_clean);
    lap("recordings");
    finish_participants();
    if (m_.drift.present) drift();
    lap("drift");
    if (store_.exists("measures/wide")) measures();
    lap("measures");
    for (const auto& st : m_.run.stages) {
      if (st.state == "absent") m_.run.notes.push_back("the " + st.stage + " stage has not run: its section is left out or partial");
      if (st.state == "stale") m_.run.notes.push_back("the " + st.stage + " stage's results are stale (" + st.note + "); run gazemill run to bring them up to date");
    }
    return std::move(m_);
  }

 private:
  bool stage_ran(Stage s) const { return store_.stage_record(s).has_value(); }

  void run_summary() {
    const Provenance prov = store_.provenance();
    ReportRun& r = m_.run;
    r.store_path = store_.path();
    r.report_tool_version = kVersion;
    r.report_created_utc = now_utc();
    r.store_tool_version = prov.tool_version;
    r.store_created_utc = prov.created_utc;
    r.protocol_path = prov.protocol_path;
    r.protocol_sha256 = prov.protocol_sha256;
    r.inputs = prov.inputs;
    r.repairs = prov.repairs;
    r.stages = stage_states(store_);
    ids_ = store_.recording_ids();
    r.recordings = ids_.size();
    for (const auto& rp : prov.repairs) repairs_[rp.recording_id].push_back(rp);
    protocol_text_ = latest_protocol(store_, prov);
  }

  void load_protocol() {
    try {
      protocol_ = parse_protocol_text(protocol_text_.first, protocol_text_.second);
      m_.run.study_name = protocol_->study_name;
      m_.run.factors = protocol_->design.factors;
      eye_choice_ = protocol_->detection.eye;
    } catch (const InputError& e) {
      m_.run.notes.push_back(std::string("the stored protocol could not be read again (") + e.what() +
                             "): no design cells from it, and no text in the trial viewer");
      return;
    }
    if (!protocol_->regions.present()) return;
    try {
      regions_ = load_regions(*protocol_);
      for (const auto& it : load_item_texts(*protocol_)) {
        try {
          item_texts_[{it.item, it.levels}] = lay_out_item(it.item, it.text, protocol_->regions.layout);
        } catch (const std::invalid_argument&) {
          // The measure stage reports a text it cannot lay out; here the item only loses its letters.
        }
      }
    } catch (const InputError& e) {
      m_.run.notes.push_back(std::string("the region files could not be read (") + e.what() + "): the trial viewer shows no text");
      regions_.reset();
    }
  }

  std::string cell_of(const Trial& t) const {
    if (!protocol_) return "";
    return cell_text(protocol_->design.factors, cell_key(design_levels(protocol_->design, t.variables)));
  }
  std::string item_of(const Trial& t) const { return t.variable(protocol_ ? protocol_->design.item_variable : std::string("item")); }

  void cleaning() {
    AuditReport a;
    try {
      a = o_.audit ? *o_.audit : read_audit(store_);
    } catch (const InputError& e) {
      m_.run.notes.push_back(std::string("the cleaning audit could not be read: ") + e.what());
      return;
    }
    CleaningSummary& c = m_.cleaning;
    c.present = true;
    for (std::size_t i = 0; i < a.rules.size(); ++i) {
      c.rules.push_back({a.rules[i], i < a.rule_kinds.size() ? a.rule_kinds[i] : "", i < a.rule_levels.size() ? to_string(a.rule_levels[i]) : ""});
      viewer_rules_[a.rules[i]] = static_cast<int>(i);
    }
    m_.viewer.rules = a.rules;
    // Input per level and cell text ("" = all), and per participant.
    std::map<std::pair<std::string, std::string>, std::uint64_t> input;  // (level, cell)
    std::map<std::pair<std::string, std::string>, std::uint64_t> participant_input;  // (participant, level)
    for (const auto& [key, tot] : a.totals) {
      const std::string cell = key.second.empty() ? "" : cell_text(a.factors, key.second);
      for (std::size_t l = 0; l < kAuditLevels; ++l) {
        const std::string level = to_string(static_cast<AuditLevel>(l));
        const bool whole = key.second.empty();
        // Participants are counted whole (cell ""), the other levels per cell.
        if ((l == static_cast<std::size_t>(AuditLevel::participant)) != whole) continue;
        input[{level, ""}] += tot.input[l];
        if (!whole) input[{level, cell}] += tot.input[l];
        participant_input[{key.first, level}] += tot.input[l];
        c.input[level] += tot.input[l];
        c.kept[level] += tot.kept[l];
      }
    }
    std::set<std::string> cells;
    for (const auto& [k, n] : input) {
      if (!k.second.empty()) cells.insert(k.second);
    }
    m_.run.cells.assign(cells.begin(), cells.end());
    // Removed per (level, cell, rule), sequential and alone.
    std::map<std::tuple<std::string, std::string, std::size_t>, std::array<std::uint64_t, 3>> removed;
    std::map<std::tuple<std::string, std::string, std::size_t>, std::uint64_t> by_participant;
    for (const AuditRow& row : audit_rows(a)) {
      const std::string level = to_string(row.level);
      const std::string cell = row.cell.empty() ? "" : cell_text(a.factors, row.cell);
      const std::size_t rule = row.order - 1;  // audit rows number the rules from 1
      auto add = [&](const std::string& target) {
        auto& v = removed[{level, target, rule}];
        v[0] += row.removed_sequential;
        v[1] += row.removed_alone;
        v[2] += row.merged_sequential;
      };
      add("");  // every cell together
      if (!cell.empty()) add(cell);  // whole-participant rows (cell "") belong to "all" only
      by_participant[{row.participant, level, rule}] += row.removed_sequential;
    }
    for (const auto& [k, in] : input) {
      const auto& [level, cell] = k;
      std::uint64_t remaining = in;
      for (std::size_t rule = 0; rule < a.rules.size(); ++rule) {
        const auto it = removed.find({level, cell, rule});
        const std::array<std::uint64_t, 3> v = it == removed.end() ? std::array<std::uint64_t, 3>{} : it->second;
        remaining -= std::min(remaining, v[0]);
        c.flow.push_back({level, cell, rule, in, v[0], v[1], v[2], remaining});
      }
    }
    for (const auto& [k, n] : by_participant) {
      const auto& [participant, level, rule] = k;
      const auto in = participant_input.find({participant, level});
      c.participants.push_back({participant, level, rule, n, in == participant_input.end() ? 0 : in->second});
    }
    m_.run.participants_kept = c.kept["participant"];
    m_.run.trials_kept = c.kept["trial"];
    m_.run.fixations_kept = c.kept["fixation"];
  }

  // What one recording contributes, read from the store on this thread (HDF5
  // is not thread-safe). Its sample digest comes with its events; only a
  // store without one (or one made for another number of points) needs the
  // samples, decoded and digested on a worker.
  struct RecordingWork {
    Recording rec;  // metadata; samples decoded on the worker when needed, released after
    std::vector<CompressedColumn> sample_chunks;
    std::optional<DetectedEvents> read_ev;  // read from the store, or
    const DetectedEvents* lent_ev = nullptr;  // ... lent by the run
    const DetectedEvents* ev() const { return lent_ev ? lent_ev : read_ev ? &*read_ev : nullptr; }
    std::vector<CleanFixation> read_kept;
    std::vector<RemovedFixationRow> read_removed;
    std::vector<TrialVerdictRow> read_verdicts;
    const CleanedRecording* lent_kept = nullptr;  // the run's, when it lent them
    const RecordingCleaningRows* lent_rows = nullptr;
    bool cleaned = false;
    const std::vector<CleanFixation>& kept() const { return lent_kept ? lent_kept->kept : read_kept; }
    const std::vector<RemovedFixationRow>& removed() const { return lent_rows ? lent_rows->removed : read_removed; }
    const std::vector<TrialVerdictRow>& verdicts() const { return lent_rows ? lent_rows->verdicts : read_verdicts; }
    std::optional<SampleDigest> digest;
  };

  void work_on_samples(RecordingWork& w) const {
    if (w.digest) return;
    w.rec.samples = decode_samples(w.rec.samples.has_left, w.rec.samples.has_right, std::move(w.sample_chunks));
    w.sample_chunks.clear();
    w.digest = digest_recording(w.rec, w.ev(), {eye_choice_.value_or(EyeChoice::best), o_.max_points_per_trial});
    w.rec.samples = SampleColumns{};
  }

  void recordings(bool have_clean) {
    ReportViewer& v = m_.viewer;
    v.present = !ids_.empty();
    if (protocol_) v.text = protocol_->regions.layout;
    std::set<std::string> participants;
    bool events_seen = false;
    const std::size_t threads = std::max<std::size_t>(1, o_.threads ? o_.threads : std::thread::hardware_concurrency());
    // A window of recordings at a time, so that memory follows the window, not the study.
    for (std::size_t from = 0; from < ids_.size(); from += 2 * threads) {
      const std::size_t to = std::min(ids_.size(), from + 2 * threads);
      std::vector<RecordingWork> batch(to - from);
      for (std::size_t i = from; i < to; ++i) {
        RecordingWork& w = batch[i - from];
        const std::string& id = ids_[i];
        const auto known = known_.find(id);
        if (known != known_.end()) {
          w.rec = known->second->meta;
          w.lent_ev = &known->second->events;
        } else {
          w.rec = store_.read_recording(id, false);
          if (store_.has_events(id)) w.read_ev = store_.read_events(id);
        }
        if (w.ev()) {
          w.digest = read_sample_digest(store_, id);
          // Made for another number of points, or not one time course per trial (a damaged store): from the samples.
          if (w.digest && (w.digest->max_points_per_trial != o_.max_points_per_trial || w.digest->time_courses.size() != w.rec.trials.size())) {
            w.digest.reset();
          }
        }
        if (!w.digest) {
          if (known != known_.end()) w.rec = store_.read_recording(id, false);  // as stored, with its sample columns named
          w.sample_chunks = store_.read_sample_chunks(id);
        }
        w.cleaned = have_clean && store_.exists("recordings/" + id + "/clean");
        if (w.cleaned) {
          const auto kept = cleaned_.find(id);
          const RecordingCleaningRows* rows = nullptr;
          if (o_.cleaning_rows) {
            if (const auto r = o_.cleaning_rows->find(id); r != o_.cleaning_rows->end()) rows = &r->second;
          }
          if (kept != cleaned_.end() && rows) {
            w.lent_kept = kept->second;
            w.lent_rows = rows;
          } else {
            w.read_kept = read_clean_fixations(store_, id);
            w.read_removed = read_removed_fixation_rows(store_, id);
            w.read_verdicts = read_trial_verdicts(store_, id);
          }
        }
      }
      for_each_recording(batch.size(), static_cast<unsigned>(threads), [&](std::size_t k) {
        try {
          work_on_samples(batch[k]);
        } catch (const std::exception& e) {
          throw InputError({store_path_, 0, "recordings/" + ids_[from + k] + "/samples"}, e.what());
        }
      });
      // In study order, as one thread would have done it.
      const std::size_t first_made = v.recordings.size();
      for (RecordingWork& w : batch) {
        const Recording& rec = w.rec;
        participants.insert(rec.participant);
        if (v.screen_width_px == 0) {
          v.screen_width_px = rec.screen.width_px;
          v.screen_height_px = rec.screen.height_px;
        }
        m_.run.trials += rec.trials.size();
        m_.run.samples += w.digest->samples;
        ParticipantAccumulator& acc = gathered_.participants[rec.participant];
        acc.quality.participant = rec.participant;
        acc.events.participant = rec.participant;
        for (const auto& rp : repairs_[rec.id]) {
          acc.quality.repairs += rp.count;
          acc.quality.repair_kinds[rp.kind] += rp.count;
        }
        add_quality(rec, *w.digest, acc);
        if (w.ev()) {
          events_seen = true;
          gather_events(rec, *w.ev(), acc);
        }
        for (const auto& f : w.kept()) gathered_.kept_fixation_ms.push_back(f.duration_ms);
        v.recordings.push_back(viewer_recording(rec, w.ev(), w.cleaned, w.kept(), w.removed(), w.verdicts(), w.digest->time_courses));
      }
      if (o_.pack_viewer) pack_viewer_recordings(v.recordings, first_made, threads);
    }
    m_.run.participants = participants.size();
    m_.detection.present = events_seen;
  }

  // The recordings from `first` on, packed on `threads` threads.
  static void pack_viewer_recordings(std::vector<ViewerRecording>& recs, std::size_t first, std::size_t threads) {
    for_each_recording(recs.size() - first, static_cast<unsigned>(threads), [&](std::size_t k) { pack_viewer_recording(recs[first + k]); });
  }

  void gather_events(const Recording& rec, const DetectedEvents& ev, ParticipantAccumulator& acc) {
    ParticipantEvents& e = acc.events;
    e.trials += rec.trials.size();
    e.fixations += ev.fixations.size();
    e.saccades += ev.saccades.size();
    e.blinks += ev.blinks.size();
    m_.run.fixations_detected += ev.fixations.size();
    m_.run.saccades_detected += ev.saccades.size();
    m_.run.blinks_detected += ev.blinks.size();
    for (const auto& f : ev.fixations) {
      acc.fixation_ms.push_back(f.duration_ms());
      gathered_.fixation_ms.push_back(f.duration_ms());
    }
    const MainSequenceReference& ref = m_.detection.reference;
    const double mid = 0.5 * (ref.v_max_low_deg_s + ref.v_max_high_deg_s);
    for (const auto& s : ev.saccades) {
      acc.amplitude_deg.push_back(s.amplitude_deg);
      gathered_.amplitude_deg.push_back(s.amplitude_deg);
      gathered_.peak_velocity.push_back(s.peak_velocity_deg_s);
      if (s.amplitude_deg >= o_.min_ratio_amplitude_deg) {
        acc.velocity_ratio.push_back(s.peak_velocity_deg_s / main_sequence_peak_velocity(s.amplitude_deg, mid, ref.c_deg));
      }
      if (std::cos(s.direction_deg * std::numbers::pi / 180.0) < 0) ++acc.leftward;
    }
  }

  ViewerRecording viewer_recording(const Recording& rec, const DetectedEvents* ev, bool cleaned, const std::vector<CleanFixation>& kept,
                                   const std::vector<RemovedFixationRow>& removed, const std::vector<TrialVerdictRow>& verdicts,
                                   std::vector<TrialTimeCourse>& time_courses) {
    ViewerRecording out{rec.id, rec.participant, rec.session, {}, std::nullopt};
    std::map<std::string, TrialSources> by_trial;
    for (const auto& t : rec.trials) by_trial[t.id].trial = &t;
    if (ev) {
      for (const auto& f : ev->fixations) by_trial[f.trial].detected.push_back(&f);
    }
    for (const auto& f : kept) by_trial[f.fixation.trial].kept.push_back(&f);
    for (const auto& f : removed) by_trial[f.trial].removed.push_back(&f);
    for (const auto& v : verdicts) by_trial[v.trial].verdict = &v;
    const RecordingAlignment* al = nullptr;
    if (const auto a = aligned_.find(rec.id); a != aligned_.end()) {
      al = a->second;
      for (const auto& t : al->trials) by_trial[t.trial].aligned = &t;
    }
    for (std::size_t ti = 0; ti < rec.trials.size(); ++ti) {
      const Trial& t = rec.trials[ti];
      const TrialSources& src = by_trial[t.id];
      ViewerTrial vt;
      vt.trial = t.id;
      vt.item = item_of(t);
      vt.cell = cell_of(t);
      vt.layout = layout_index(vt.item, t.variables);
      vt.duration_ms = static_cast<double>(t.end_us - t.start_us) / 1000.0;
      if (src.verdict) {
        vt.kept = src.verdict->kept;
        vt.removed_by_rule = src.verdict->rule;
        vt.removed_reason = src.verdict->reason;
      }
      if (src.aligned) {
        vt.align_method = src.aligned->method;
        vt.align_confidence = src.aligned->confidence;
        vt.align_flagged = src.aligned->flagged;
        drift_rows_.push_back({rec.participant, rec.id, t.id, vt.item, vt.cell, vt.align_method, vt.align_confidence, vt.align_flagged});
      }
      const double t0 = static_cast<double>(t.start_us);
      if (cleaned) {
        for (const CleanFixation* f : src.kept) {
          ViewerFixation vf{(static_cast<double>(f->fixation.start_us) - t0) / 1000.0, f->duration_ms, f->fixation.x_px, f->fixation.y_px};
          if (al) {
            if (const auto l = al->fixations.find(f->id); l != al->fixations.end()) {
              vf.line = l->second.line;
              vf.corrected_y_px = l->second.corrected_y_px;
            }
          }
          vt.fixations.push_back(vf);
        }
        std::map<Microseconds, const FixationEvent*> detected_at;
        for (const FixationEvent* f : src.detected) detected_at.emplace(f->start_us, f);
        for (const RemovedFixationRow* r : src.removed) {
          ViewerFixation vf{(static_cast<double>(r->start_us) - t0) / 1000.0, r->duration_ms, kNaN, kNaN};
          if (const auto d = detected_at.find(r->start_us); d != detected_at.end()) {
            vf.x_px = d->second->x_px;
            vf.y_px = d->second->y_px;
          }
          const auto rule = viewer_rules_.find(r->rule);
          vf.removed_by = rule == viewer_rules_.end() ? -1 : rule->second;
          vf.merged = r->merged_into >= 0;
          vt.fixations.push_back(vf);
        }
        std::stable_sort(vt.fixations.begin(), vt.fixations.end(), [](const ViewerFixation& a, const ViewerFixation& b) { return a.start_ms < b.start_ms; });
      } else {
        for (const FixationEvent* f : src.detected) {
          vt.fixations.push_back({(static_cast<double>(f->start_us) - t0) / 1000.0, f->duration_ms(), f->x_px, f->y_px});
        }
      }
      vt.bin_ms = time_courses[ti].bin_ms;
      vt.x_px = std::move(time_courses[ti].x_px);
      vt.y_px = std::move(time_courses[ti].y_px);
      out.trials.push_back(std::move(vt));
    }
    return out;
  }

  int layout_index(const std::string& item, const std::map<std::string, std::string>& variables) {
    if (!regions_) return -1;
    const RegionLayout* layout = regions_->find(item, variables);
    if (!layout) return -1;
    const auto key = std::make_pair(layout->item, layout->levels);
    if (const auto it = layout_index_.find(key); it != layout_index_.end()) return it->second;
    ViewerLayout vl;
    vl.item = layout->item;
    std::string levels;
    for (std::size_t i = 0; i < layout->levels.size(); ++i) {
      levels += (i ? ", " : "") + (i < regions_->factors().size() ? regions_->factors()[i] + "=" : std::string()) + layout->levels[i];
    }
    vl.cell = levels;
    vl.lines = layout->lines;
    vl.regions = layout->regions;
    if (const auto t = item_texts_.find(key); t != item_texts_.end()) {
      const LaidOutItem& laid = t->second;
      for (const Word& w : laid.words) {
        vl.words.push_back({w.text, w.line, laid.chars.at(static_cast<std::size_t>(w.first_char)).left_px});
      }
    }
    const int index = static_cast<int>(m_.viewer.layouts.size());
    m_.viewer.layouts.push_back(std::move(vl));
    layout_index_[key] = index;
    return index;
  }

  void finish_participants() {
    std::vector<double> per_trial, fix, amp, ratio, left;
    for (auto& [p, acc] : gathered_.participants) {
      finish_quality(acc);
      m_.quality.push_back(acc.quality);
      ParticipantEvents& e = acc.events;
      if (e.trials > 0) e.fixations_per_trial = static_cast<double>(e.fixations) / static_cast<double>(e.trials);
      e.median_fixation_ms = median_of(acc.fixation_ms);
      e.median_amplitude_deg = median_of(acc.amplitude_deg);
      e.median_velocity_ratio = median_of(acc.velocity_ratio);
      if (e.saccades > 0) e.regression_share = static_cast<double>(acc.leftward) / static_cast<double>(e.saccades);
      per_trial.push_back(e.fixations_per_trial);
      fix.push_back(e.median_fixation_ms);
      amp.push_back(e.median_amplitude_deg);
      ratio.push_back(e.median_velocity_ratio);
      left.push_back(e.regression_share);
    }
    if (!m_.detection.present) return;
    DetectionSummary& d = m_.detection;
    d.outlier_z = o_.outlier_z;
    if (const auto r = store_.stage_record(Stage::detect)) {
      try {
        d.method = nlohmann::json::parse(r->settings_json).value("method", std::string());
      } catch (const nlohmann::json::exception&) {
        // An unreadable settings text only leaves the method unnamed.
      }
    }
    const auto z1 = robust_z_scores(per_trial), z2 = robust_z_scores(fix), z3 = robust_z_scores(amp), z4 = robust_z_scores(ratio),
               z5 = robust_z_scores(left);
    const double medians[] = {median_of(per_trial), median_of(fix), median_of(amp), median_of(ratio), median_of(left)};
    d.outlier_relative = o_.outlier_relative;
    std::size_t i = 0;
    for (auto& [p, acc] : gathered_.participants) {
      ParticipantEvents& e = acc.events;
      e.z_fixations_per_trial = z1[i];
      e.z_median_fixation = z2[i];
      e.z_median_amplitude = z3[i];
      e.z_velocity_ratio = z4[i];
      e.z_regression_share = z5[i];
      // Apart: beyond the z limit and also far from the median in its own terms, so that
      // a tight group's trivial differences (a tiny MAD) raise no flag.
      const double values[] = {per_trial[i], fix[i], amp[i], ratio[i], left[i]};
      const double zs[] = {z1[i], z2[i], z3[i], z4[i], z5[i]};
      for (int k = 0; k < 5; ++k) {
        const double rel = std::abs(values[k] - medians[k]) / std::max(std::abs(medians[k]), 1e-12);
        if (std::isfinite(zs[k]) && std::abs(zs[k]) > o_.outlier_z && rel > o_.outlier_relative) e.outlying = true;
      }
      d.participants.push_back(e);
      ++i;
    }
    d.fixation_duration_ms = histogram(gathered_.fixation_ms, 0, 20, 50);
    d.kept_fixation_duration_ms = histogram(gathered_.kept_fixation_ms, 0, 20, 50);
    std::vector<double> amps = gathered_.amplitude_deg, vels = gathered_.peak_velocity;
    std::sort(amps.begin(), amps.end());
    std::sort(vels.begin(), vels.end());
    const double amp_max = amps.empty() ? 10 : nice_ceiling(quantile_sorted(amps, 0.995));
    const double vel_max = vels.empty() ? 500 : nice_ceiling(quantile_sorted(vels, 0.995));
    d.saccade_amplitude_deg = histogram(gathered_.amplitude_deg, 0, amp_max / 50, 50);
    d.main_sequence = histogram_2d(gathered_.amplitude_deg, gathered_.peak_velocity, 0, amp_max / 40, 40, 0, vel_max / 40, 40);
    MainSequenceReference& ref = d.reference;
    for (int k = 0; k <= 50; ++k) {
      const double a = amp_max * k / 50.0;
      ref.amplitude_deg.push_back(a);
      ref.low_deg_s.push_back(main_sequence_peak_velocity(a, ref.v_max_low_deg_s, ref.c_deg));
      ref.high_deg_s.push_back(main_sequence_peak_velocity(a, ref.v_max_high_deg_s, ref.c_deg));
    }
  }

  void drift() {
    DriftSummary& d = m_.drift;
    std::set<std::string> methods;
    std::vector<double> all, flagged;
    std::map<std::string, std::vector<double>> by_participant;
    std::map<std::string, std::size_t> flagged_by_participant;
    for (const auto& r : drift_rows_) {
      methods.insert(r.method);
      all.push_back(r.confidence);
      by_participant[r.participant].push_back(r.confidence);
      if (r.flagged) {
        flagged.push_back(r.confidence);
        ++flagged_by_participant[r.participant];
        d.flagged_trials.push_back(r);
      }
    }
    d.methods.assign(methods.begin(), methods.end());
    d.trials = all.size();
    d.flagged = flagged.size();
    d.confidence = histogram(all, 0, 0.05, 20);
    d.flagged_confidence = histogram(flagged, 0, 0.05, 20);
    for (auto& [p, v] : by_participant) d.participants.push_back({p, v.size(), flagged_by_participant[p], summarise(v)});
    std::stable_sort(d.flagged_trials.begin(), d.flagged_trials.end(),
                     [](const AlignedTrialRow& a, const AlignedTrialRow& b) { return a.confidence < b.confidence; });
  }

  void measures() {
    StoredTable read;
    try {
      if (!o_.measures_wide) read = read_stored_table(store_, "measures/wide");
    } catch (const InputError& e) {
      m_.run.notes.push_back(std::string("the measures could not be read: ") + e.what());
      return;
    }
    const StoredTable& wide = o_.measures_wide ? *o_.measures_wide : read;
    MeasuresSummary& ms = m_.measures;
    ms.present = true;
    ms.rows = wide.rows;
    ms.measures = {"first_fixation_ms", "gaze_duration_ms", "go_past_ms", "total_time_ms"};
    const std::vector<std::string> factors = protocol_ ? protocol_->design.factors : std::vector<std::string>{};
    auto text_col = [&](const std::string& name) -> const std::vector<std::string>* {
      const auto it = wide.texts.find(name);
      return it == wide.texts.end() ? nullptr : &it->second;
    };
    auto num_col = [&](const std::string& name) -> const std::vector<double>* {
      const auto it = wide.numbers.find(name);
      return it == wide.numbers.end() ? nullptr : &it->second;
    };
    const auto* participant = text_col("participant");
    const auto* role = text_col("region_role");
    if (!participant) return;
    std::vector<const std::vector<std::string>*> factor_cols;
    for (const auto& f : factors) factor_cols.push_back(text_col(f));
    std::vector<std::string> cells(wide.rows);
    for (std::size_t r = 0; r < wide.rows; ++r) {
      std::vector<std::string> levels;
      for (const auto* c : factor_cols) levels.push_back(c ? (*c)[r] : std::string());
      cells[r] = cell_text(factors, cell_key(levels));
    }
    // Roles in reading order: by the mean region number they are given to; regions without one last.
    std::map<std::string, std::pair<double, std::size_t>> role_position;
    const auto* region_no = num_col("region");
    for (std::size_t r = 0; r < wide.rows; ++r) {
      auto& p = role_position[role ? (*role)[r] : std::string()];
      p.first += region_no ? (*region_no)[r] : 0.0;
      ++p.second;
    }
    std::vector<std::pair<double, std::string>> ordered;
    for (const auto& [x, p] : role_position) {
      if (!x.empty()) ordered.emplace_back(p.first / static_cast<double>(p.second), x);
    }
    std::sort(ordered.begin(), ordered.end());
    for (const auto& [pos, x] : ordered) ms.roles.push_back(x);
    if (role_position.count("")) ms.roles.push_back("");
    auto role_of = [&](std::size_t r) { return role ? (*role)[r] : std::string(); };
    for (const auto& m : ms.measures) {
      const auto* col = num_col(m);
      if (!col) continue;
      std::map<std::pair<std::string, std::string>, std::vector<double>> groups;
      std::map<std::tuple<std::string, std::string, std::string>, std::vector<double>> per_participant;
      for (std::size_t r = 0; r < wide.rows; ++r) {
        const double v = (*col)[r];
        if (std::isnan(v)) continue;
        groups[{role_of(r), cells[r]}].push_back(v);
        per_participant[{(*participant)[r], role_of(r), cells[r]}].push_back(v);
      }
      for (auto& [k, v] : groups) ms.distributions.push_back({m, k.first, k.second, summarise(std::move(v))});
      for (auto& [k, v] : per_participant) {
        double sum = 0;
        for (double x : v) sum += x;
        ms.participant_means.push_back({std::get<0>(k), m, std::get<1>(k), std::get<2>(k), sum / static_cast<double>(v.size()), v.size()});
      }
    }
    // Probabilities per participant from the wide table: skipping over all readings, regression out
    // over first-pass readings, regression in over fixated readings (their NA rows left out).
    for (const auto& [measure, column] : std::vector<std::pair<std::string, std::string>>{
             {"skipping", "skipped_first_pass"}, {"regression_out", "regression_out"}, {"regression_in", "regression_in"}}) {
      const auto* col = num_col(column);
      if (!col) continue;
      std::map<std::tuple<std::string, std::string, std::string>, std::pair<double, std::size_t>> acc;
      for (std::size_t r = 0; r < wide.rows; ++r) {
        if (std::isnan((*col)[r]) || role_of(r).empty()) continue;
        auto& a = acc[{(*participant)[r], role_of(r), cells[r]}];
        a.first += (*col)[r];
        ++a.second;
      }
      for (const auto& [k, a] : acc) {
        ms.participant_probabilities.push_back({std::get<0>(k), std::get<1>(k), std::get<2>(k), measure, a.first / static_cast<double>(a.second), a.second});
      }
    }
    if (!store_.exists("measures/by_role")) return;
    StoredTable read_by_role;
    try {
      if (!o_.measures_by_role) read_by_role = read_stored_table(store_, "measures/by_role");
    } catch (const InputError& e) {
      m_.run.notes.push_back(std::string("the measures by region role could not be read: ") + e.what());
      return;
    }
    const StoredTable& by_role = o_.measures_by_role ? *o_.measures_by_role : read_by_role;
    const auto rit = by_role.texts.find("region_role");
    if (rit == by_role.texts.end()) return;
    for (std::size_t r = 0; r < by_role.rows; ++r) {
      std::vector<std::string> levels;
      for (const auto& f : factors) {
        const auto c = by_role.texts.find(f);
        levels.push_back(c == by_role.texts.end() ? std::string() : c->second[r]);
      }
      const std::string cell = cell_text(factors, cell_key(levels));
      auto number = [&](const std::string& c) { return by_role.numbers.count(c) ? by_role.numbers.at(c)[r] : kNaN; };
      auto count = [&](const std::string& c) {
        const double v = number(c);
        return std::isfinite(v) ? static_cast<std::size_t>(v) : std::size_t{0};
      };
      ms.probabilities.push_back({rit->second[r], cell, "skipping", number("skipping_probability"), count("region_readings")});
      ms.probabilities.push_back({rit->second[r], cell, "regression_out", number("regression_out_probability"), count("first_pass_readings")});
      ms.probabilities.push_back({rit->second[r], cell, "regression_in", number("regression_in_probability"), count("fixated_readings")});
    }
  }

  std::string store_path_;
  StudyStoreReader store_;
  std::map<std::string, const RecordingEvents*> known_;  // lent by a run, by recording id
  ReportDataOptions o_;
  ReportModel m_;
  std::vector<std::string> ids_;
  std::map<std::string, std::vector<RepairRecord>> repairs_;
  std::pair<std::string, std::string> protocol_text_;
  std::optional<Protocol> protocol_;
  std::optional<EyeChoice> eye_choice_;
  std::optional<RegionCatalogue> regions_;
  std::map<std::pair<std::string, std::vector<std::string>>, LaidOutItem> item_texts_;
  std::map<std::pair<std::string, std::vector<std::string>>, int> layout_index_;
  std::map<std::string, int> viewer_rules_;
  std::map<std::string, const RecordingAlignment*> aligned_;  // into the lent or read alignment, alive for run()
  std::map<std::string, const CleanedRecording*> cleaned_;    // lent by a run, by recording id
  std::vector<AlignedTrialRow> drift_rows_;
  Gathered gathered_;
};

}  // namespace

ReportModel assemble_report(const std::string& store_path, const ReportDataOptions& options) {
  return Assembler(store_path, options).run();
}

}  // namespace gazemill
