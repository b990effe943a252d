#include "io/study_store.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>
#include <limits>
#include <map>
#include <optional>
#include <set>
#include <stdexcept>

#include <nlohmann/json.hpp>

#include "io/atomic_file.h"
#include "io/global_heap_check.h"
#include "io/hdf5_util.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace fs = std::filesystem;

// ---------------------------------------------------------------- writer ---

namespace {

// The file keeps its free-space map between openings, so that results
// replaced in place (a re-run of a later stage) leave no holes behind.
H5::FileCreatPropList creation_properties() {
  H5::FileCreatPropList p;
  H5Pset_file_space_strategy(p.getId(), H5F_FSPACE_STRATEGY_FSM_AGGR, 1, 1);
  return p;
}

H5::FileAccPropList access_properties() {
  H5::FileAccPropList p;
  H5Pset_libver_bounds(p.getId(), H5F_LIBVER_V110, H5F_LIBVER_V110);
  return p;
}

// Copies a file's bytes in the kernel (copy_file_range), falling back to read/write.
void copy_file(const std::string& from, const std::string& to) {
  const int in = ::open(from.c_str(), O_RDONLY | O_CLOEXEC);
  if (in < 0) throw InputError({from, 0, ""}, std::string("cannot open the store: ") + std::strerror(errno));
  const int out = ::open(to.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (out < 0) {
    const int e = errno;
    ::close(in);
    throw InputError({to, 0, ""}, std::string("cannot create the store's temporary file: ") + std::strerror(e));
  }
  struct stat st {};
  ::fstat(in, &st);
  off_t left = st.st_size;
  std::string failure;
  while (left > 0) {
    const ssize_t n = ::copy_file_range(in, nullptr, out, nullptr, static_cast<std::size_t>(left), 0);
    if (n > 0) {
      left -= n;
      continue;
    }
    if (n < 0 && (errno == EXDEV || errno == ENOSYS || errno == EINVAL || errno == EOPNOTSUPP)) {
      std::vector<char> buf(std::size_t{1} << 20);
      for (;;) {
        const ssize_t r = ::read(in, buf.data(), buf.size());
        if (r == 0) break;
        if (r < 0 || ::write(out, buf.data(), static_cast<std::size_t>(r)) != r) {
          failure = std::strerror(errno);
          break;
        }
      }
      left = 0;
      break;
    }
    failure = n == 0 ? "the store ended early" : std::strerror(errno);
    break;
  }
  const bool closed = ::close(out) == 0;
  ::close(in);
  if (!closed && failure.empty()) failure = std::strerror(errno);
  if (!failure.empty()) {
    std::remove(to.c_str());
    throw InputError({to, 0, ""}, "cannot copy the store to update it: " + failure);
  }
}

// A dataset holding a compressed column's chunks as they are (no re-compression).
void write_compressed_column(H5::Group& group, const CompressedColumn& c, int deflate_level) {
  static const std::map<ColumnType, H5::PredType> types = {
      {ColumnType::int64, H5::PredType::NATIVE_INT64}, {ColumnType::float32, H5::PredType::NATIVE_FLOAT}, {ColumnType::uint8, H5::PredType::NATIVE_UINT8}};
  const hsize_t rows = c.rows, unlimited = H5S_UNLIMITED;
  H5::DataSpace space(1, &rows, &unlimited);
  H5::DataSet ds = group.createDataSet(c.name, types.at(c.type), space, h5::chunked_props(c.chunk_rows, deflate_level));
  if (!c.unit.empty()) h5::set_attr(ds, "unit", c.unit);
  for (std::size_t k = 0; k < c.chunks.size(); ++k) {
    const hsize_t offset = static_cast<hsize_t>(k) * c.chunk_rows;
    if (H5Dwrite_chunk(ds.getId(), H5P_DEFAULT, 0, &offset, c.chunks[k].size(), c.chunks[k].data()) < 0) {
      throw std::runtime_error("cannot write a chunk of " + c.name);
    }
  }
}

}  // namespace

struct StudyStoreWriter::Impl {
  StoreWriteOptions options;
  H5::H5File file;
  H5::Group recordings;
};

StudyStoreWriter::StudyStoreWriter(std::string path, StoreWriteOptions options)
    : path_(std::move(path)), temp_path_(temporary_path_beside(path_)) {
  h5::QuietErrors quiet;
  try {
    impl_ = std::make_unique<Impl>();
    impl_->options = options;
    h5::note_file(path_, "writing");
    impl_->file = H5::H5File(temp_path_, H5F_ACC_TRUNC, creation_properties(), access_properties());
    H5::Group root = impl_->file.openGroup("/");
    h5::set_attr(root, "format", std::string(kStoreFormat));
    h5::set_attr(root, "format_version", kStoreFormatVersion);
    impl_->recordings = h5::create_group(root, "recordings");
  } catch (const H5::Exception& e) {
    impl_.reset();
    std::remove(temp_path_.c_str());
    throw InputError({path_, 0, ""}, "cannot create the store's temporary file " + temp_path_ + ": " + e.getDetailMsg());
  }
}

std::unique_ptr<StudyStoreWriter> StudyStoreWriter::update(const std::string& path, StoreWriteOptions options) {
  h5::QuietErrors quiet;
  { StudyStoreReader check(path); }  // a readable store of our format, or InputError
  std::unique_ptr<StudyStoreWriter> w(new StudyStoreWriter());
  w->path_ = path;
  w->temp_path_ = temporary_path_beside(path);
  copy_file(path, w->temp_path_);
  try {
    w->impl_ = std::make_unique<Impl>();
    w->impl_->options = options;
    h5::note_file(path, "writing");
    w->impl_->file = H5::H5File(w->temp_path_, H5F_ACC_RDWR, H5::FileCreatPropList::DEFAULT, access_properties());
    w->impl_->recordings = w->impl_->file.openGroup("/recordings");
    H5::Group root = w->impl_->file.openGroup("/");
    h5::set_attr(root, "format_version", kStoreFormatVersion);  // what it gains now is written as this version writes
  } catch (const H5::Exception& e) {
    w->impl_.reset();
    std::remove(w->temp_path_.c_str());
    throw InputError({path, 0, ""}, "cannot open the copy of the store to update it: " + e.getDetailMsg());
  }
  return w;
}

StudyStoreWriter::~StudyStoreWriter() {
  if (!committed_) {
    // After a failed write the C++ API's destructor prints its own complaint
    // to std::cerr; the error has been reported already, so it goes nowhere.
    std::ostringstream drop;
    std::streambuf* old = std::cerr.rdbuf(drop.rdbuf());
    try {
      impl_.reset();
    } catch (...) {
    }
    std::cerr.rdbuf(old);
    std::remove(temp_path_.c_str());
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

void copy_attributes(hid_t from, hid_t to) {
  hsize_t idx = 0;
  if (H5Aiterate2(from, H5_INDEX_NAME, H5_ITER_INC, &idx, copy_attribute, &to) < 0) throw std::runtime_error("cannot copy attributes");
}

}  // namespace

void StudyStoreWriter::add_linked_recording(const std::string& shard_path, const std::string& id) {
  h5::QuietErrors quiet;
  const fs::path here = fs::absolute(path_).parent_path();
  const fs::path shard = fs::absolute(shard_path).lexically_normal();
  const std::string rel = shard.lexically_relative(here).string();
  const std::string target = rel.empty() || rel.rfind("../../", 0) == 0 ? shard.string() : rel;
  check_global_heaps(shard_path);
  try {
    H5::H5File src(shard_path, H5F_ACC_RDONLY);
    H5::Group from = src.openGroup("/recordings/" + id);
    H5::Group to = h5::create_group(impl_->recordings, id);
    copy_attributes(from.getId(), to.getId());
    for (const auto& child : h5::child_names(from)) {
      if (child == "samples" || child == "events") continue;
      if (H5Ocopy(from.getId(), child.c_str(), to.getId(), child.c_str(), H5P_DEFAULT, H5P_DEFAULT) < 0) {
        throw std::runtime_error("cannot copy " + child);
      }
    }
    const std::string base = "/recordings/" + id;
    if (H5Lcreate_external(target.c_str(), (base + "/samples").c_str(), to.getId(), "samples", H5P_DEFAULT, H5P_DEFAULT) < 0) {
      throw std::runtime_error("cannot link the samples");
    }
    if (h5::exists(from, "events")) {
      H5::Group ev_from = from.openGroup("events");
      H5::Group ev_to = h5::create_group(to, "events");
      copy_attributes(ev_from.getId(), ev_to.getId());
      for (const auto& child : h5::child_names(ev_from)) {
        if (child == "sample_label") {
          if (H5Lcreate_external(target.c_str(), (base + "/events/sample_label").c_str(), ev_to.getId(), "sample_label", H5P_DEFAULT,
                                 H5P_DEFAULT) < 0) {
            throw std::runtime_error("cannot link the sample labels");
          }
        } else if (H5Ocopy(ev_from.getId(), child.c_str(), ev_to.getId(), child.c_str(), H5P_DEFAULT, H5P_DEFAULT) < 0) {
          throw std::runtime_error("cannot copy events/" + child);
        }
      }
    }
  } catch (const H5::Exception& e) {
    throw InputError({shard_path, 0, "/recordings/" + id}, "cannot join the recording to the study store: " + e.getDetailMsg());
  } catch (const std::runtime_error& e) {
    throw InputError({shard_path, 0, "/recordings/" + id}, std::string("cannot join the recording to the study store: ") + e.what());
  }
}

bool StudyStoreWriter::exists(const std::string& path) {
  h5::QuietErrors quiet;
  return h5::exists(impl_->file.openGroup("/"), path.starts_with('/') ? path.substr(1) : path);
}

void StudyStoreWriter::remove(const std::string& path) {
  if (!exists(path)) return;
  if (H5Ldelete(impl_->file.getId(), path.c_str(), H5P_DEFAULT) < 0) throw std::runtime_error("cannot remove " + path + " from the store");
}

void StudyStoreWriter::write_recording(const Recording& r, const SampleSummary& summary, const std::vector<CompressedColumn>& samples,
                                       const std::string& ingest_key) {
  H5::Group rec = h5::create_group(impl_->recordings, r.id);
  H5::Group sg = h5::create_group(rec, "samples");
  for (const auto& c : samples) write_compressed_column(sg, c, impl_->options.deflate_level);
  h5::set_attr(rec, "ingest_key", ingest_key);
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
  std::vector<std::string> ids;
  std::vector<Microseconds> starts, ends;
  std::set<std::string> variable_names, marker_names;
  for (const auto& t : r.trials) {
    ids.push_back(t.id);
    starts.push_back(t.start_us);
    ends.push_back(t.end_us);
    for (const auto& [k, v] : t.variables) variable_names.insert(k);
    for (const auto& [k, v] : t.markers) marker_names.insert(k);
  }
  h5::write_strings(tr, "id", ids);
  h5::write_column(tr, "start_us", starts, "us");
  h5::write_column(tr, "end_us", ends, "us");
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
  H5::Group g = h5::open_or_create_group(root, "provenance");
  remove("/provenance/inputs");
  remove("/provenance/repairs");
  h5::set_attr(g, "gazemill_version", p.tool_version);
  h5::set_attr(g, "protocol_path", p.protocol_path);
  h5::set_attr(g, "protocol_text", p.protocol_text);
  h5::set_attr(g, "protocol_sha256", p.protocol_sha256);
  h5::set_attr(g, "created_utc", p.created_utc);
  h5::set_attr(g, "shard", p.shard);
  if (!p.study_recordings.empty()) h5::set_attr(g, "study_recordings", nlohmann::json(p.study_recordings).dump());
  H5::Group in = h5::create_group(g, "inputs");
  std::vector<std::string> paths, hashes, recs;
  std::vector<std::uint64_t> sizes;
  std::vector<std::int64_t> modified;
  for (const auto& f : p.inputs) {
    paths.push_back(f.path);
    sizes.push_back(f.size_bytes);
    modified.push_back(f.modified_ns);
    hashes.push_back(f.sha256);
    recs.push_back(f.recording_id);
  }
  h5::write_strings(in, "path", paths);
  h5::write_column(in, "size_bytes", sizes, "bytes");
  h5::write_column(in, "modified_ns", modified, "ns");
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

void StudyStoreWriter::write_events(const std::string& id, const DetectedEvents& ev, const CompressedColumn& labels,
                                    const std::string& method, const std::string& parameters_json, const std::string& detect_key) {
  H5::Group rec = impl_->recordings.openGroup(id);
  H5::Group g = h5::create_group(rec, "events");
  h5::set_attr(g, "method", method);
  h5::set_attr(g, "parameters", parameters_json);
  h5::set_attr(g, "detect_key", detect_key);
  write_compressed_column(g, labels, impl_->options.deflate_level);

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
  h5::write_column(f, "pupil", number_column<FixationEvent, double>(fx, [](auto& e) { return e.pupil; }), "as recorded");

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

  H5::Group lg = h5::create_group(g, "losses");
  const auto& ls = ev.losses;
  h5::write_strings(lg, "trial", trial_column(ls, trial_of));
  h5::write_column(lg, "start_us", number_column<LossEvent, std::int64_t>(ls, [](auto& e) { return e.start_us; }), "us");
  h5::write_column(lg, "end_us", number_column<LossEvent, std::int64_t>(ls, [](auto& e) { return e.end_us; }), "us");

  // Per trial, the eye used, its sample counts and what the detector set
  // from the trial's own data: a column per name, NaN for a trial where it set nothing.
  H5::Group tg = h5::create_group(g, "trials");
  const auto& tr = ev.trials;
  h5::write_strings(tg, "trial", trial_column(tr, trial_of));
  h5::write_strings(tg, "eye", trial_column(tr, eye_of));
  h5::write_column(tg, "samples", number_column<TrialDetection, std::uint64_t>(tr, [](auto& t) { return t.samples; }));
  h5::write_column(tg, "missing_samples", number_column<TrialDetection, std::uint64_t>(tr, [](auto& t) { return t.missing_samples; }));
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

namespace {
const std::pair<SampleLabel, const char*> kTrackerKinds[] = {
    {SampleLabel::fixation, "fixations"}, {SampleLabel::saccade, "saccades"}, {SampleLabel::blink, "blinks"}};
}  // namespace

void StudyStoreWriter::write_tracker_events(const std::string& id, const std::vector<TrackerEvent>& events) {
  H5::Group rec = impl_->recordings.openGroup(id);
  H5::Group g = h5::create_group(rec, "tracker_events");
  h5::set_attr(g, "source", std::string("BIDS physio events"));
  for (const auto& [kind, name] : kTrackerKinds) {
    std::vector<std::string> eyes;
    std::vector<std::int64_t> start, end;
    for (const auto& e : events) {
      if (e.kind != kind) continue;
      eyes.push_back(to_string(e.eye));
      start.push_back(e.start_us);
      end.push_back(e.end_us);
    }
    H5::Group k = h5::create_group(g, name);
    h5::write_strings(k, "eye", eyes);
    h5::write_column(k, "start_us", start, "us");
    h5::write_column(k, "end_us", end, "us");
  }
}

void StudyStoreWriter::write_stage_record(const StageRecord& r) {
  const std::string path = std::string("provenance/stages/") + to_string(r.stage);
  remove("/" + path);
  H5::Group g = group(path);
  h5::set_attr(g, "key", r.key);
  h5::set_attr(g, "upstream_key", r.upstream_key);
  h5::set_attr(g, "settings", r.settings_json);
  h5::set_attr(g, "state", std::string(to_string(r.state)));
  h5::set_attr(g, "stale_reason", r.stale_reason);
  h5::set_attr(g, "created_utc", r.created_utc);
  h5::set_attr(g, "gazemill_version", r.tool_version);
  h5::set_attr(g, "protocol_text", r.protocol_text);
  h5::set_attr(g, "protocol_path", r.protocol_path);
  if (!r.warnings.empty()) h5::set_attr(g, "warnings", nlohmann::json(r.warnings).dump());
}

void StudyStoreWriter::write_recording_warnings(const std::string& id, const std::vector<std::string>& warnings) {
  H5::Group g = group("recordings/" + id);
  h5::set_attr(g, "warnings", nlohmann::json(warnings).dump());
}

void StudyStoreWriter::mark_stage_stale(Stage stage, const std::string& reason) {
  const std::string path = std::string("provenance/stages/") + to_string(stage);
  if (!exists(path)) return;
  H5::Group g = group(path);
  h5::set_attr(g, "state", std::string(to_string(StageState::stale)));
  h5::set_attr(g, "stale_reason", reason);
}

void StudyStoreWriter::commit() {
  try {
    impl_->recordings.close();
    impl_->file.flush(H5F_SCOPE_GLOBAL);
    impl_->file.close();
  } catch (const H5::Exception& e) {
    throw InputError({path_, 0, ""}, "cannot finish writing the store's temporary file " + temp_path_ + ": " + e.getDetailMsg());
  }
  impl_.reset();
  std::error_code ec;
  fs::rename(temp_path_, path_, ec);
  if (ec) {
    std::remove(temp_path_.c_str());
    throw InputError({path_, 0, ""}, "cannot move the finished store into place: " + ec.message());
  }
  committed_ = true;
  trust_global_heaps(path_);  // written here, from stores read through check_global_heaps
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
  h5::note_file(path, "reading");
  check_global_heaps(path);  // HDF5 would crash on a damaged one instead of saying so
  try {
    impl_->file = H5::H5File(path, H5F_ACC_RDONLY);
  } catch (const H5::Exception&) {
    // A protocol handed where the store belongs is the likeliest mix-up: say so.
    std::ifstream in(path, std::ios::binary);
    char head[256] = {};
    in.read(head, sizeof head);
    const std::string start(head, static_cast<std::size_t>(in.gcount()));
    const bool text = !start.empty() && std::all_of(start.begin(), start.end(), [](char c) {
      return c == '\n' || c == '\r' || c == '\t' || static_cast<unsigned char>(c) >= 32;
    });
    throw InputError({path, 0, ""}, text ? "is a text file (a protocol?), not a study store: this command takes the store (.gzm.h5) "
                                           "that gazemill run or ingest wrote"
                                         : "not an HDF5 file; expected a gazemill study store");
  }
  H5::Group root = impl_->file.openGroup("/");
  if (!h5::has_attr(root, "format") || h5::get_string_attr(root, "format") != kStoreFormat) {
    throw InputError({path, 0, "/"}, std::string("not a gazemill study store (attribute format != ") + kStoreFormat + ")");
  }
  const auto version = h5::get_int_attr(root, "format_version");
  if (version < kOldestReadableStoreFormat || version > kStoreFormatVersion) {
    throw InputError({path, 0, "/"}, "store format version " + std::to_string(version) + " is not one of the versions " +
                                         std::to_string(kOldestReadableStoreFormat) + " to " + std::to_string(kStoreFormatVersion) +
                                         " this gazemill reads; run the study again with this gazemill to make a store it reads");
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
  p.shard = h5::has_attr(g, "shard") ? h5::get_string_attr(g, "shard") : "";
  if (h5::has_attr(g, "study_recordings")) {
    const nlohmann::json j = nlohmann::json::parse(h5::get_string_attr(g, "study_recordings"), nullptr, false);
    if (j.is_array()) {
      for (const auto& x : j) {
        if (x.is_string()) p.study_recordings.push_back(x.get<std::string>());
      }
    }
  }
  H5::Group in = g.openGroup("inputs");
  const auto paths = h5::read_strings(in, "path");
  const auto sizes = h5::read_column<std::uint64_t>(in, "size_bytes");
  const auto modified = h5::read_column<std::int64_t>(in, "modified_ns");
  const auto hashes = h5::read_strings(in, "sha256");
  const auto recs = h5::read_strings(in, "recording");
  for (std::size_t i = 0; i < paths.size(); ++i) p.inputs.push_back({paths[i], sizes[i], hashes[i], recs[i], modified.at(i)});
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
    if (c > static_cast<std::uint8_t>(SampleLabel::pursuit)) impl_->fail(base + "/sample_label", "label code " + std::to_string(c) + " is not 0..6");
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
    const auto pupil = h5::read_column<double>(f, "pupil");
    for (std::size_t i = 0; i < trial.size(); ++i) {
      ev.fixations.push_back({trial[i], eye(eyes[i]), start[i], end[i], x[i], y[i], xm[i], ym[i], xd[i], yd[i], disp[i], pupil.at(i)});
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
    H5::Group l = g.openGroup("losses");
    const auto lt = h5::read_strings(l, "trial");
    const auto ls = h5::read_column<std::int64_t>(l, "start_us"), ln = h5::read_column<std::int64_t>(l, "end_us");
    for (std::size_t i = 0; i < lt.size(); ++i) ev.losses.push_back({lt[i], ls[i], ln[i]});
    {
      H5::Group t = g.openGroup("trials");
      const auto tt = h5::read_strings(t, "trial"), te = h5::read_strings(t, "eye");
      const auto ts = h5::read_column<std::uint64_t>(t, "samples"), tm = h5::read_column<std::uint64_t>(t, "missing_samples");
      for (std::size_t i = 0; i < tt.size(); ++i) ev.trials.push_back({tt[i], eye(te[i]), {}, ts.at(i), tm.at(i)});
      for (const auto& name : h5::child_names(t)) {
        if (name == "trial" || name == "eye" || name == "samples" || name == "missing_samples") continue;
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

bool StudyStoreReader::has_tracker_events(const std::string& id) const {
  h5::QuietErrors quiet;
  return h5::exists(impl_->file.openGroup("/"), "recordings/" + id + "/tracker_events");
}

std::vector<TrackerEvent> StudyStoreReader::read_tracker_events(const std::string& id) const {
  h5::QuietErrors quiet;
  const std::string base = "recordings/" + id + "/tracker_events";
  H5::Group g = impl_->group(base);
  std::vector<TrackerEvent> out;
  try {
    for (const auto& [kind, name] : kTrackerKinds) {
      H5::Group k = g.openGroup(name);
      const auto eyes = h5::read_strings(k, "eye");
      const auto start = h5::read_column<std::int64_t>(k, "start_us"), end = h5::read_column<std::int64_t>(k, "end_us");
      for (std::size_t i = 0; i < eyes.size(); ++i) {
        out.push_back({kind, eyes[i] == "right" ? Eye::right : Eye::left, start.at(i), end.at(i)});
      }
    }
  } catch (const H5::Exception& e) {
    impl_->fail(base, "damaged or incomplete tracker events: " + e.getDetailMsg());
  }
  std::stable_sort(out.begin(), out.end(), [](const TrackerEvent& a, const TrackerEvent& b) { return a.start_us < b.start_us; });
  return out;
}

bool StudyStoreReader::exists(const std::string& path) const {
  h5::QuietErrors quiet;
  return h5::exists(impl_->file.openGroup("/"), path);
}

H5::Group StudyStoreReader::group(const std::string& path) const { return impl_->group(path); }

const std::string& StudyStoreReader::path() const { return impl_->path; }

std::optional<StageRecord> StudyStoreReader::stage_record(Stage stage) const {
  h5::QuietErrors quiet;
  const std::string path = std::string("provenance/stages/") + to_string(stage);
  if (!exists(path)) return std::nullopt;
  H5::Group g = impl_->file.openGroup(path);
  StageRecord r;
  r.stage = stage;
  auto text = [&](const char* name) { return h5::has_attr(g, name) ? h5::get_string_attr(g, name) : std::string(); };
  r.key = text("key");
  r.upstream_key = text("upstream_key");
  r.settings_json = text("settings");
  r.state = text("state") == "stale" ? StageState::stale : StageState::current;
  r.stale_reason = text("stale_reason");
  r.created_utc = text("created_utc");
  r.tool_version = text("gazemill_version");
  r.protocol_text = text("protocol_text");
  r.protocol_path = text("protocol_path");
  if (const std::string w = text("warnings"); !w.empty()) {
    const nlohmann::json j = nlohmann::json::parse(w, nullptr, false);
    if (j.is_array()) {
      for (const auto& x : j) {
        if (x.is_string()) r.warnings.push_back(x.get<std::string>());
      }
    }
  }
  return r;
}

std::string StudyStoreReader::recording_attribute(const std::string& id, const std::string& name) const {
  h5::QuietErrors quiet;
  H5::Group rec = impl_->group("recordings/" + id);
  return h5::has_attr(rec, name) ? h5::get_string_attr(rec, name) : std::string();
}

std::string StudyStoreReader::events_key(const std::string& id) const {
  h5::QuietErrors quiet;
  if (!has_events(id)) return "";
  H5::Group g = impl_->file.openGroup("recordings/" + id + "/events");
  return h5::has_attr(g, "detect_key") ? h5::get_string_attr(g, "detect_key") : std::string();
}

std::vector<CompressedColumn> StudyStoreReader::read_sample_chunks(const std::string& id) const {
  h5::QuietErrors quiet;
  const std::string base = "recordings/" + id + "/samples";
  H5::Group g = impl_->group(base);
  const std::string eyes = h5::get_string_attr(impl_->group("recordings/" + id), "eyes");
  std::vector<std::pair<std::string, ColumnType>> names = {{"time_us", ColumnType::int64}};
  for (const char* eye : {"left", "right"}) {
    if (eyes.find(eye) == std::string::npos) continue;
    const std::string p = std::string(eye) + "_";
    names.insert(names.end(), {{p + "x_px", ColumnType::float32}, {p + "y_px", ColumnType::float32},
                               {p + "pupil", ColumnType::float32}, {p + "valid", ColumnType::uint8}});
  }
  std::vector<CompressedColumn> out;
  for (const auto& [name, type] : names) {
    CompressedColumn c;
    c.name = name;
    c.type = type;
    try {
      H5::DataSet ds = g.openDataSet(name);
      hsize_t rows = 0;
      ds.getSpace().getSimpleExtentDims(&rows);
      H5::DSetCreatPropList plist = ds.getCreatePlist();
      hsize_t chunk = 0;
      if (plist.getLayout() != H5D_CHUNKED || plist.getChunk(1, &chunk) != 1 || plist.getNfilters() != 2) {
        impl_->fail(base + "/" + name, "not stored as gazemill writes samples (shuffled, deflated chunks)");
      }
      c.rows = rows;
      c.chunk_rows = static_cast<std::size_t>(chunk);
      if (h5::has_attr(ds, "unit")) c.unit = h5::get_string_attr(ds, "unit");
      for (hsize_t first = 0; first < rows; first += chunk) {
        hsize_t bytes = 0;
        if (H5Dget_chunk_storage_size(ds.getId(), &first, &bytes) < 0) impl_->fail(base + "/" + name, "a chunk cannot be found");
        std::vector<char> buf(bytes);
        std::uint32_t filters = 0;
        if (H5Dread_chunk(ds.getId(), H5P_DEFAULT, &first, &filters, buf.data()) < 0 || filters != 0) {
          impl_->fail(base + "/" + name, "a chunk cannot be read");
        }
        c.chunks.push_back(std::move(buf));
      }
    } catch (const H5::Exception& e) {
      impl_->fail(base + "/" + name, "damaged or incomplete samples: " + e.getDetailMsg());
    }
    out.push_back(std::move(c));
  }
  return out;
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
    r.trials.resize(ids.size());
    for (std::size_t i = 0; i < ids.size(); ++i) {
      r.trials[i].id = ids[i];
      r.trials[i].start_us = starts[i];
      r.trials[i].end_us = ends[i];
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

std::vector<std::string> recording_warnings(const StudyStoreReader& store, const std::string& id) {
  std::vector<std::string> out;
  const std::string text = store.recording_attribute(id, "warnings");
  if (text.empty()) return out;
  const nlohmann::json j = nlohmann::json::parse(text, nullptr, false);
  if (!j.is_array()) return out;
  for (const auto& x : j) {
    if (x.is_string()) out.push_back(x.get<std::string>());
  }
  return out;
}

}  // namespace gazemill
