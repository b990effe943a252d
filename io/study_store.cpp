#include "io/study_store.h"

#include <unistd.h>

#include <cstdio>
#include <filesystem>
#include <map>
#include <optional>
#include <set>
#include <thread>

#include "io/chunk_compressor.h"
#include "io/hdf5_util.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

// ---------------------------------------------------------------- writer ---

namespace {

class RecordingSampleWriter : public SampleSink {
 public:
  RecordingSampleWriter(H5::Group group, bool left, bool right, const StoreWriteOptions& opt, CompressionPool& pool)
      : group_(std::move(group)), queue_(4 * std::max(1u, opt.compression_threads) + 8) {
    auto add = [&](const std::string& name, const H5::PredType& type, std::size_t size, const char* unit) {
      columns_.push_back(std::make_unique<ChunkedColumnWriter>(group_, name, type, size, opt.chunk_rows,
                                                               opt.deflate_level, pool, queue_));
      if (*unit) h5::set_attr(columns_.back()->dataset(), "unit", std::string(unit));
    };
    add("time_us", H5::PredType::NATIVE_INT64, sizeof(Microseconds), "us");
    for (Eye eye : {Eye::left, Eye::right}) {
      if ((eye == Eye::left && !left) || (eye == Eye::right && !right)) continue;
      const std::string p = to_string(eye) + "_";
      add(p + "x_px", H5::PredType::NATIVE_FLOAT, sizeof(float), "px");
      add(p + "y_px", H5::PredType::NATIVE_FLOAT, sizeof(float), "px");
      add(p + "pupil", H5::PredType::NATIVE_FLOAT, sizeof(float), "tracker units");
      add(p + "valid", H5::PredType::NATIVE_UINT8, 1, "");
      eyes_.push_back(eye);
    }
  }

  void append(const SampleColumns& chunk) override {
    std::size_t c = 0;
    columns_[c++]->append(chunk.time_us.data(), chunk.size());
    for (Eye eye : eyes_) {
      const EyeSamples& e = chunk.eye(eye);
      columns_[c++]->append(e.x_px.data(), e.size());
      columns_[c++]->append(e.y_px.data(), e.size());
      columns_[c++]->append(e.pupil.data(), e.size());
      columns_[c++]->append(e.valid.data(), e.size());
    }
  }

  void finish() {
    for (auto& c : columns_) c->flush();
    queue_.drain();
    for (auto& c : columns_) c->set_final_extent();
  }

 private:
  H5::Group group_;
  ChunkWriteQueue queue_;
  std::vector<std::unique_ptr<ChunkedColumnWriter>> columns_;
  std::vector<Eye> eyes_;
};

// Owned by the writer; the sink handed out forwards to it so the writer can
// finish the columns when the recording's metadata arrives.
class ForwardingSink : public SampleSink {
 public:
  explicit ForwardingSink(RecordingSampleWriter& target) : target_(target) {}
  void append(const SampleColumns& chunk) override { target_.append(chunk); }

 private:
  RecordingSampleWriter& target_;
};

std::string temp_name_for(const std::string& path) {
  const fs::path p(path);
  return (p.parent_path() / ("." + p.filename().string() + ".partial-" + std::to_string(::getpid()))).string();
}

}  // namespace

struct StudyStoreWriter::Impl {
  StoreWriteOptions options;
  CompressionPool pool;
  H5::H5File file;
  H5::Group recordings;
  std::map<std::string, std::unique_ptr<RecordingSampleWriter>> open_samples;

  Impl(const std::string& temp, const StoreWriteOptions& opt)
      : options(opt), pool(opt.compression_threads ? opt.compression_threads : std::max(1u, std::thread::hardware_concurrency())) {
    if (options.compression_threads == 0) options.compression_threads = std::max(1u, std::thread::hardware_concurrency());
    file = H5::H5File(temp, H5F_ACC_TRUNC);
    H5::Group root = file.openGroup("/");
    h5::set_attr(root, "format", std::string(kStoreFormat));
    h5::set_attr(root, "format_version", kStoreFormatVersion);
    recordings = h5::create_group(root, "recordings");
  }
};

StudyStoreWriter::StudyStoreWriter(std::string path, StoreWriteOptions options)
    : path_(std::move(path)), temp_path_(temp_name_for(path_)) {
  try {
    impl_ = std::make_unique<Impl>(temp_path_, options);
  } catch (const H5::Exception& e) {
    std::remove(temp_path_.c_str());
    throw InputError({path_, 0, ""}, "cannot create the store's temporary file " + temp_path_ + ": " + e.getDetailMsg());
  }
}

StudyStoreWriter::~StudyStoreWriter() {
  if (!committed_) {
    impl_.reset();
    std::remove(temp_path_.c_str());
  }
}

