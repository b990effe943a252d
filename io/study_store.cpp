#include "io/study_store.h"

#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <limits>
#include <map>
#include <optional>
#include <set>
#include <stdexcept>
#include <thread>
#include <algorithm>

#include "io/chunk_compressor.h"
#include "io/atomic_file.h"
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
    : path_(std::move(path)), temp_path_(temporary_path_beside(path_)) {
  try {
    impl_ = std::make_unique<Impl>(temp_path_, options);
  } catch (const H5::Exception& e) {
    std::remove(temp_path_.c_str());
    throw InputError({path_, 0, ""}, "cannot create the store's temporary file " + temp_path_ + ": " + e.getDetailMsg());
  }
}

namespace {

herr_t copy_attribute(hid_t loc, const char* name, const H5A_info_t*, void* destination) {
  const hid_t dst = *static_cast<hid_t*>(destination);
  const hid_t a = H5Aopen(loc, name, H5P_DEFAULT);
  const hid_t type = H5Aget_type(a);
  const hid_t space = H5Aget_space(a);
  const hid_t mem = H5Tget_native_type(type, H5T_DIR_DEFAULT);
  const auto n = static_cast<std::size_t>(std::max<hssize_t>(1, H5Sget_simple_extent_npoints(space)));
  std::vector<char> buf(n * H5Tget_size(mem));
  herr_t rc = H5Aread(a, mem, buf.data());
  if (rc >= 0) {
    const hid_t b = H5Acreate2(dst, name, type, space, H5P_DEFAULT, H5P_DEFAULT);
    rc = b < 0 ? -1 : H5Awrite(b, mem, buf.data());
    if (b >= 0) H5Aclose(b);
    if (H5Tdetect_class(type, H5T_VLEN) > 0 || H5Tis_variable_str(type) > 0) H5Dvlen_reclaim(mem, space, H5P_DEFAULT, buf.data());
  }
  H5Tclose(mem);
  H5Sclose(space);
  H5Tclose(type);
  H5Aclose(a);
  return rc < 0 ? -1 : 0;
}

void copy_attributes(const H5::H5Object& from, H5::H5Object& to) {
  hid_t dst = to.getId();
  hsize_t idx = 0;
  if (H5Aiterate2(from.getId(), H5_INDEX_NAME, H5_ITER_INC, &idx, copy_attribute, &dst) < 0) {
    throw std::runtime_error("cannot copy attributes");
  }
}

void copy_object(const H5::Group& from, const std::string& name, H5::Group& to) {
  if (H5Ocopy(from.getId(), name.c_str(), to.getId(), name.c_str(), H5P_DEFAULT, H5P_DEFAULT) < 0) {
    throw std::runtime_error("cannot copy " + name);
  }
}

}  // namespace

std::unique_ptr<StudyStoreWriter> StudyStoreWriter::derive(const std::string& store_path, const std::vector<std::string>& replaced,
                                                           const std::string& stage) {
  h5::QuietErrors quiet;
  StudyStoreReader check(store_path);  // a readable store of our format, or InputError
  auto w = std::make_unique<StudyStoreWriter>(store_path);
  try {
    H5::H5File src(store_path, H5F_ACC_RDONLY);
    H5::Group src_root = src.openGroup("/");
    H5::Group dst_root = w->impl_->file.openGroup("/");
    for (const auto& top : h5::child_names(src_root)) {
      if (top == "recordings") continue;
      if (std::find(replaced.begin(), replaced.end(), "/" + top) != replaced.end()) continue;
      if (top == "provenance") {
        H5::Group from = src_root.openGroup(top);
        H5::Group to = h5::create_group(dst_root, top);
        copy_attributes(from, to);
        for (const auto& child : h5::child_names(from)) {
          if (child != "stages") {
            copy_object(from, child, to);
            continue;
          }
          H5::Group sfrom = from.openGroup("stages");
          H5::Group sto = h5::create_group(to, "stages");
          for (const auto& st : h5::child_names(sfrom)) {
            if (st != stage) copy_object(sfrom, st, sto);
          }
        }
        continue;
      }
      copy_object(src_root, top, dst_root);
    }
    H5::Group from_recs = src_root.openGroup("recordings");
    for (const auto& id : h5::child_names(from_recs)) {
      H5::Group from = from_recs.openGroup(id);
      H5::Group to = h5::create_group(w->impl_->recordings, id);
      copy_attributes(from, to);
      for (const auto& child : h5::child_names(from)) {
        if (std::find(replaced.begin(), replaced.end(), child) == replaced.end()) copy_object(from, child, to);
      }
    }
  } catch (const H5::Exception& e) {
    throw InputError({store_path, 0, ""}, "cannot copy the store to update it: " + e.getDetailMsg());
  } catch (const std::runtime_error& e) {
    throw InputError({store_path, 0, ""}, std::string("cannot copy the store to update it: ") + e.what());
  }
  return w;
}

