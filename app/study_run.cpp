#include "app/study_run.h"

#ifdef __GLIBC__
#include <malloc.h>
#endif

#include <nlohmann/json.hpp>
#include <spdlog/spdlog.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <condition_variable>
#include <cstdio>
#include <ctime>
#include <exception>
#include <filesystem>
#include <future>
#include <tuple>
#include <memory>
#include <mutex>
#include <set>
#include <stdexcept>
#include <thread>

#include "app/align.h"
#include "app/clean.h"
#include "app/design_level_check.h"
#include "app/cleaning_outcome_check.h"
#include "app/event_tables.h"
#include "app/measure.h"
#include "app/preflight.h"
#include "app/progress_bar.h"
#include "app/recording_work.h"
#include "app/stage_settings.h"
#include "app/table_trials.h"
#include "app/trial_pattern_check.h"
#include "app/warning_log.h"
#include "app/study_inputs.h"
#include "detectors/detector_registry.h"
#include "gazemill/version.h"
#include "io/alignment_io.h"
#include "io/cleaning_io.h"
#include "io/delimited_reader.h"
#include "io/event_tables_io.h"
#include "io/hdf5_util.h"
#include "io/measures_io.h"
#include "io/region_files.h"
#include "io/review_file.h"
#include "io/sample_digest_io.h"
#include "io/sha256.h"
#include "io/study_store.h"
#include "io/table_set.h"
#include "io/write_lock.h"
#include "pipeline/named_regex.h"
#include "measures/measure_aggregates.h"
#include "pipeline/input_error.h"
#include "pipeline/rare_values.h"