std::unique_ptr<SampleSink> StudyStoreWriter::begin_samples(const std::string& recording_id, bool left, bool right) {
  if (h5::exists(impl_->recordings, recording_id)) {
    throw InputError({"", 0, recording_id}, "two input files map to the same recording id '" + recording_id +
                                                "'; check input.filename_pattern");
  }
  H5::Group rec = h5::create_group(impl_->recordings, recording_id);
  H5::Group samples = h5::create_group(rec, "samples");
  auto writer = std::make_unique<RecordingSampleWriter>(samples, left, right, impl_->options, impl_->pool);
  auto sink = std::make_unique<ForwardingSink>(*writer);
  impl_->open_samples[recording_id] = std::move(writer);
  return sink;
}

void StudyStoreWriter::write_recording(const Recording& r, const SampleSummary& summary) {
  auto it = impl_->open_samples.find(r.id);
  if (it == impl_->open_samples.end()) throw std::logic_error("write_recording before begin_samples for " + r.id);
  it->second->finish();
  impl_->open_samples.erase(it);

  H5::Group rec = impl_->recordings.openGroup(r.id);
  h5::set_attr(rec, "participant", r.participant);
  h5::set_attr(rec, "session", r.session);
  h5::set_attr(rec, "source_file", r.source_file);
  h5::set_attr(rec, "sample_rate_hz", r.sample_rate_hz);
  std::string eyes = r.samples.has_left && r.samples.has_right ? "left,right" : r.samples.has_left ? "left" : "right";
  h5::set_attr(rec, "eyes", eyes);
  h5::set_attr(rec, "screen_width_px", static_cast<std::int64_t>(r.screen.width_px));
  h5::set_attr(rec, "screen_height_px", static_cast<std::int64_t>(r.screen.height_px));
  h5::set_attr(rec, "screen_width_mm", r.screen.width_mm);
  h5::set_attr(rec, "screen_height_mm", r.screen.height_mm);
  h5::set_attr(rec, "viewing_distance_mm", r.screen.viewing_distance_mm);
  h5::set_attr(rec, "sample_count", summary.sample_count);
  h5::set_attr(rec, "missing_left", summary.missing_left);
  h5::set_attr(rec, "missing_right", summary.missing_right);
  h5::set_attr(rec, "first_time_us", summary.first_time_us);
  h5::set_attr(rec, "last_time_us", summary.last_time_us);

  H5::Group msg = h5::create_group(rec, "messages");
  std::vector<Microseconds> times;
  std::vector<std::string> texts;
  for (const auto& m : r.messages) {
    times.push_back(m.time_us);
    texts.push_back(m.text);
  }
  h5::write_column(msg, "time_us", times, "us");
  h5::write_strings(msg, "text", texts);

  H5::Group tr = h5::create_group(rec, "trials");
  std::vector<std::string> ids, items, conditions;
  std::vector<Microseconds> starts, ends;
  std::set<std::string> variable_names, marker_names;
  for (const auto& t : r.trials) {
    ids.push_back(t.id);
    items.push_back(t.item);
    conditions.push_back(t.condition);
    starts.push_back(t.start_us);
    ends.push_back(t.end_us);
    for (const auto& [k, v] : t.variables) variable_names.insert(k);
    for (const auto& [k, v] : t.markers) marker_names.insert(k);
  }
  h5::write_strings(tr, "id", ids);
  h5::write_column(tr, "start_us", starts, "us");
  h5::write_column(tr, "end_us", ends, "us");
  h5::write_strings(tr, "item", items);
  h5::write_strings(tr, "condition", conditions);
  H5::Group vars = h5::create_group(tr, "variables");
  for (const auto& name : variable_names) {
    std::vector<std::string> col;
    for (const auto& t : r.trials) {
      auto f = t.variables.find(name);
      col.push_back(f == t.variables.end() ? "" : f->second);
    }
    h5::write_strings(vars, name, col);
  }
  H5::Group marks = h5::create_group(tr, "markers");
  for (const auto& name : marker_names) {
    std::vector<Microseconds> col;
    for (const auto& t : r.trials) {
      auto f = t.markers.find(name);
      col.push_back(f == t.markers.end() ? kMissingTime : f->second);
    }
    h5::write_column(marks, name + "_us", col, "us");
  }
}