namespace {

// "deg/s" for peak_threshold_deg_s: fitted values carry their unit in their name.
std::string unit_in_name(const std::string& name) {
  if (name.ends_with("_deg_s")) return "deg/s";
  if (name.ends_with("_deg")) return "deg";
  if (name.ends_with("_ms")) return "ms";
  return "";
}

template <typename E, typename F>
std::vector<std::string> trial_column(const std::vector<E>& events, F&& get) {
  std::vector<std::string> out;
  for (const auto& e : events) out.push_back(get(e));
  return out;
}

template <typename E, typename T, typename F>
std::vector<T> number_column(const std::vector<E>& events, F&& get) {
  std::vector<T> out;
  for (const auto& e : events) out.push_back(static_cast<T>(get(e)));
  return out;
}

}  // namespace

void StudyStoreWriter::write_events(const std::string& id, const DetectedEvents& ev, const std::vector<SampleLabel>& labels,
                                    const std::string& method, const std::string& parameters_json) {
  H5::Group rec = impl_->recordings.openGroup(id);
  H5::Group g = h5::create_group(rec, "events");
  h5::set_attr(g, "method", method);
  h5::set_attr(g, "parameters", parameters_json);
  std::vector<std::uint8_t> codes;
  codes.reserve(labels.size());
  for (auto l : labels) codes.push_back(static_cast<std::uint8_t>(l));
  h5::write_column(g, "sample_label", codes);

  auto eye_of = [](const auto& e) { return to_string(e.eye); };
  auto trial_of = [](const auto& e) { return e.trial; };
  H5::Group f = h5::create_group(g, "fixations");
  const auto& fx = ev.fixations;
  h5::write_strings(f, "trial", trial_column(fx, trial_of));
  h5::write_strings(f, "eye", trial_column(fx, eye_of));
  h5::write_column(f, "start_us", number_column<FixationEvent, std::int64_t>(fx, [](auto& e) { return e.start_us; }), "us");
  h5::write_column(f, "end_us", number_column<FixationEvent, std::int64_t>(fx, [](auto& e) { return e.end_us; }), "us");
  h5::write_column(f, "duration_ms", number_column<FixationEvent, double>(fx, [](auto& e) { return e.duration_ms(); }), "ms");
  h5::write_column(f, "x_px", number_column<FixationEvent, double>(fx, [](auto& e) { return e.x_px; }), "px");
  h5::write_column(f, "y_px", number_column<FixationEvent, double>(fx, [](auto& e) { return e.y_px; }), "px");
  h5::write_column(f, "x_median_px", number_column<FixationEvent, double>(fx, [](auto& e) { return e.x_median_px; }), "px");
  h5::write_column(f, "y_median_px", number_column<FixationEvent, double>(fx, [](auto& e) { return e.y_median_px; }), "px");
  h5::write_column(f, "x_deg", number_column<FixationEvent, double>(fx, [](auto& e) { return e.x_deg; }), "deg");
  h5::write_column(f, "y_deg", number_column<FixationEvent, double>(fx, [](auto& e) { return e.y_deg; }), "deg");
  h5::write_column(f, "dispersion_deg", number_column<FixationEvent, double>(fx, [](auto& e) { return e.dispersion_deg; }), "deg");

  H5::Group sg = h5::create_group(g, "saccades");
  const auto& sc = ev.saccades;
  h5::write_strings(sg, "trial", trial_column(sc, trial_of));
  h5::write_strings(sg, "eye", trial_column(sc, eye_of));
  h5::write_column(sg, "start_us", number_column<SaccadeEvent, std::int64_t>(sc, [](auto& e) { return e.start_us; }), "us");
  h5::write_column(sg, "end_us", number_column<SaccadeEvent, std::int64_t>(sc, [](auto& e) { return e.end_us; }), "us");
  h5::write_column(sg, "start_x_px", number_column<SaccadeEvent, double>(sc, [](auto& e) { return e.start_x_px; }), "px");
  h5::write_column(sg, "start_y_px", number_column<SaccadeEvent, double>(sc, [](auto& e) { return e.start_y_px; }), "px");
  h5::write_column(sg, "end_x_px", number_column<SaccadeEvent, double>(sc, [](auto& e) { return e.end_x_px; }), "px");
  h5::write_column(sg, "end_y_px", number_column<SaccadeEvent, double>(sc, [](auto& e) { return e.end_y_px; }), "px");
  h5::write_column(sg, "amplitude_deg", number_column<SaccadeEvent, double>(sc, [](auto& e) { return e.amplitude_deg; }), "deg");
  h5::write_column(sg, "peak_velocity_deg_s", number_column<SaccadeEvent, double>(sc, [](auto& e) { return e.peak_velocity_deg_s; }), "deg/s");
  h5::write_column(sg, "direction_deg", number_column<SaccadeEvent, double>(sc, [](auto& e) { return e.direction_deg; }), "deg");

  H5::Group bg = h5::create_group(g, "blinks");
  const auto& bl = ev.blinks;
  h5::write_strings(bg, "trial", trial_column(bl, trial_of));
  h5::write_strings(bg, "eye", trial_column(bl, eye_of));
  h5::write_column(bg, "start_us", number_column<BlinkEvent, std::int64_t>(bl, [](auto& e) { return e.start_us; }), "us");
  h5::write_column(bg, "end_us", number_column<BlinkEvent, std::int64_t>(bl, [](auto& e) { return e.end_us; }), "us");

  // Per trial, the eye used and what the detector set from the trial's own
  // data: a column per name, NaN for a trial where it set nothing.
  H5::Group tg = h5::create_group(g, "trials");
  const auto& tr = ev.trials;
  h5::write_strings(tg, "trial", trial_column(tr, trial_of));
  h5::write_strings(tg, "eye", trial_column(tr, eye_of));
  std::set<std::string> names;
  for (const auto& t : tr) {
    for (const auto& [name, value] : t.fitted) names.insert(name);
  }
  for (const auto& name : names) {
    std::vector<double> column;
    for (const auto& t : tr) {
      const auto it = t.fitted.find(name);
      column.push_back(it == t.fitted.end() ? std::numeric_limits<double>::quiet_NaN() : it->second);
    }
    h5::write_column(tg, name, column, unit_in_name(name));
  }
}