namespace gazemill {
namespace fs = std::filesystem;

std::string default_store_path(const Protocol& protocol) {
  const std::string name = protocol.study_name.empty() ? "study" : protocol.study_name;
  return (fs::absolute(fs::path(protocol.path)).parent_path() / (name + ".gzm.h5")).lexically_normal().string();
}

std::string study_ingest_key(const std::map<std::string, std::string>& ingest_keys) {
  std::vector<std::string> parts;
  for (const auto& [id, key] : ingest_keys) parts.push_back(id + "=" + key);
  return make_key("ingest-study", parts);
}

std::string study_detect_key(const std::string& ingest_key, const std::map<std::string, std::string>& detect_keys) {
  std::vector<std::string> parts = {ingest_key};
  for (const auto& [id, key] : detect_keys) parts.push_back(id + "=" + key);
  return make_key("detect-study", parts);
}

unsigned shard_of(const std::string& id, unsigned count) {
  std::uint64_t h = 1469598103934665603ull;  // FNV-1a (Fowler, Noll and Vo), stable across machines and runs
  for (unsigned char c : id) {
    h ^= c;
    h *= 1099511628211ull;
  }
  return count ? static_cast<unsigned>(h % count) : 0;
}

std::string default_tables_folder(const std::string& store_path) {
  fs::path p(store_path);
  std::string stem = p.filename().string();
  for (const char* ext : {".h5", ".gzm"}) {
    if (stem.size() > std::strlen(ext) && stem.ends_with(ext)) stem.resize(stem.size() - std::strlen(ext));
  }
  return (p.parent_path() / (stem + "-tables")).string();
}

namespace {

std::string utc_now() {
  const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

void check_trial_keys_unique(const Protocol& p, const std::vector<RecordingEvents>& recordings);

// What happens to one recording in this run.
enum class RecordingWork { reuse, detect, ingest };

struct RecordingPlan {
  std::string id;
  RecordingWork work = RecordingWork::ingest;
  std::optional<RecordingInputs> inputs;  // when the run reads input files
  std::vector<InputFileRecord> known;     // inputs as recorded by the previous run
  std::string ingest_key, detect_key;     // known before the work, or set by it
};

const char* stage_command(Stage s) { return to_string(s); }

// The groups a stage's results occupy, per recording and at the top.
std::vector<std::string> recording_groups_of(Stage s) {
  switch (s) {
    case Stage::detect: return {"events"};
    case Stage::clean: return {"clean"};
    case Stage::align: return {"align"};
    default: return {};
  }
}
std::vector<std::string> top_groups_of(Stage s) {
  switch (s) {
    case Stage::clean: return {"/audit"};
    case Stage::measure: return {"/measures"};
    default: return {};
  }
}

class StudyRun {
 public:
  StudyRun(const Protocol& protocol, const StudyRunOptions& options) : p_(protocol), o_(options) {
    ingest_settings_ = ingest_settings_json(p_);
    try {
      detector_ = make_detector(p_.detection);
    } catch (const std::invalid_argument& e) {
      throw InputError({p_.path, 0, "detection"}, e.what());
    }
    detect_settings_ = imports_ ? imported_events_settings_json(p_) : detection_settings_json(p_.detection);
    regions_settings_ = regions_settings_json(p_);
    clean_settings_ = cleaning_settings_json(p_);
    align_settings_ = align_settings_json(p_);
    measure_settings_ = measure_settings_json(p_);
    work_.deflate_level = o_.deflate_level;
    work_.raw_budget_bytes = o_.raw_budget_bytes;
  }

  StudyRunReport execute();

 private:
  // Planning.
  void open_previous();
  void plan_recordings();
  void preflight_inputs() const;
  void check_current_up_to(Stage stage);
  std::string study_key(Stage stage) const;
  [[noreturn]] void stale_upstream(Stage needed, const std::string& why) const;

  // Work.
  void run_recordings(StudyStoreWriter& out);
  void write_recording(StudyStoreWriter& out, RecordingOutput& r);
  // Every recording's metadata and events for cleaning; those of recordings
  // read or detected this run are moved out of fresh_, so it runs once.
  std::vector<RecordingEvents> recording_events();
  bool events_taken_ = false;
  void run_study_stages(StudyStoreWriter& out);
  std::optional<PreviousAlignment> previous_alignment() const;
  void remove_results(StudyStoreWriter& out, Stage stage);
  // A reused stage's warnings are still true of its results: said again.
  void say_again(const StageRecord& r) {
    for (const auto& w : r.warnings) {
      spdlog::warn("{} (as {} said when it ran, {})", w, to_string(r.stage), r.created_utc);
      report_.warnings_kept.push_back(std::string(to_string(r.stage)) + ": " + w);
    }
  }
  StageRecord record_for(Stage stage, const std::string& key, const std::string& upstream, const std::string& settings) const;

  bool stage_wanted(Stage s) const { return !o_.only || *o_.only == s; }
  bool regions_present() const { return p_.regions.present(); }

  const Protocol& p_;
  const StudyRunOptions& o_;
  // A fixation list's rows are the events: ingest imports them, and the
  // detect stage's record says so instead of naming a detector.
  const bool imports_ = p_.input.format == InputFormat::fixations;
  std::unique_ptr<EventDetector> detector_;
  std::string ingest_settings_, detect_settings_, regions_settings_, clean_settings_, align_settings_, measure_settings_;
  RecordingWorkOptions work_;

  std::unique_ptr<StudyStoreReader> old_;  // the store as the previous run left it
  std::map<Stage, StageRecord> old_records_;
  std::vector<RecordingPlan> plans_;
  std::vector<std::string> removed_recordings_;
  std::vector<std::string> study_recordings_;
  std::vector<std::string> ingest_warnings_;  // what the trial pattern checks warned of, for ingest's record  // every recording the inputs give, before a shard takes its part
  std::map<std::string, RecordingOutput> fresh_;  // recordings read or detected this run (light parts)
  std::vector<InputFileRecord> inputs_;
  std::vector<RepairRecord> repairs_;
  std::map<Stage, std::string> keys_;       // each stage's key after this run
  std::map<Stage, bool> ran_;
  std::vector<RecordingEvents> events_;     // kept for cleaning
  std::optional<std::vector<CleanedRecording>> cleaned_recordings_;
  std::optional<std::vector<RecordingAlignment>> alignment_;
  std::optional<RegionCatalogue> regions_;
  StudyRunReport report_;
  std::string now_ = utc_now();
};

void StudyRun::open_previous() {
  std::error_code ec;
  if (!fs::exists(o_.store_path, ec)) return;
  if (fs::is_directory(o_.store_path, ec)) {
    throw InputError({o_.store_path, 0, ""}, "is a folder; the store is a file (give its file name, e.g. study.gzm.h5)");
  }
  try {
    old_ = std::make_unique<StudyStoreReader>(o_.store_path);
  } catch (const InputError& e) {
    if (o_.only == Stage::ingest) {
      throw InputError({o_.store_path, 0, ""}, std::string("exists and is not a store this gazemill can update (") + e.what() +
                                                   "); move it away or name another store");
    }
    throw;
  }
  for (Stage s : kStages) {
    if (auto r = old_->stage_record(s)) old_records_[s] = *r;
  }
}

[[noreturn]] void StudyRun::stale_upstream(Stage needed, const std::string& why) const {
  // The hint names the store unless it is the one the stage commands take by
  // default: run as printed, it must mend this store, not another.
  const bool default_store = fs::absolute(o_.store_path).lexically_normal().string() == default_store_path(p_);
  // A store made from another protocol file is likelier a wrong -s than one
  // to mend: the hint would replace another study's results (found in a
  // newcomer's trial). Said, not hinted.
  if (old_ && needed == Stage::ingest) {  // the hint would ingest it anew: every result of it replaced
    const std::string made_from = old_->provenance().protocol_path;
    if (!made_from.empty() && made_from != fs::absolute(p_.path).lexically_normal().string()) {
      throw InputError({o_.store_path, 0, ""}, why + "; the store was made from " + made_from + ", not " + p_.path +
                                                   ": is it the store you meant? (Running this protocol's stages on it would replace that "
                                                   "study's results; `gazemill run " + p_.path + "` writes this protocol's own.)");
    }
  }
  const std::string store = default_store ? "" : (needed == Stage::ingest ? " -o " : " -s ") + o_.store_path;
  throw InputError({o_.store_path, 0, ""}, why + "; run `gazemill " + stage_command(needed) + " " + p_.path + store + "` first" +
                                               (default_store ? " (or `gazemill run " + p_.path + "`, which redoes what changed)" : ""));
}

// Decides, recording by recording, what must be read or detected again.
// Before any work: what the protocol leaves to ingest to decide is said
// once, every sample file's header is checked against the columns the
// protocol names, and the disk is asked for room.
void StudyRun::preflight_inputs() const {
  const bool ingests = std::any_of(plans_.begin(), plans_.end(), [](const RecordingPlan& r) { return r.work == RecordingWork::ingest; });
  if (!ingests) return;
  if (p_.trials.source == TrialSource::messages) {
    const NamedRegex start(p_.trials.start_pattern);
    const auto& names = start.names();
    if (std::find(names.begin(), names.end(), "trial") == names.end()) {
      spdlog::info("trials.start has no (?<trial>...) capture: the trials of each recording are numbered 1, 2, 3, ... in the order "
                   "their start messages come (a dropped unterminated trial takes no number); capture the id, e.g. "
                   "'^begin trial (?<trial>\\d+)$', to take it from the messages");
    }
  }
  std::uint64_t plain = 0, gzip = 0;
  for (const auto& plan : plans_) {
    if (plan.work != RecordingWork::ingest || !plan.inputs) continue;
    if (p_.input.format == InputFormat::delimited) {
      DelimitedReadOptions opt;
      opt.layout = p_.input.table;
      check_delimited_header(plan.inputs->sample_file, opt);
    }
    for (const auto& f : plan.inputs->files) {
      std::error_code ec;
      const std::uint64_t size = fs::file_size(f, ec);
      if (ec) continue;  // the reader names it
      unsigned char magic[2] = {0, 0};
      if (std::FILE* in = std::fopen(f.c_str(), "rb")) {
        if (std::fread(magic, 1, 2, in) != 2) magic[0] = 0;
        std::fclose(in);
      }
      (magic[0] == 0x1f && magic[1] == 0x8b ? gzip : plain) += size;
    }
  }
  std::uint64_t needed = estimated_store_bytes(plain, gzip);
  std::error_code ec;
  // An update copies the old store before changing it.
  if (old_ && o_.only != Stage::ingest) needed += fs::file_size(o_.store_path, ec);
  check_free_space(o_.store_path, needed);
}

void StudyRun::plan_recordings() {
  // Stage commands after ingest take the store's recordings as they are: the
  // raw files may be archived by then (a run checks them, and verify).
  const bool reads_inputs = !o_.only || *o_.only == Stage::ingest;
  std::map<std::string, RecordingInputs> inputs;
  if (reads_inputs) {
    for (auto& r : find_recordings(p_)) {
      study_recordings_.push_back(r.id);  // for a shard: the merge checks that every shard saw the same study
      if (o_.shard_count && shard_of(r.id, o_.shard_count) != o_.shard_index) continue;
      inputs.emplace(r.id, std::move(r));
    }
  }
  std::set<std::string> stored;
  std::map<std::string, std::vector<InputFileRecord>> known;
  if (old_) {
    for (const auto& id : old_->recording_ids()) stored.insert(id);
    for (const auto& f : old_->provenance().inputs) known[f.recording_id].push_back(f);
  }
  if (!reads_inputs) {
    if (!old_) stale_upstream(Stage::ingest, "the store " + o_.store_path + " does not exist");
    for (const auto& id : stored) {
      RecordingPlan plan;
      plan.id = id;
      plan.work = o_.only == Stage::detect ? RecordingWork::detect : RecordingWork::reuse;
      plan.ingest_key = old_->recording_attribute(id, "ingest_key");
      plan.detect_key = old_->events_key(id);
      plans_.push_back(plan);
    }
    return;
  }
  for (auto& [id, in] : inputs) {
    RecordingPlan plan;
    plan.id = id;
    plan.known = known[id];
    plan.inputs = in;
    if (stored.count(id) && o_.only != Stage::ingest) {
      std::vector<std::string> parts = {ingest_settings_};
      for (const auto& f : in.files) parts.push_back(describe_input(f, id, plan.known).sha256);
      plan.ingest_key = make_key("ingest", parts);
      if (plan.ingest_key == old_->recording_attribute(id, "ingest_key")) {
        plan.detect_key = make_key("detect", {plan.ingest_key, detect_settings_});
        plan.work = plan.detect_key == old_->events_key(id) ? RecordingWork::reuse : RecordingWork::detect;
      }
    }
    plans_.push_back(std::move(plan));
  }
  for (const auto& id : stored) {
    if (!inputs.count(id)) removed_recordings_.push_back(id);
  }
  report_.recordings_removed = removed_recordings_;
}

// Study-level key of a stage from the recordings' keys and the stages before it.
std::string StudyRun::study_key(Stage stage) const {
  switch (stage) {
    case Stage::ingest: {
      std::map<std::string, std::string> keys;
      for (const auto& r : plans_) keys[r.id] = r.ingest_key;
      return study_ingest_key(keys);
    }
    case Stage::detect: {
      std::map<std::string, std::string> keys;
      for (const auto& r : plans_) keys[r.id] = r.detect_key;
      return study_detect_key(keys_.at(Stage::ingest), keys);
    }
    case Stage::clean: return make_key("clean", {keys_.at(Stage::detect), clean_settings_, regions_settings_});
    case Stage::align: return make_key("align", {keys_.at(Stage::clean), align_settings_, regions_settings_});
    case Stage::measure: return make_key("measure", {keys_.at(Stage::align), measure_settings_, regions_settings_});
  }
  return "";
}

// For a stage command after ingest: every stage before `stage` must be
// current for this protocol: made with its sections, from each other.
void StudyRun::check_current_up_to(Stage stage) {
  if (!old_) stale_upstream(Stage::ingest, "the store " + o_.store_path + " does not exist");
  auto record = [&](Stage s) -> const StageRecord& {
    const auto r = old_records_.find(s);
    if (r == old_records_.end()) stale_upstream(s, std::string("the store has no ") + to_string(s) + " results");
    if (r->second.state != StageState::current) {
      stale_upstream(s, std::string("the store's ") + to_string(s) + " results are stale (" + r->second.stale_reason + ")");
    }
    return r->second;
  };
  const StageRecord& ingest = record(Stage::ingest);
  if (ingest.settings_json != ingest_settings_) {
    stale_upstream(Stage::ingest, "the store was ingested with other [input], [screen] or [trials] settings than " + p_.path + " now gives");
  }
  keys_[Stage::ingest] = study_key(Stage::ingest);
  if (keys_[Stage::ingest] != ingest.key) stale_upstream(Stage::ingest, "the store's recordings are not those its ingest made");
  if (stage == Stage::detect) return;
  for (const auto& plan : plans_) {
    if (make_key("detect", {plan.ingest_key, detect_settings_}) != plan.detect_key) {
      stale_upstream(Stage::detect, plan.detect_key.empty() ? "recording " + plan.id + " has no detected events"
                                                            : "the events of recording " + plan.id + " were detected with other "
                                                              "[detection] settings than " + p_.path + " now gives");
    }
  }
  keys_[Stage::detect] = study_key(Stage::detect);
  if (record(Stage::detect).key != keys_[Stage::detect]) stale_upstream(Stage::detect, "the store's events are not those its detect made");
  for (Stage s : {Stage::clean, Stage::align}) {
    if (static_cast<int>(s) >= static_cast<int>(stage)) break;
    keys_[s] = study_key(s);
    if (record(s).key != keys_[s]) {
      stale_upstream(s, std::string("the store's ") + to_string(s) + " results were made with other settings or from other results than " +
                            p_.path + " now gives");
    }
  }
}

constexpr std::uint64_t kZeroGazeWarning = 5;

void StudyRun::write_recording(StudyStoreWriter& out, RecordingOutput& r) {
  const std::string& id = r.recording.id;
  CapturedWarnings warned(CapturedWarnings::From::this_thread);  // of what was read: kept with the recording (app/warning_log.h)
  const bool read = r.samples && !r.inputs.empty();
  if (read) {  // read from its files this run
    out.remove("/recordings/" + id);
    out.write_recording(r.recording, r.summary, r.samples->columns(), r.ingest_key);
    if (r.keeps_tracker_events) out.write_tracker_events(id, r.tracker_events);
    ++report_.recordings_read;
    report_.samples += r.summary.sample_count;
    report_.messages += r.recording.messages.size();
    report_.trials += r.recording.trials.size();
    for (const auto& f : r.inputs) report_.input_bytes += f.size_bytes;
    for (const auto& [kind, n] : r.repairs) {
      report_.repairs += n;
      spdlog::warn("{}: repaired {} x {}", id, n, kind);
    }
    // Gaze at exactly (0, 0) is no look at the screen's corner but a tracker's
    // way of writing lost tracking; a few samples there could be chance.
    if (r.zero_gaze_samples >= kZeroGazeWarning) {
      spdlog::warn("{}: {} samples of gaze at exactly (0, 0) px are read as gaze; if the tracker writes lost tracking so, set "
                   "zero_gaze_is_missing = true in [input.table] (or [input.bids])",
                   id, r.zero_gaze_samples);
    }
  }
  if (r.detected) {
    for (const auto& g : {"events", "clean", "align"}) out.remove("/recordings/" + id + "/" + g);
    if (imports_) {
      out.write_events(id, r.events, r.labels, "imported", "{}", r.detect_key);
      report_.events_imported = true;
      if (2 * r.fixations_outside_trials > r.fixations_outside_trials + r.events.fixations.size()) {
        spdlog::warn("{}: {} of the list's {} fixations start in no trial and are left out; are the fixations and the messages on the same clock?",
                     id, r.fixations_outside_trials, r.fixations_outside_trials + r.events.fixations.size());
      } else if (r.fixations_outside_trials) {
        spdlog::info("{}: {} fixation(s) of the list start in no trial and are left out", id, r.fixations_outside_trials);
      }
      if (r.other_eye_rows) spdlog::info("{}: {} fixation(s) of the other eye left out (input.fixations.eye)", id, r.other_eye_rows);
    } else {
      out.write_events(id, r.events, r.labels, p_.detection.method, nlohmann::json(detector_->parameters()).dump(), r.detect_key);
      write_sample_digest(out, id, r.digest);
    }
    ++report_.recordings_detected;
    report_.samples_detected += r.samples ? r.samples->size() : 0;
    report_.fixations += r.events.fixations.size();
    report_.saccades += r.events.saccades.size();
    report_.blinks += r.events.blinks.size();
  }
  if (const auto said = warned.take(); read && !said.empty()) out.write_recording_warnings(id, said);
  // The samples, labels and digest are in the store now; what cleaning needs stays.
  r.samples.reset();
  r.labels.chunks = {};
  r.digest = SampleDigest{};
}

// Reads and detects the recordings that need it on a pool of threads, and
// writes each one's results in recording order as soon as it is its turn.
void StudyRun::run_recordings(StudyStoreWriter& out) {
  std::vector<std::size_t> todo;
  std::uint64_t total_bytes = 0;
  for (std::size_t i = 0; i < plans_.size(); ++i) {
    if (plans_[i].work == RecordingWork::reuse) continue;
    todo.push_back(i);
    if (plans_[i].work == RecordingWork::ingest) {
      for (const auto& f : plans_[i].inputs->files) {
        std::error_code ec;
        total_bytes += fs::file_size(f, ec);
      }
    }
  }
  if (todo.empty()) return;
  const bool detect_too = o_.only ? *o_.only != Stage::ingest : o_.until != Stage::ingest;
  const unsigned jobs = std::max(1u, o_.jobs ? o_.jobs : std::thread::hardware_concurrency());
  const std::size_t window = 2 * static_cast<std::size_t>(jobs);  // results waiting to be written, at most

  struct Slot {
    std::optional<RecordingOutput> output;
    std::exception_ptr error;
    bool done = false;
    std::vector<CompressedColumn> stored_samples;  // detect only: the chunks, read on this thread
    Recording meta;
  };
  std::vector<Slot> slots(todo.size());
  std::mutex mutex;
  std::condition_variable changed;
  std::size_t next = 0, written = 0;
  std::atomic<bool> stop{false};
  std::atomic<std::uint64_t> bytes_done{0};
  RecordingWorkOptions work = work_;
  work.progress = [&](std::uint64_t bytes) { bytes_done += bytes; };

  // HDF5 is not thread-safe: the samples a detect-only recording needs are
  // read here, on this thread, a window ahead of the workers.
  std::size_t prepared = 0;
  auto prepare = [&](std::size_t upto) {
    for (; prepared < std::min(upto, todo.size()); ++prepared) {
      const RecordingPlan& plan = plans_[todo[prepared]];
      if (plan.work != RecordingWork::detect) continue;
      Slot& s = slots[prepared];
      s.meta = old_->read_recording(plan.id, false);
      s.stored_samples = old_->read_sample_chunks(plan.id);
    }
  };
  prepare(window);

  auto worker = [&] {
    for (;;) {
      std::size_t k;
      {
        std::unique_lock lock(mutex);
        changed.wait(lock, [&] { return stop || next >= todo.size() || (next < written + window && next < prepared); });
        if (stop || next >= todo.size()) return;
        k = next++;
      }
      const RecordingPlan& plan = plans_[todo[k]];
      Slot& slot = slots[k];
      try {
        RecordingOutput r;
        if (plan.work == RecordingWork::ingest) {
          r = ingest_recording(*plan.inputs, p_, plan.known, work);
          std::vector<std::string> parts = {ingest_settings_};
          for (const auto& f : r.inputs) parts.push_back(f.sha256);
          r.ingest_key = make_key("ingest", parts);
        } else {
          r.recording = std::move(slot.meta);
          r.ingest_key = plan.ingest_key;
          r.samples = std::make_shared<CompressedSamples>(r.recording.samples.has_left, r.recording.samples.has_right,
                                                          std::move(slot.stored_samples), work.raw_budget_bytes);
        }
        if (imports_) {
          if (plan.work != RecordingWork::ingest) throw InputError({p_.path, 0, "input.format"}, "a fixation list's events are imported at ingest");
          r.detect_key = make_key("detect", {r.ingest_key, detect_settings_});
        } else if (detect_too) {
          r.detect_key = make_key("detect", {r.ingest_key, detect_settings_});
          detect_events(r, *detector_, p_.detection, work);
        }
        std::lock_guard lock(mutex);
        slot.output = std::move(r);
        slot.done = true;
      } catch (...) {
        std::lock_guard lock(mutex);
        slot.error = std::current_exception();
        slot.done = true;
      }
      changed.notify_all();
    }
  };
  std::vector<std::thread> threads;
  for (unsigned t = 0; t < std::min<std::size_t>(jobs, todo.size()); ++t) threads.emplace_back(worker);
  auto finish_threads = [&] {
    {
      std::lock_guard lock(mutex);
      stop = true;
    }
    changed.notify_all();
    for (auto& t : threads) {
      if (t.joinable()) t.join();
    }
  };

  ProgressBar bar(o_.show_progress);
  const auto started = std::chrono::steady_clock::now();
  try {
    for (std::size_t k = 0; k < todo.size(); ++k) {
      std::unique_lock lock(mutex);
      while (!changed.wait_for(lock, std::chrono::milliseconds(200), [&] { return slots[k].done; })) {
        lock.unlock();
        bar.update_run(written, todo.size(), bytes_done, total_bytes, report_.samples, started);
        lock.lock();
      }
      if (slots[k].error) {
        lock.unlock();
        finish_threads();
        bar.finish();
        std::rethrow_exception(slots[k].error);
      }
      RecordingOutput r = std::move(*slots[k].output);
      slots[k].output.reset();
      lock.unlock();
      RecordingPlan& plan = plans_[todo[k]];
      plan.ingest_key = r.ingest_key;
      if (detect_too || imports_) plan.detect_key = r.detect_key;
      write_recording(out, r);
      prepare(k + 1 + window);
      {
        std::lock_guard relock(mutex);
        ++written;
      }
      changed.notify_all();
      for (auto& f : r.inputs) inputs_.push_back(f);
      for (const auto& [kind, n] : r.repairs) repairs_.push_back({r.recording.id, kind, n});
      fresh_.emplace(r.recording.id, std::move(r));
      bar.update_run(written, todo.size(), bytes_done, total_bytes, report_.samples, started);
    }
  } catch (...) {
    finish_threads();
    bar.finish();
    throw;
  }
  finish_threads();
  bar.finish();
#ifdef __GLIBC__
  // The workers' arenas keep what they freed (the samples' chunks, detection
  // buffers): 60-130 MB the study stages, on this thread, would not reuse.
  malloc_trim(0);
#endif
}

std::vector<RecordingEvents> StudyRun::recording_events() {
  if (events_taken_) throw std::logic_error("recording_events: the fresh recordings' events were taken already");
  events_taken_ = true;
  std::vector<RecordingEvents> out;
  for (const auto& plan : plans_) {
    const auto f = fresh_.find(plan.id);
    if (f != fresh_.end() && f->second.detected) {
      out.push_back({std::move(f->second.recording), std::move(f->second.events)});
    } else {
      if (!old_->has_events(plan.id)) stale_upstream(Stage::detect, "recording " + plan.id + " has no detected events");
      out.push_back({old_->read_recording(plan.id, false), old_->read_events(plan.id)});
    }
  }
  return out;
}

void StudyRun::remove_results(StudyStoreWriter& out, Stage stage) {
  for (const auto& plan : plans_) {
    for (const auto& g : recording_groups_of(stage)) out.remove("/recordings/" + plan.id + "/" + g);
  }
  for (const auto& g : top_groups_of(stage)) out.remove(g);
}

StageRecord StudyRun::record_for(Stage stage, const std::string& key, const std::string& upstream, const std::string& settings) const {
  StageRecord r;
  r.stage = stage;
  r.key = key;
  r.upstream_key = upstream;
  r.settings_json = settings;
  r.created_utc = now_;
  r.tool_version = kVersion;
  r.protocol_text = p_.text;
  r.protocol_path = fs::absolute(p_.path).lexically_normal().string();
  return r;
}

// Clean, align and measure: each runs when its key differs from the stored
// one (or when it is the stage asked for), and is reused otherwise.
void StudyRun::run_study_stages(StudyStoreWriter& out) {
  auto reusable = [&](Stage s) {
    const auto r = old_records_.find(s);
    return !o_.only && r != old_records_.end() && r->second.state == StageState::current && r->second.key == keys_.at(s) &&
           !ran_[*upstream_of(s)];
  };
  auto settings_of = [&](Stage s) {
    switch (s) {
      case Stage::clean: return clean_settings_;
      case Stage::align: return align_settings_;
      case Stage::measure: return measure_settings_;
      default: return std::string();
    }
  };
  for (Stage s : {Stage::clean, Stage::align, Stage::measure}) {
    if (o_.only && *o_.only != s) {
      // A stage command builds on the stages before it as they are: their warnings still hold.
      if (static_cast<int>(s) < static_cast<int>(*o_.only) && old_records_.count(s)) say_again(old_records_.at(s));
      continue;
    }
    if (!o_.only && static_cast<int>(s) > static_cast<int>(o_.until)) continue;
    keys_[s] = study_key(s);
    if ((s == Stage::align || s == Stage::measure) && !regions_present()) {
      report_.stages[s] = "not run: the protocol has no [regions]";
      if (o_.only) throw InputError({p_.path, 0, "regions"}, std::string(to_string(s)) + " needs a [regions] section (items_file or boxes_file)");
      continue;
    }
    if (reusable(s)) {
      report_.stages[s] = "reused";
      say_again(old_records_.at(s));
      continue;
    }
    CapturedWarnings warned;  // facts about this stage's results, kept with its record
    const auto started = std::chrono::steady_clock::now();
    auto lap = [&](const char* what) {  // -v: where a stage's time goes
      spdlog::debug("{}: {} after {:.2f} s", to_string(s), what, std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count());
    };
    remove_results(out, s);
    if ((s == Stage::align || s == Stage::measure) && !regions_) regions_ = load_regions(p_);
    if (s == Stage::clean) {
      events_ = recording_events();
      lap("events read");
      check_trial_keys_unique(p_, events_);
      check_design_levels(p_, events_);
      // A participant at a time: its cleaning written, what the tables and
      // the report are lent taken out, its kept fixations moved on, the rest
      // of its state (a copy of every fixation) gone before the next.
      const bool lend = !o_.only && !o_.shard_count;
      std::map<std::string, const Recording*> meta;
      for (const auto& r : events_) meta.emplace(r.meta.id, &r.meta);
      std::map<std::string, CleanedRecording> cleaned;
      auto removed = std::make_shared<std::map<std::string, std::vector<RemovedFixation>>>();
      auto rows = std::make_shared<std::map<std::string, RecordingCleaningRows>>();
      const AuditReport audit = clean_events_by_participant(p_, events_, [&](CleaningOutcome&& part) {
        // Removed fixations and verdicts as the report is lent them: one source for both.
        auto part_rows = cleaning_rows(part);
        write_cleaning(out, part, part_rows);
        if (lend) {
          removed->merge(removed_fixations(part));
          rows->merge(part_rows);
        }
        cleaned.merge(cleaned_recordings(std::move(part.state), meta));
      });
      lap("cleaned and written");
      check_cleaning_outcome(p_, audit);
      write_audit(out, audit);
      report_.audit = audit;
      if (lend) {
        report_.removed = std::move(removed);
        report_.cleaning_rows = std::move(rows);
      }
      cleaned_recordings_.emplace();
      for (const auto& r : events_) {  // in study order; a recording without trials keeps nothing
        auto c = cleaned.find(r.meta.id);
        if (c == cleaned.end()) {
          cleaned_recordings_->push_back({r.meta, {}, {}});
        } else {
          cleaned_recordings_->push_back(std::move(c->second));
          cleaned.erase(c);
        }
      }
      lap("cleaned recordings");
    } else if (s == Stage::align) {
      if (!cleaned_recordings_) cleaned_recordings_ = cleaned_recordings(*old_);
      const std::optional<PreviousAlignment> previous = previous_alignment();
      lap("previous alignment");
      alignment_ = align_study(p_, *regions_, *cleaned_recordings_, o_.jobs, previous ? &*previous : nullptr, &report_.aligned_trials_reused);
      if (previous) spdlog::debug("align: {} trials kept their lines from the previous run", report_.aligned_trials_reused);
      lap("aligned");
      write_alignment(out, *alignment_);
    } else {
      if (!cleaned_recordings_) cleaned_recordings_ = cleaned_recordings(*old_);
      if (!alignment_) alignment_ = read_alignment(*old_);
      report_.rows = measure_rows(*cleaned_recordings_, *alignment_, *regions_, p_.regions, p_.design, &report_.placement, o_.jobs);
      lap("rows");
      {
        // Readers look at the text: many fixations beside it or between its
        // lines mostly mean a layout that is not the display's (a wrong
        // character width). Warned here, so the warning stays with the measures.
        std::uint64_t placed = 0, astray = 0;
        for (const auto& [k, c] : report_.placement) {
          placed += c.on_region + c.beside_text + c.off_lines;
          astray += c.beside_text + c.off_lines;
        }
        if (placed > 0 && 10 * astray > placed) {
          spdlog::warn("{:.0f} % of the kept fixations fall beside the text or off its lines (fixation_placement.tsv); are the [regions] "
                       "layout values (char_width_px, line_height_px, left_margin_px, first_line_top_px) those of the display?",
                       100.0 * static_cast<double>(astray) / static_cast<double>(placed));
        }
      }
      // The aggregates and the tables the store holds, made side by side (the report is lent the wide one and by_role).
      const auto policy = o_.jobs == 1 ? std::launch::deferred : std::launch::async;
      const std::vector<MeasureRow>& rows = report_.rows;
      const auto& factors = p_.design.factors;
      auto aggregated = [&](AggregateTable (*make)(const std::vector<MeasureRow>&)) {
        return std::async(policy, [&rows, &factors, make] {
          auto a = std::make_shared<const AggregateTable>(make(rows));
          auto t = std::make_shared<const StoredTable>(aggregate_table(*a, factors));
          return std::make_pair(a, t);
        });
      };
      auto item_region = aggregated(aggregate_by_item_region), role = aggregated(aggregate_by_role), participant = aggregated(aggregate_by_participant);
      report_.measures_wide = std::make_shared<const StoredTable>(measures_wide_table(rows, p_.design));
      std::shared_ptr<const StoredTable> item_region_table, participant_table;
      std::tie(report_.by_item_region, item_region_table) = item_region.get();
      std::tie(report_.by_role, report_.measures_by_role) = role.get();
      std::tie(report_.by_participant, participant_table) = participant.get();
      lap("aggregates");
      write_measures(out, *report_.measures_wide, {item_region_table.get(), report_.measures_by_role.get(), participant_table.get()},
                     {"by_item_region", "by_role", "by_participant"});
      write_placement(out, report_.placement, p_.design.factors);
    }
    StageRecord record = record_for(s, keys_.at(s), keys_.at(*upstream_of(s)), settings_of(s));
    record.warnings = warned.take();
    out.write_stage_record(record);
    ran_[s] = true;
    report_.stages[s] = "ran";
    spdlog::debug("{} took {:.2f} s", to_string(s), std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count());
  }
}

// The old store's line assignments, when it holds them current and made
// with this protocol's alignment settings and regions from its own current
// cleaning (their key says so); nothing otherwise.
std::optional<PreviousAlignment> StudyRun::previous_alignment() const {
  if (!old_) return std::nullopt;
  const auto a = old_records_.find(Stage::align), c = old_records_.find(Stage::clean);
  if (a == old_records_.end() || c == old_records_.end()) return std::nullopt;
  if (a->second.state != StageState::current || c->second.state != StageState::current) return std::nullopt;
  if (a->second.upstream_key != c->second.key || a->second.key != make_key("align", {c->second.key, align_settings_, regions_settings_})) {
    return std::nullopt;
  }
  // Only what the comparison needs: each recording's kept fixations and trial verdicts.
  PreviousAlignment previous;
  for (const auto& id : old_->recording_ids()) {
    CleanedRecording c;
    c.meta.id = id;
    c.kept = read_clean_fixations(*old_, id);
    c.trial_kept = read_clean_trial_verdicts(*old_, id);
    previous.cleaned.push_back(std::move(c));
  }
  previous.alignment = read_alignment(*old_);
  return previous;
}

// Names the cleaning rules give to regions (a role, a number) must exist in
// the region files: a role no item has would remove nothing without a word.
void check_region_references(const Protocol& p, const RegionCatalogue& regions) {
  std::map<std::string, std::size_t> items_with;  // each role, and the layouts that give it
  std::size_t most_regions = 0;
  for (const auto& [key, layout] : regions.layouts()) {
    most_regions = std::max(most_regions, layout.regions.size());
    for (const auto& r : layout.regions) {
      if (!r.role.empty()) ++items_with[r.role];
    }
  }
  // A role in a few items only, beside one in many, is likelier a typo ("targte") than a design.
  for (const auto& role : rare_values(items_with)) {
    spdlog::warn("{}: the role '{}' is given in only {} item(s) ({}); a typo?", regions.source(), role, items_with.at(role), count_listing(items_with));
  }
  for (std::size_t i = 0; i < p.cleaning.size(); ++i) {
    const CleaningRuleSpec& rule = p.cleaning[i];
    const std::string where = "cleaning[" + std::to_string(i + 1) + "].";
    if (const auto role = rule.texts.find("role"); role != rule.texts.end() && !items_with.count(role->second)) {
      std::string known;
      for (const auto& [r, n] : items_with) known += (known.empty() ? "" : ", ") + r;
      throw InputError({p.path, rule.line_of("role"), where + "role"}, "rule '" + rule.name + "': no region of any item has the role '" + role->second +
                                                               "'; the region files give " + (known.empty() ? std::string("no roles") : known));
    }
    if (const auto n = rule.numbers.find("region"); n != rule.numbers.end() && n->second > static_cast<double>(most_regions)) {
      throw InputError({p.path, rule.line_of("region"), where + "region"}, "rule '" + rule.name + "': no item has a region " +
                                                                 std::to_string(static_cast<long>(n->second)) + " (the most any item has is " +
                                                                 std::to_string(most_regions) + ")");
    }
  }
}

// Every trial read this run must find its item's regions: said once, naming
// the region file and the first few trials, before anything is written
// (otherwise cleaning stops at the first such trial, naming no file).
void check_items_have_regions(const Protocol& p, const RegionCatalogue& regions, const std::map<std::string, RecordingOutput>& read) {
  std::size_t missing = 0;
  std::string examples;
  std::set<std::string> described;
  for (const auto& [id, r] : read) {
    for (const auto& t : r.recording.trials) {
      const std::string& item = t.variable(p.design.item_variable);
      if (regions.find(item, t.variables)) continue;
      ++missing;
      const std::string what = regions.describe(item, t.variables);
      if (described.size() < 5 && described.insert(what).second) examples += "; " + what + " (recording " + id + ", trial " + t.id + ")";
    }
  }
  if (missing == 0) return;
  throw InputError({regions_file(p), 0, "item"}, std::to_string(missing) + " trial(s) show an item this file has no regions for" + examples +
                                                     "; is the file complete, and are the item and design variables spelt as the trials give them?");
}

// The tables tell rows apart by participant, session and trial. Two
// recordings of one participant and session (runs of a BIDS task) that
// number their trials alike would have their rows pooled, without a word,
// by whatever reads the tables (found in a newcomer's trial).
void check_trial_keys_unique(const Protocol& p, const std::vector<RecordingEvents>& recordings) {
  std::map<std::pair<std::string, std::string>, std::map<std::string, std::string>> owner;  // (participant, session) -> trial -> recording
  for (const auto& r : recordings) {
    auto& trials = owner[{r.meta.participant, r.meta.session}];
    std::string first;
    std::size_t shared = 0;
    std::string other;
    for (const auto& t : r.meta.trials) {
      const auto [it, fresh] = trials.emplace(t.id, r.meta.id);
      if (fresh || it->second == r.meta.id) continue;
      if (shared++ == 0) {
        first = t.id;
        other = it->second;
      }
    }
    if (shared == 0) continue;
    throw InputError({p.path, p.input.filename_pattern_line, "input.filename_pattern"},
                     "recordings " + other + " and " + r.meta.id + " (participant " + r.meta.participant +
                         (r.meta.session.empty() ? "" : ", session " + r.meta.session) + ") both have trial " + first +
                         (shared > 1 ? " (and " + std::to_string(shared - 1) + " more)" : "") +
                         ": the tables tell rows apart by participant, session and trial, so theirs would be pooled. Number the trials "
                         "across the runs, or read the run into the session, e.g. filename_pattern = "
                         "'sub-(?<participant>[A-Za-z0-9]+)_(?<session>(?:ses-[A-Za-z0-9]+_)?task-[A-Za-z0-9]+(?:_acq-[A-Za-z0-9]+)?(?:_run-[A-Za-z0-9]+)?)'");
  }
}

// Two recordings whose sample files are byte for byte the same are one
// recording under two names (a file copied to the next participant's name):
// analysed twice, it would count a reader twice. Other files (a messages
// file, a trial table) may well be shared.
void check_distinct_recordings(const std::vector<RecordingPlan>& plans, const std::map<std::string, RecordingOutput>& read) {
  std::map<std::string, std::pair<std::string, std::string>> by_hash;  // SHA-256 -> sample file, recording
  for (const auto& plan : plans) {
    if (!plan.inputs) continue;
    const std::string& file = plan.inputs->sample_file;
    const auto r = read.find(plan.id);
    const auto& records = r != read.end() && !r->second.inputs.empty() ? r->second.inputs : plan.known;
    const auto record = std::find_if(records.begin(), records.end(), [&](const InputFileRecord& f) { return f.path == file; });
    if (record == records.end() || record->sha256.empty()) continue;
    const auto [first, fresh] = by_hash.emplace(record->sha256, std::make_pair(file, plan.id));
    if (!fresh && first->second.first != file) {
      throw InputError({file, 0, ""}, "has the same content (SHA-256 " + record->sha256.substr(0, 12) + "…) as " + first->second.first +
                                          " (recording " + first->second.second + "), yet is read as recording " + plan.id +
                                          ": the same recording under two names? Remove the copy");
    }
  }
}

StudyRunReport StudyRun::execute() {
  // Everything the protocol refers to is read and checked before any work.
  if (regions_present()) {
    regions_ = load_regions(p_);
    check_region_references(p_, *regions_);
  } else {
    for (const auto& rule : p_.cleaning) {
      if (rule.texts.count("role") || rule.numbers.count("region")) {
        throw InputError({p_.path, rule.line_of(rule.texts.count("role") ? "role" : "region"), "regions"}, "rule '" + rule.name + "' names a region, but the protocol has no [regions] section");
      }
    }
  }
  if (!p_.alignment.review_file.empty()) {
    // Its rows are checked now; the trials they name, once the recordings are known.
    const fs::path base = fs::absolute(fs::path(p_.path)).parent_path();
    const std::string file = fs::path(p_.alignment.review_file).is_absolute() ? p_.alignment.review_file : (base / p_.alignment.review_file).string();
    if (!fs::exists(file)) throw InputError({p_.path, 0, "alignment.review_file"}, "the review file " + file + " does not exist");
    read_review_file(file);
  }
  if (p_.design.factors.empty()) {
    spdlog::debug("the protocol's [design] names no factors: audits and aggregates are not broken down by condition");
  }
  check_store_folder(o_.store_path);
  if (!o_.tables_folder.empty()) check_table_folder(o_.tables_folder);  // before the work, not after it
  WriteLock lock(o_.store_path);
  if (const int n = remove_leftover_temporaries(o_.store_path); n > 0) {
    spdlog::info("removed {} temporary file(s) that an interrupted run left beside {}", n, o_.store_path);
  }
  if (imports_ && o_.only == Stage::detect) {
    throw InputError({o_.store_path, 0, ""}, "there is nothing to detect: the protocol " + p_.path + " reads fixation lists ([input] format = "
                                             "\"fixations\"), whose rows are the events; ingest imported them and recorded the detect stage "
                                             "as imported. Run `gazemill clean " + p_.path + "` next");
  }
  open_previous();
  plan_recordings();
  if (p_.trials.source != TrialSource::messages) {
    // The names the protocol relies on, in every trial table's header, before any work.
    for (const auto& plan : plans_) {
      if (plan.work == RecordingWork::ingest && plan.inputs) check_trial_table(*plan.inputs, p_);
    }
  }
  if (o_.only && *o_.only != Stage::ingest) check_current_up_to(*o_.only);
  report_.recordings = plans_.size();
  preflight_inputs();

  // The store is rewritten only when something in it changes.
  const bool recordings_change =
      !removed_recordings_.empty() || std::any_of(plans_.begin(), plans_.end(), [](const RecordingPlan& r) { return r.work != RecordingWork::reuse; });
  std::unique_ptr<StudyStoreWriter> out;
  auto writer = [&]() -> StudyStoreWriter& {
    if (!out) {
      out = (old_ && o_.only != Stage::ingest) ? StudyStoreWriter::update(o_.store_path, {o_.deflate_level})
                                               : std::make_unique<StudyStoreWriter>(o_.store_path, StoreWriteOptions{o_.deflate_level});
    }
    return *out;
  };
  const auto t0 = std::chrono::steady_clock::now();
  auto since = [&t0] { return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count(); };
  spdlog::debug("planned {} recordings", plans_.size());
  if (recordings_change || !old_ || o_.only) {
    StudyStoreWriter& w = writer();
    for (const auto& id : removed_recordings_) w.remove("/recordings/" + id);
    run_recordings(w);
    spdlog::debug("recordings done after {:.2f} s", since());
    std::vector<std::pair<std::string, const TrialPatternUse*>> read;
    for (const auto& [id, r] : fresh_) {
      if (!r.inputs.empty()) read.emplace_back(id, &r.pattern_use);
    }
    CapturedWarnings pattern_warned(CapturedWarnings::From::this_thread);  // kept with ingest's record
    check_trial_patterns(p_, read, read.size() == plans_.size() && !o_.shard_count);
    ingest_warnings_ = pattern_warned.take();
    if (regions_ && !o_.only && static_cast<int>(o_.until) >= static_cast<int>(Stage::clean)) check_items_have_regions(p_, *regions_, fresh_);
  }
  check_distinct_recordings(plans_, fresh_);
  if (old_ && o_.only != Stage::ingest) {  // recordings not read again: what was said when they were read still holds
    for (const auto& plan : plans_) {
      if (plan.work == RecordingWork::ingest) continue;
      for (const auto& w : recording_warnings(*old_, plan.id)) {
        spdlog::warn("{} (as said when it was read)", w);
        report_.warnings_kept.push_back("ingest: " + w);
      }
    }
  }
  keys_[Stage::ingest] = study_key(Stage::ingest);
  const bool ingest_ran = std::any_of(plans_.begin(), plans_.end(), [&](const RecordingPlan& r) { return r.work == RecordingWork::ingest; }) ||
                          !removed_recordings_.empty() || o_.only == Stage::ingest || !old_;  // a new store, even of no recordings
  ran_[Stage::ingest] = ingest_ran;
  report_.stages[Stage::ingest] = ingest_ran ? "ran" : "reused";
  if (!ingest_ran && old_records_.count(Stage::ingest)) say_again(old_records_.at(Stage::ingest));
  if (imports_) {
    // Imported with the recordings: the detect stage is current whenever ingest is.
    keys_[Stage::detect] = study_key(Stage::detect);
    ran_[Stage::detect] = ran_[Stage::ingest];
    report_.stages[Stage::detect] = ingest_ran ? "imported" : "reused";
  } else if (o_.only != Stage::ingest && (o_.only || o_.until != Stage::ingest)) {
    keys_[Stage::detect] = study_key(Stage::detect);
    const bool detect_ran = std::any_of(plans_.begin(), plans_.end(), [&](const RecordingPlan& r) { return r.work != RecordingWork::reuse; }) ||
                            !removed_recordings_.empty() || o_.only == Stage::detect || !old_;
    ran_[Stage::detect] = detect_ran;
    report_.stages[Stage::detect] = detect_ran ? "ran" : "reused";
  }

  // Study-level stages: only where something would change.
  const bool study_stages = o_.only ? (*o_.only != Stage::ingest && *o_.only != Stage::detect)
                                    : static_cast<int>(o_.until) >= static_cast<int>(Stage::clean);
  if (study_stages) {
    bool any_change = o_.only.has_value() || ran_[Stage::detect];
    for (Stage s : {Stage::clean, Stage::align, Stage::measure}) {
      if ((s == Stage::align || s == Stage::measure) && !regions_present()) continue;
      if (!o_.only && static_cast<int>(s) > static_cast<int>(o_.until)) continue;
      const auto r = old_records_.find(s);
      keys_[s] = study_key(s);
      any_change = any_change || r == old_records_.end() || r->second.state != StageState::current || r->second.key != keys_[s];
    }
    if (any_change) {
      run_study_stages(writer());
      spdlog::debug("study stages done after {:.2f} s", since());
    } else {
      for (Stage s : {Stage::clean, Stage::align, Stage::measure}) {
        report_.stages[s] = (s != Stage::clean && !regions_present()) ? "not run: the protocol has no [regions]" : "reused";
        if (const auto r = old_records_.find(s); r != old_records_.end() && report_.stages[s] == "reused") say_again(r->second);
      }
    }
  }

  // A shard keeps the study's recording list for the merge to compare: kept
  // up to date even when none of its own recordings changed (a second read
  // found a merge refusing shards that were current).
  std::vector<std::string> study_list = study_recordings_;
  std::sort(study_list.begin(), study_list.end());
  const bool shard_list_changed = o_.shard_count && old_ && !ran_[Stage::ingest] && old_->provenance().study_recordings != study_list;
  if (shard_list_changed) {
    Provenance prov = old_->provenance();
    prov.study_recordings = study_list;
    writer().write_provenance(prov);
  }
  if (out) {
    // Records of the recording stages, and what is stale now.
    if (ran_[Stage::ingest]) {
      Provenance prov;
      prov.tool_version = kVersion;
      prov.protocol_path = fs::absolute(p_.path).lexically_normal().string();
      prov.protocol_text = p_.text;
      prov.protocol_sha256 = sha256_hex(p_.text);
      prov.created_utc = now_;
      if (o_.shard_count) {
        prov.shard = std::to_string(o_.shard_index) + "/" + std::to_string(o_.shard_count);
        prov.study_recordings = study_list;
      }
      std::set<std::string> fresh_ids;
      for (const auto& f : inputs_) fresh_ids.insert(f.recording_id);
      if (old_ && o_.only != Stage::ingest) {  // recordings kept from the previous run keep their records
        const Provenance before = old_->provenance();
        for (const auto& f : before.inputs) {
          if (!fresh_ids.count(f.recording_id) && std::any_of(plans_.begin(), plans_.end(), [&](auto& r) { return r.id == f.recording_id; })) {
            prov.inputs.push_back(f);
          }
        }
        for (const auto& r : before.repairs) {
          if (!fresh_ids.count(r.recording_id) && std::any_of(plans_.begin(), plans_.end(), [&](auto& x) { return x.id == r.recording_id; })) {
            prov.repairs.push_back(r);
          }
        }
      }
      prov.inputs.insert(prov.inputs.end(), inputs_.begin(), inputs_.end());
      prov.repairs.insert(prov.repairs.end(), repairs_.begin(), repairs_.end());
      std::sort(prov.inputs.begin(), prov.inputs.end(), [](auto& a, auto& b) { return std::tie(a.recording_id, a.path) < std::tie(b.recording_id, b.path); });
      std::sort(prov.repairs.begin(), prov.repairs.end(), [](auto& a, auto& b) { return std::tie(a.recording_id, a.kind) < std::tie(b.recording_id, b.kind); });
      out->write_provenance(prov);
      StageRecord ingest = record_for(Stage::ingest, keys_[Stage::ingest], "", ingest_settings_);
      ingest.warnings = ingest_warnings_;
      out->write_stage_record(ingest);
    }
    if (ran_[Stage::detect]) out->write_stage_record(record_for(Stage::detect, keys_[Stage::detect], keys_[Stage::ingest], detect_settings_));
    // Downstream of anything that ran and did not run itself: stale, results removed.
    std::optional<Stage> first_ran;
    for (Stage s : kStages) {
      if (ran_[s]) {
        first_ran = s;
        break;
      }
    }
    if (first_ran) {
      for (Stage s : kStages) {
        if (static_cast<int>(s) <= static_cast<int>(*first_ran) || ran_[s]) continue;
        const bool had = old_records_.count(s) && o_.only != Stage::ingest;
        const auto said = report_.stages.find(s);
        const bool reused = said != report_.stages.end() && said->second == "reused";
        if (reused) continue;
        remove_results(*out, s);
        if (had) {
          out->mark_stage_stale(s, std::string(to_string(*first_ran)) + " ran again on " + now_);
          report_.stages[s] = "stale";
        } else if (o_.only == Stage::ingest && old_records_.count(s)) {
          StageRecord r = old_records_[s];
          r.state = StageState::stale;
          r.stale_reason = std::string("ingest ran again on ") + now_ + " (the store was replaced)";
          out->write_stage_record(r);
          report_.stages[s] = "stale";
        }
      }
    }
    out->commit();
    report_.store_written = true;
    spdlog::debug("store written after {:.2f} s", since());
  }
  // Only whole-study results (a shard or a single stage holds less, or other).
  if (!o_.only && !o_.shard_count) {
    if (!events_.empty()) report_.events = std::make_shared<const std::vector<RecordingEvents>>(std::move(events_));
    if (alignment_) report_.alignment = std::make_shared<const std::vector<RecordingAlignment>>(std::move(*alignment_));
    if (cleaned_recordings_) report_.cleaned = std::make_shared<const std::vector<CleanedRecording>>(std::move(*cleaned_recordings_));
  }
  // The report beside the tables: each reads the store on a thread of its own.
  std::future<void> beside;
  const bool in_parallel = o_.jobs != 1 && h5::library_serialises_threads();
  // The rows only when measure made them: the tables would fill them in otherwise, beside this thread.
  const bool measured = ran_[Stage::measure] && !report_.rows.empty();
  const RunResults made{report_.store_written, report_.events, measured ? &report_.rows : nullptr, measured ? report_.by_role : nullptr,
                        measured ? report_.measures_wide : nullptr, measured ? report_.measures_by_role : nullptr, report_.alignment, report_.cleaned, report_.cleaning_rows, report_.audit ? &*report_.audit : nullptr};
  auto run_beside = [this, made, since] {
    h5::quiet_this_thread();
    try {
      o_.beside_tables(made);
    } catch (...) {
      report_.beside_tables_error = std::current_exception();  // the caller's to throw, as if it had run there
    }
    spdlog::debug("report done after {:.2f} s", since());
  };
  if (o_.beside_tables && in_parallel) beside = std::async(std::launch::async, run_beside);
  try {
    if (!o_.tables_folder.empty()) {
      const auto written = write_study_tables(o_.store_path, o_.tables_folder, p_, &report_, o_.jobs);
      report_.tables = written;
      report_.tables_folder = o_.tables_folder;
    }
  } catch (...) {
    if (beside.valid()) beside.wait();  // never leave the thread reading behind
    throw;
  }
  spdlog::debug("tables done after {:.2f} s", since());
  if (beside.valid()) beside.get();
  else if (o_.beside_tables) run_beside();
  report_.store_path = o_.store_path;
  return std::move(report_);  // a member: returned by copy otherwise (51 000 measure rows for 40 participants)
}

}  // namespace

std::vector<std::string> write_study_tables(const std::string& store_path, const std::string& folder, const Protocol& p,
                                            StudyRunReport* fresh, unsigned jobs) {
  StudyStoreReader store(store_path);
  nlohmann::json manifest;
  manifest["store"] = fs::absolute(store_path).lexically_normal().string();
  manifest["gazemill_version"] = kVersion;
  auto current = [&](Stage s) {
    const auto r = store.stage_record(s);
    return r && r->state == StageState::current;
  };
  for (Stage s : kStages) {
    if (current(s)) manifest["stages"][to_string(s)] = store.stage_record(s)->key;
  }
  WriteLock lock(folder);
  remove_leftover_temporaries(folder);
  if (read_manifest(folder) == manifest.dump(2)) {
    if (table_set_intact(folder)) return {};
    spdlog::info("{}: a table was deleted or changed since it was written; the set is written again", folder);
  }
  TableSet set(folder);
  const auto t0 = std::chrono::steady_clock::now();
  auto lap = [&t0](const char* what) {
    spdlog::debug("tables: {} after {:.2f} s", what, std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
  };
  std::optional<RegionCatalogue> regions;
  if (p.regions.present()) regions = load_regions(p);
  // The store is read on this thread (the report may read it on another); the tables
  // are formatted on threads of their own and added in a fixed order.
  StudyRunReport again;  // before the tables: their threads may read its rows until they are joined
  std::vector<std::pair<std::string, std::future<std::string>>> tables;
  std::set<std::string> written_in_pieces;  // by their own threads: their futures hold no text
  const auto policy = jobs == 1 ? std::launch::deferred : std::launch::async;  // -j1: formatted in turn on this thread
  auto format = [&tables, policy](std::string name, auto make) { tables.emplace_back(std::move(name), std::async(policy, std::move(make))); };
  if (current(Stage::detect)) {
    KnownResults known;
    if (fresh) known = {fresh->events.get(), fresh->alignment.get(), fresh->cleaned.get(), fresh->removed.get()};
    auto sources = std::make_shared<const EventTableSources>(store, p, regions ? &*regions : nullptr, current(Stage::clean),
                                                             current(Stage::align), known);
    // The three event tables together, a few recordings at a time, from a thread of their own.
    format("fixations.tsv", [sources, &p, &set, jobs] {
      set.write_in_pieces({"fixations.tsv", "saccades.tsv", "blinks.tsv"}, [&](const std::vector<TextPieces>& files) {
        write_event_tables(*sources, p.design, jobs, {files[0], files[1], files[2]});
      });
      return std::string();
    });
    format("saccades.tsv", [] { return std::string(); });  // written with fixations.tsv
    format("blinks.tsv", [] { return std::string(); });
    written_in_pieces.insert({"fixations.tsv", "saccades.tsv", "blinks.tsv"});
    lap("events read");
  }
  if (current(Stage::clean)) {
    auto audit = std::make_shared<const AuditReport>(fresh && fresh->audit ? *fresh->audit : read_audit(store));
    format("audit.tsv", [audit] { return audit_tsv(*audit); });
    format("audit_totals.tsv", [audit] { return audit_totals_tsv(*audit); });
    format("audit.json", [audit] { return audit_json(*audit); });
  }
  std::vector<std::pair<std::string, std::string>> drawings;
  if (current(Stage::align) && regions) {
    auto alignment = fresh && fresh->alignment ? fresh->alignment : std::make_shared<const std::vector<RecordingAlignment>>(read_alignment(store));
    format("alignment_trials.tsv", [alignment] { return alignment_trials_tsv(*alignment); });
    const auto cleaned = fresh && fresh->cleaned ? fresh->cleaned : std::make_shared<const std::vector<CleanedRecording>>(cleaned_recordings(store));
    for (auto& [name, svg] : flagged_trial_drawings(p, *regions, *cleaned, *alignment)) {
      drawings.emplace_back("flagged_trials/" + name, std::move(svg));
    }
  }
  lap("audit and alignment read");
  if (current(Stage::measure) && regions) {
    StudyRunReport& r = fresh ? *fresh : again;
    if (r.rows.empty()) {
      // Measured before: the same rows again from the store's cleaned fixations and lines.
      r.rows = measure_rows(cleaned_recordings(store), read_alignment(store), *regions, p.regions, p.design, &r.placement);
    }
    const auto& rows = r.rows;
    // The largest table goes to its file a piece at a time, from its own thread.
    format("measures.tsv", [&rows, &p, &set] {
      set.write_in_pieces("measures.tsv", [&](const TextPieces& pieces) { measures_long_tsv(rows, p.design, pieces); });
      return std::string();
    });
    written_in_pieces.insert("measures.tsv");
    format("measures_wide.tsv", [&rows, &p] { return measures_wide_tsv(rows, p.design); });
    // The run's own aggregates where it made them, else made here from the rows.
    auto aggregates = [&rows, &p](std::shared_ptr<const AggregateTable> made, AggregateTable (*make)(const std::vector<MeasureRow>&)) {
      return [&rows, &p, made, make] { return aggregates_tsv(made ? *made : make(rows), p.design.factors); };
    };
    format("measures_by_item_region.tsv", aggregates(r.by_item_region, aggregate_by_item_region));
    format("measures_by_role.tsv", aggregates(r.by_role, aggregate_by_role));
    format("measures_by_participant.tsv", aggregates(r.by_participant, aggregate_by_participant));
    format("fixation_placement.tsv", [&r, &p] { return placement_tsv(r.placement, p.design.factors); });
  }
  // In the order the set always had: events, audit, alignment and its drawings, measures.
  std::size_t next = 0;
  auto add_until = [&](const char* last) {
    for (; next < tables.size(); ++next) {
      std::string text = tables[next].second.get();
      if (written_in_pieces.count(tables[next].first)) {
        set.added(tables[next].first);
      } else {
        set.add(tables[next].first, text);
      }
      if (tables[next].first == last) {
        ++next;
        return;
      }
    }
  };
  lap("measures read");
  add_until("alignment_trials.tsv");
  for (const auto& [name, svg] : drawings) set.add(name, svg);
  add_until("");
  lap("formatted and written");
  set.commit(manifest.dump(2));
  return set.names();
}

StudyRunReport run_study(const Protocol& protocol, const StudyRunOptions& options) {
  // A failure to write (a full disk, a quota, a folder gone) ends in one line
  // naming the store and the system's reason; the temporary file is gone by now.
  auto cannot_write = [&](const std::string& what) -> InputError {
    const std::string reason = h5::last_error_reason();
    return InputError({options.store_path, 0, ""}, "cannot write the store: " + (reason.empty() ? what : reason + " (" + what + ")"));
  };
  try {
    StudyRun run(protocol, options);
    return run.execute();
  } catch (const InputError&) {
    throw;
  } catch (const H5::Exception& e) {
    throw cannot_write(e.getFuncName() + ": " + e.getDetailMsg());
  } catch (const std::runtime_error& e) {
    throw cannot_write(e.what());
  }
}

}  // namespace gazemill