void StudyStoreWriter::write_provenance(const Provenance& p) {
  H5::Group root = impl_->file.openGroup("/");
  H5::Group g = h5::create_group(root, "provenance");
  h5::set_attr(g, "gazemill_version", p.tool_version);
  h5::set_attr(g, "protocol_path", p.protocol_path);
  h5::set_attr(g, "protocol_text", p.protocol_text);
  h5::set_attr(g, "protocol_sha256", p.protocol_sha256);
  h5::set_attr(g, "created_utc", p.created_utc);
  H5::Group in = h5::create_group(g, "inputs");
  std::vector<std::string> paths, hashes, recs;
  std::vector<std::uint64_t> sizes;
  for (const auto& f : p.inputs) {
    paths.push_back(f.path);
    sizes.push_back(f.size_bytes);
    hashes.push_back(f.sha256);
    recs.push_back(f.recording_id);
  }
  h5::write_strings(in, "path", paths);
  h5::write_column(in, "size_bytes", sizes, "bytes");
  h5::write_strings(in, "sha256", hashes);
  h5::write_strings(in, "recording", recs);
  H5::Group rep = h5::create_group(g, "repairs");
  std::vector<std::string> rrec, kinds;
  std::vector<std::uint64_t> counts;
  for (const auto& r : p.repairs) {
    rrec.push_back(r.recording_id);
    kinds.push_back(r.kind);
    counts.push_back(r.count);
  }
  h5::write_strings(rep, "recording", rrec);
  h5::write_strings(rep, "kind", kinds);
  h5::write_column(rep, "count", counts);
}

void StudyStoreWriter::commit() {
  if (!impl_->open_samples.empty()) throw std::logic_error("commit with unfinished recordings");
  impl_->recordings.close();
  impl_->file.flush(H5F_SCOPE_GLOBAL);
  impl_->file.close();
  impl_.reset();
  std::error_code ec;
  fs::rename(temp_path_, path_, ec);
  if (ec) {
    std::remove(temp_path_.c_str());
    throw InputError({path_, 0, ""}, "cannot move the finished store into place: " + ec.message());
  }
  committed_ = true;
}

// ---------------------------------------------------------------- reader ---

struct StudyStoreReader::Impl {
  std::string path;
  H5::H5File file;

  [[noreturn]] void fail(const std::string& object, const std::string& what) const {
    throw InputError({path, 0, object}, what);
  }
  H5::Group group(const std::string& p) const {
    if (!h5::exists(file.openGroup("/"), p)) fail(p, "the store has no group " + p);
    return file.openGroup(p);
  }
};

StudyStoreReader::StudyStoreReader(const std::string& path) : impl_(std::make_unique<Impl>()) {
  impl_->path = path;
  h5::QuietErrors quiet;
  if (!fs::exists(path)) throw InputError({path, 0, ""}, "no such file");
  try {
    impl_->file = H5::H5File(path, H5F_ACC_RDONLY);
  } catch (const H5::Exception&) {
    throw InputError({path, 0, ""}, "not an HDF5 file; expected a gazemill study store");
  }
  H5::Group root = impl_->file.openGroup("/");
  if (!h5::has_attr(root, "format") || h5::get_string_attr(root, "format") != kStoreFormat) {
    throw InputError({path, 0, "/"}, std::string("not a gazemill study store (attribute format != ") + kStoreFormat + ")");
  }
  const auto version = h5::get_int_attr(root, "format_version");
  if (version != kStoreFormatVersion) {
    throw InputError({path, 0, "/"}, "store format version " + std::to_string(version) + " is not supported (expected " +
                                         std::to_string(kStoreFormatVersion) + ")");
  }
}

StudyStoreReader::~StudyStoreReader() = default;

Provenance StudyStoreReader::provenance() const {
  h5::QuietErrors quiet;
  Provenance p;
  H5::Group g = impl_->group("provenance");
  p.tool_version = h5::get_string_attr(g, "gazemill_version");
  p.protocol_path = h5::get_string_attr(g, "protocol_path");
  p.protocol_text = h5::get_string_attr(g, "protocol_text");
  p.protocol_sha256 = h5::get_string_attr(g, "protocol_sha256");
  p.created_utc = h5::get_string_attr(g, "created_utc");
  H5::Group in = g.openGroup("inputs");
  const auto paths = h5::read_strings(in, "path");
  const auto sizes = h5::read_column<std::uint64_t>(in, "size_bytes");
  const auto hashes = h5::read_strings(in, "sha256");
  const auto recs = h5::read_strings(in, "recording");
  for (std::size_t i = 0; i < paths.size(); ++i) p.inputs.push_back({paths[i], sizes[i], hashes[i], recs[i]});
  H5::Group rep = g.openGroup("repairs");
  const auto rrec = h5::read_strings(rep, "recording");
  const auto kinds = h5::read_strings(rep, "kind");
  const auto counts = h5::read_column<std::uint64_t>(rep, "count");
  for (std::size_t i = 0; i < rrec.size(); ++i) p.repairs.push_back({rrec[i], kinds[i], counts[i]});
  return p;
}