H5::Group StudyStoreWriter::group(const std::string& path) {
  H5::Group g = impl_->file.openGroup("/");
  std::size_t start = 0;
  while (start < path.size()) {
    const auto slash = path.find('/', start);
    const std::string part = path.substr(start, slash == std::string::npos ? std::string::npos : slash - start);
    if (!part.empty()) g = h5::open_or_create_group(g, part);
    if (slash == std::string::npos) break;
    start = slash + 1;
  }
  return g;
}

void StudyStoreWriter::write_stage_provenance(const std::string& stage, const StageProvenance& p) {
  H5::Group root = impl_->file.openGroup("/");
  H5::Group prov = h5::open_or_create_group(root, "provenance");
  H5::Group stages = h5::open_or_create_group(prov, "stages");
  H5::Group g = h5::create_group(stages, stage);
  h5::set_attr(g, "gazemill_version", p.tool_version);
  h5::set_attr(g, "protocol_text", p.protocol_text);
  h5::set_attr(g, "protocol_sha256", p.protocol_sha256);
  h5::set_attr(g, "created_utc", p.created_utc);
  h5::set_attr(g, "settings", p.settings_json);
  h5::set_attr(g, "protocol_path", p.protocol_path);
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

bool StudyStoreReader::has_events(const std::string& id) const {
  h5::QuietErrors quiet;
  return h5::exists(impl_->file.openGroup("/"), "recordings/" + id + "/events");
}

std::vector<SampleLabel> StudyStoreReader::read_sample_labels(const std::string& id) const {
  h5::QuietErrors quiet;
  const std::string base = "recordings/" + id + "/events";
  H5::Group g = impl_->group(base);
  std::vector<SampleLabel> out;
  for (auto c : h5::read_column<std::uint8_t>(g, "sample_label")) {
    if (c > static_cast<std::uint8_t>(SampleLabel::other)) impl_->fail(base + "/sample_label", "label code " + std::to_string(c) + " is not 0..5");
    out.push_back(static_cast<SampleLabel>(c));
  }
  return out;
}

DetectedEvents StudyStoreReader::read_events(const std::string& id) const {
  h5::QuietErrors quiet;
  const std::string base = "recordings/" + id + "/events";
  H5::Group g = impl_->group(base);
  DetectedEvents ev;
  auto eye = [](const std::string& s) { return s == "right" ? Eye::right : Eye::left; };
  try {
    H5::Group f = g.openGroup("fixations");
    const auto trial = h5::read_strings(f, "trial"), eyes = h5::read_strings(f, "eye");
    const auto start = h5::read_column<std::int64_t>(f, "start_us"), end = h5::read_column<std::int64_t>(f, "end_us");
    const auto x = h5::read_column<double>(f, "x_px"), y = h5::read_column<double>(f, "y_px");
    const auto xm = h5::read_column<double>(f, "x_median_px"), ym = h5::read_column<double>(f, "y_median_px");
    const auto xd = h5::read_column<double>(f, "x_deg"), yd = h5::read_column<double>(f, "y_deg");
    const auto disp = h5::read_column<double>(f, "dispersion_deg");
    for (std::size_t i = 0; i < trial.size(); ++i) {
      ev.fixations.push_back({trial[i], eye(eyes[i]), start[i], end[i], x[i], y[i], xm[i], ym[i], xd[i], yd[i], disp[i]});
    }
    H5::Group s = g.openGroup("saccades");
    const auto st = h5::read_strings(s, "trial"), se = h5::read_strings(s, "eye");
    const auto ss = h5::read_column<std::int64_t>(s, "start_us"), sn = h5::read_column<std::int64_t>(s, "end_us");
    const auto sx0 = h5::read_column<double>(s, "start_x_px"), sy0 = h5::read_column<double>(s, "start_y_px");
    const auto sx1 = h5::read_column<double>(s, "end_x_px"), sy1 = h5::read_column<double>(s, "end_y_px");
    const auto amp = h5::read_column<double>(s, "amplitude_deg"), pv = h5::read_column<double>(s, "peak_velocity_deg_s");
    const auto dir = h5::read_column<double>(s, "direction_deg");
    for (std::size_t i = 0; i < st.size(); ++i) {
      ev.saccades.push_back({st[i], eye(se[i]), ss[i], sn[i], sx0[i], sy0[i], sx1[i], sy1[i], amp[i], pv[i], dir[i]});
    }
    H5::Group b = g.openGroup("blinks");
    const auto bt = h5::read_strings(b, "trial"), be = h5::read_strings(b, "eye");
    const auto bs = h5::read_column<std::int64_t>(b, "start_us"), bn = h5::read_column<std::int64_t>(b, "end_us");
    for (std::size_t i = 0; i < bt.size(); ++i) ev.blinks.push_back({bt[i], eye(be[i]), bs[i], bn[i]});
    if (h5::exists(g, "trials")) {  // stores written before it have none
      H5::Group t = g.openGroup("trials");
      const auto tt = h5::read_strings(t, "trial"), te = h5::read_strings(t, "eye");
      for (std::size_t i = 0; i < tt.size(); ++i) ev.trials.push_back({tt[i], eye(te[i]), {}});
      for (const auto& name : h5::child_names(t)) {
        if (name == "trial" || name == "eye") continue;
        const auto values = h5::read_column<double>(t, name);
        for (std::size_t i = 0; i < values.size() && i < ev.trials.size(); ++i) {
          if (!std::isnan(values[i])) ev.trials[i].fitted[name] = values[i];
        }
      }
    }
  } catch (const H5::Exception& e) {
    impl_->fail(base, "damaged or incomplete events: " + e.getDetailMsg());
  }
  return ev;
}

bool StudyStoreReader::exists(const std::string& path) const {
  h5::QuietErrors quiet;
  return h5::exists(impl_->file.openGroup("/"), path);
}

H5::Group StudyStoreReader::group(const std::string& path) const { return impl_->group(path); }

const std::string& StudyStoreReader::path() const { return impl_->path; }

StageProvenance StudyStoreReader::stage_provenance(const std::string& stage) const {
  h5::QuietErrors quiet;
  H5::Group g = impl_->group("provenance/stages/" + stage);
  return {h5::get_string_attr(g, "gazemill_version"), h5::get_string_attr(g, "protocol_text"),
          h5::get_string_attr(g, "protocol_sha256"),  h5::get_string_attr(g, "created_utc"),
          h5::get_string_attr(g, "settings"),         h5::get_string_attr(g, "protocol_path")};
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