std::vector<std::string> StudyStoreReader::recording_ids() const {
  h5::QuietErrors quiet;
  return h5::child_names(impl_->group("recordings"));
}

SampleSummary StudyStoreReader::sample_summary(const std::string& id) const {
  h5::QuietErrors quiet;
  H5::Group rec = impl_->group("recordings/" + id);
  SampleSummary s;
  auto u64 = [&](const char* name) {
    std::uint64_t v = 0;
    rec.openAttribute(name).read(H5::PredType::NATIVE_UINT64, &v);
    return v;
  };
  s.sample_count = u64("sample_count");
  s.missing_left = u64("missing_left");
  s.missing_right = u64("missing_right");
  s.first_time_us = h5::get_int_attr(rec, "first_time_us");
  s.last_time_us = h5::get_int_attr(rec, "last_time_us");
  return s;
}

Recording StudyStoreReader::read_recording(const std::string& id, bool with_samples) const {
  h5::QuietErrors quiet;
  const std::string base = "recordings/" + id;
  H5::Group rec = impl_->group(base);
  Recording r;
  try {
    r.id = id;
    r.participant = h5::get_string_attr(rec, "participant");
    r.session = h5::get_string_attr(rec, "session");
    r.source_file = h5::get_string_attr(rec, "source_file");
    r.sample_rate_hz = h5::get_double_attr(rec, "sample_rate_hz");
    r.screen.width_px = static_cast<int>(h5::get_int_attr(rec, "screen_width_px"));
    r.screen.height_px = static_cast<int>(h5::get_int_attr(rec, "screen_height_px"));
    r.screen.width_mm = h5::get_double_attr(rec, "screen_width_mm");
    r.screen.height_mm = h5::get_double_attr(rec, "screen_height_mm");
    r.screen.viewing_distance_mm = h5::get_double_attr(rec, "viewing_distance_mm");
    const std::string eyes = h5::get_string_attr(rec, "eyes");
    r.samples.has_left = eyes.find("left") != std::string::npos;
    r.samples.has_right = eyes.find("right") != std::string::npos;

    H5::Group msg = rec.openGroup("messages");
    const auto mt = h5::read_column<Microseconds>(msg, "time_us");
    const auto mx = h5::read_strings(msg, "text");
    for (std::size_t i = 0; i < mt.size(); ++i) r.messages.push_back({mt[i], mx[i]});

    H5::Group tr = rec.openGroup("trials");
    const auto ids = h5::read_strings(tr, "id");
    const auto starts = h5::read_column<Microseconds>(tr, "start_us");
    const auto ends = h5::read_column<Microseconds>(tr, "end_us");
    const auto items = h5::read_strings(tr, "item");
    const auto conds = h5::read_strings(tr, "condition");
    r.trials.resize(ids.size());
    for (std::size_t i = 0; i < ids.size(); ++i) {
      r.trials[i].id = ids[i];
      r.trials[i].start_us = starts[i];
      r.trials[i].end_us = ends[i];
      r.trials[i].item = items[i];
      r.trials[i].condition = conds[i];
    }
    H5::Group vars = tr.openGroup("variables");
    for (const auto& name : h5::child_names(vars)) {
      const auto col = h5::read_strings(vars, name);
      for (std::size_t i = 0; i < col.size() && i < r.trials.size(); ++i) {
        if (!col[i].empty()) r.trials[i].variables[name] = col[i];
      }
    }
    H5::Group marks = tr.openGroup("markers");
    for (const auto& ds : h5::child_names(marks)) {
      const auto col = h5::read_column<Microseconds>(marks, ds);
      const std::string name = ds.size() > 3 ? ds.substr(0, ds.size() - 3) : ds;  // strip "_us"
      for (std::size_t i = 0; i < col.size() && i < r.trials.size(); ++i) {
        if (col[i] != kMissingTime) r.trials[i].markers[name] = col[i];
      }
    }

    if (with_samples) {
      H5::Group s = rec.openGroup("samples");
      r.samples.time_us = h5::read_column<Microseconds>(s, "time_us");
      for (Eye eye : {Eye::left, Eye::right}) {
        if ((eye == Eye::left && !r.samples.has_left) || (eye == Eye::right && !r.samples.has_right)) continue;
        const std::string p = to_string(eye) + "_";
        EyeSamples& e = r.samples.eye(eye);
        e.x_px = h5::read_column<float>(s, p + "x_px");
        e.y_px = h5::read_column<float>(s, p + "y_px");
        e.pupil = h5::read_column<float>(s, p + "pupil");
        e.valid = h5::read_column<std::uint8_t>(s, p + "valid");
      }
    }
  } catch (const H5::Exception& e) {
    impl_->fail(base, "damaged or incomplete recording group: " + e.getDetailMsg());
  }
  return r;
}

}  // namespace gazemill
