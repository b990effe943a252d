#include "io/hdf5_util.h"

#include <algorithm>
#include <cstring>

#include "io/chunk_compressor.h"

namespace gazemill::h5 {

QuietErrors::QuietErrors() {
  H5Eget_auto2(H5E_DEFAULT, &func_, &data_);
  H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
}
QuietErrors::~QuietErrors() { H5Eset_auto2(H5E_DEFAULT, func_, data_); }

void library_start() {
  H5dont_atexit();
  H5::H5Library::dontAtExit();
  H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
  H5::Exception::dontPrint();
}

void library_finish() { H5close(); }

namespace {
herr_t innermost(unsigned n, const H5E_error2_t* e, void* out) {
  auto* s = static_cast<std::string*>(out);
  const std::string desc = e->desc ? e->desc : "";
  // The file driver names the system's reason: "... error message = 'No space left on device' ...".
  const auto at = desc.find("error message = '");
  if (at != std::string::npos) {
    const auto start = at + 17;
    *s = desc.substr(start, desc.find('\'', start) - start);
    return 1;  // found: stop walking
  }
  if (n == 0 && s->empty()) *s = desc;
  return 0;
}
}  // namespace

namespace {
// Per thread: the report reads the store on a thread of its own while the
// tables are read on the main one (HDF5 serialises the two itself).
thread_local std::string noted_path;
thread_local const char* noted_purpose = "";
}  // namespace

bool library_serialises_threads() {
  hbool_t yes = 0;
  return H5is_library_threadsafe(&yes) >= 0 && yes;
}

void quiet_this_thread() { H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr); }

void note_file(const std::string& path, const char* purpose) {
  noted_path = path;
  noted_purpose = purpose;
}
std::string last_file() { return noted_path; }
std::string last_file_purpose() { return noted_purpose; }

std::string last_error_reason() {
  std::string out;
  H5Ewalk2(H5E_DEFAULT, H5E_WALK_DOWNWARD, innermost, &out);
  return out;
}

template <> H5::PredType native_type<double>() { return H5::PredType::NATIVE_DOUBLE; }
template <> H5::PredType native_type<float>() { return H5::PredType::NATIVE_FLOAT; }
template <> H5::PredType native_type<std::int64_t>() { return H5::PredType::NATIVE_INT64; }
template <> H5::PredType native_type<std::uint64_t>() { return H5::PredType::NATIVE_UINT64; }
template <> H5::PredType native_type<std::int32_t>() { return H5::PredType::NATIVE_INT32; }
template <> H5::PredType native_type<std::uint32_t>() { return H5::PredType::NATIVE_UINT32; }
template <> H5::PredType native_type<std::uint8_t>() { return H5::PredType::NATIVE_UINT8; }

H5::Group create_group(H5::Group& parent, const std::string& name) {
  H5::PropList gcpl(H5P_GROUP_CREATE);
  H5Pset_obj_track_times(gcpl.getId(), 0);
  hid_t id = H5Gcreate2(parent.getId(), name.c_str(), H5P_DEFAULT, gcpl.getId(), H5P_DEFAULT);
  if (id < 0) throw H5::GroupIException("create_group", "cannot create group " + name);
  // H5::Group(id) takes a reference of its own; without this one's release the
  // group stays open, and so does the file after it is "closed".
  H5::Group g(id);
  H5Idec_ref(id);
  return g;
}

bool exists(const H5::Group& parent, const std::string& path) {
  // Walk component by component: H5Lexists fails on a missing intermediate.
  std::string prefix;
  std::size_t start = 0;
  while (start <= path.size()) {
    const std::size_t slash = path.find('/', start);
    prefix = path.substr(0, slash == std::string::npos ? path.size() : slash);
    if (H5Lexists(parent.getId(), prefix.c_str(), H5P_DEFAULT) <= 0) return false;
    if (slash == std::string::npos) break;
    start = slash + 1;
  }
  return true;
}

H5::Group open_or_create_group(H5::Group& parent, const std::string& name) {
  if (exists(parent, name)) return parent.openGroup(name);
  return create_group(parent, name);
}

// Derived columns (events, cleaning, measures) are deflated at level 1: a
// quarter quicker than level 4 with HDF5's own zlib filter, for a store 0.4 %
// larger (measured on a 10-participant study). They are compressed here by
// the samples' compressor and written as finished chunks: HDF5's zlib at
// dataset close took more than twice as long (profiled on a 10-participant run).
constexpr int kDerivedDeflateLevel = 1;

namespace {
// Rows [0, n) of `data` (elements of `element_size` bytes) as the chunks of a
// dataset whose filters are (shuffle when `shuffle`) then deflate at
// kDerivedDeflateLevel: the bytes HDF5's filters would read back.
void write_whole_chunks(const H5::DataSet& ds, const char* data, hsize_t n, std::size_t element_size, hsize_t chunk_rows, bool shuffle) {
  std::vector<char> last;
  for (hsize_t first = 0; first < n; first += chunk_rows) {
    const hsize_t rows = std::min(chunk_rows, n - first);
    const char* from = data + first * element_size;
    if (rows < chunk_rows) {  // chunks are whole; the padding lies beyond the extent
      last.assign(chunk_rows * element_size, '\0');
      std::memcpy(last.data(), from, rows * element_size);
      from = last.data();
    }
    const std::vector<char> packed =
        shuffle_and_deflate(from, chunk_rows * element_size, shuffle ? element_size : 1, kDerivedDeflateLevel);
    if (H5Dwrite_chunk(ds.getId(), H5P_DEFAULT, 0, &first, packed.size(), packed.data()) < 0) {
      throw H5::DataSetIException("write_whole_chunks", "cannot write a compressed chunk");
    }
  }
}
}  // namespace

H5::DSetCreatPropList chunked_props(hsize_t chunk_rows, int deflate_level) {
  H5::DSetCreatPropList p;
  p.setChunk(1, &chunk_rows);
  p.setShuffle();
  p.setDeflate(deflate_level);
  H5Pset_obj_track_times(p.getId(), 0);
  return p;
}

namespace {
H5::Attribute fresh_attr(H5::H5Object& obj, const std::string& name, const H5::DataType& type,
                         const H5::DataSpace& space) {
  if (obj.attrExists(name)) obj.removeAttr(name);
  return obj.createAttribute(name, type, space);
}
H5::StrType utf8_string() {
  H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
  t.setCset(H5T_CSET_UTF8);
  return t;
}
}  // namespace

void set_attr(H5::H5Object& obj, const std::string& name, const std::string& value) {
  const H5::StrType t = utf8_string();
  H5::Attribute a = fresh_attr(obj, name, t, H5::DataSpace(H5S_SCALAR));
  const char* p = value.c_str();
  a.write(t, &p);
}
void set_attr(H5::H5Object& obj, const std::string& name, double value) {
  fresh_attr(obj, name, H5::PredType::NATIVE_DOUBLE, H5::DataSpace(H5S_SCALAR)).write(H5::PredType::NATIVE_DOUBLE, &value);
}
void set_attr(H5::H5Object& obj, const std::string& name, std::int64_t value) {
  fresh_attr(obj, name, H5::PredType::NATIVE_INT64, H5::DataSpace(H5S_SCALAR)).write(H5::PredType::NATIVE_INT64, &value);
}
void set_attr(H5::H5Object& obj, const std::string& name, std::uint64_t value) {
  fresh_attr(obj, name, H5::PredType::NATIVE_UINT64, H5::DataSpace(H5S_SCALAR)).write(H5::PredType::NATIVE_UINT64, &value);
}

bool has_attr(const H5::H5Object& obj, const std::string& name) { return obj.attrExists(name); }

std::string get_string_attr(const H5::H5Object& obj, const std::string& name) {
  H5::Attribute a = obj.openAttribute(name);
  std::string out;
  a.read(a.getStrType(), out);
  return out;
}
double get_double_attr(const H5::H5Object& obj, const std::string& name) {
  double v = 0;
  obj.openAttribute(name).read(H5::PredType::NATIVE_DOUBLE, &v);
  return v;
}
std::int64_t get_int_attr(const H5::H5Object& obj, const std::string& name) {
  std::int64_t v = 0;
  obj.openAttribute(name).read(H5::PredType::NATIVE_INT64, &v);
  return v;
}

template <typename T>
void write_column(H5::Group& group, const std::string& name, const std::vector<T>& values, const std::string& unit) {
  const hsize_t n = values.size();
  const hsize_t maxdims = H5S_UNLIMITED;
  H5::DataSpace space(1, &n, &maxdims);
  const hsize_t chunk = std::clamp<hsize_t>(n, 1, 1 << 16);
  H5::DataSet ds = group.createDataSet(name, native_type<T>(), space, chunked_props(chunk, kDerivedDeflateLevel));
  write_whole_chunks(ds, reinterpret_cast<const char*>(values.data()), n, sizeof(T), chunk, true);
  if (!unit.empty()) set_attr(ds, "unit", unit);
}

// A type-conversion buffer sized to the strings: by default HDF5 zero-fills
// 1 MiB for every read or write that converts (a third of an ingest's page
// faults once, and of `export`'s instructions).
H5::DSetMemXferPropList small_conversion_buffer(hsize_t n) {
  H5::DSetMemXferPropList xfer;
  const std::size_t bytes = std::max<std::size_t>(4096, static_cast<std::size_t>(n) * 32);
  H5Pset_buffer(xfer.getId(), std::min<std::size_t>(bytes, std::size_t{1} << 20), nullptr, nullptr);
  return xfer;
}

void write_strings(H5::Group& group, const std::string& name, const std::vector<std::string>& values) {
  const hsize_t n = values.size();
  const hsize_t maxdims = H5S_UNLIMITED;
  H5::DataSpace space(1, &n, &maxdims);
  const hsize_t chunk = std::clamp<hsize_t>(n, 1, 1 << 12);
  H5::DSetCreatPropList p;
  p.setChunk(1, &chunk);
  p.setDeflate(kDerivedDeflateLevel);
  H5Pset_obj_track_times(p.getId(), 0);
  // Fixed-length (null-padded) when the longest value is not far beyond the
  // rest: read back with one copy, where variable-length strings cost a heap
  // lookup each (most of what reading a store's tables took). Columns with
  // a few long values (message texts) stay variable-length.
  std::size_t longest = 1, total = 0;
  for (const auto& v : values) {
    longest = std::max(longest, v.size());
    total += v.size();
  }
  if (static_cast<std::size_t>(n) * longest <= 8 * total + (std::size_t{1} << 16)) {
    H5::StrType t(H5::PredType::C_S1, longest);
    t.setCset(H5T_CSET_UTF8);
    t.setStrpad(H5T_STR_NULLPAD);
    H5::DataSet ds = group.createDataSet(name, t, space, p);
    std::vector<char> packed(static_cast<std::size_t>(n) * longest, '\0');
    for (std::size_t i = 0; i < values.size(); ++i) std::memcpy(packed.data() + i * longest, values[i].data(), values[i].size());
    write_whole_chunks(ds, packed.data(), n, longest, chunk, false);
    return;
  }
  const H5::StrType t = utf8_string();
  H5::DataSet ds = group.createDataSet(name, t, space, p);
  std::vector<const char*> ptrs;
  ptrs.reserve(values.size());
  for (const auto& v : values) ptrs.push_back(v.c_str());
  if (n > 0) ds.write(ptrs.data(), t, H5::DataSpace::ALL, H5::DataSpace::ALL, small_conversion_buffer(n));
}

namespace {
// A whole 1-D dataset whose chunks are (shuffle, then) deflate, as this
// program writes them: its chunks read as stored and inflated here (ISA-L),
// several times quicker than through HDF5's zlib filter. False, with nothing
// promised about `out`, for any other layout, filters or file type, and for
// a chunk stored without its filters; the caller then reads through HDF5.
bool read_whole_chunks(const H5::DataSet& ds, const H5::DataType& memory_type, char* out, hsize_t n, std::size_t element_size) {
  const hid_t id = ds.getId();
  const hid_t file_type = H5Dget_type(id);
  const bool same_type = file_type >= 0 && H5Tequal(file_type, memory_type.getId()) > 0 && H5Tget_size(file_type) == element_size;
  if (file_type >= 0) H5Tclose(file_type);
  if (!same_type) return false;
  const hid_t dcpl = H5Dget_create_plist(id);
  if (dcpl < 0) return false;
  hsize_t chunk_rows = 0;
  bool ok = H5Pget_layout(dcpl) == H5D_CHUNKED && H5Pget_chunk(dcpl, 1, &chunk_rows) == 1 && chunk_rows > 0;
  bool shuffle = false;
  const int filters = ok ? H5Pget_nfilters(dcpl) : -1;
  if (filters == 2 || filters == 1) {
    unsigned flags = 0;
    std::size_t nelmts = 0;
    unsigned values[8];
    const H5Z_filter_t first = H5Pget_filter2(dcpl, 0, &flags, &nelmts, values, 0, nullptr, nullptr);
    nelmts = 0;
    const H5Z_filter_t second = filters == 2 ? H5Pget_filter2(dcpl, 1, &flags, &nelmts, values, 0, nullptr, nullptr) : H5Z_FILTER_NONE;
    shuffle = filters == 2;
    ok = ok && (filters == 2 ? first == H5Z_FILTER_SHUFFLE && second == H5Z_FILTER_DEFLATE : first == H5Z_FILTER_DEFLATE);
  } else {
    ok = false;
  }
  H5Pclose(dcpl);
  if (!ok) return false;
  const std::size_t whole = static_cast<std::size_t>(chunk_rows) * element_size;
  std::vector<char> stored, last;
  for (hsize_t first = 0; first < n; first += chunk_rows) {
    hsize_t bytes = 0;
    if (H5Dget_chunk_storage_size(id, &first, &bytes) < 0 || bytes == 0) return false;  // unwritten: fill values
    if (bytes > whole + whole / 8 + 4096) return false;  // more than deflate can make of a chunk: damaged; HDF5 says so
    stored.resize(static_cast<std::size_t>(bytes));
    uint32_t mask = 0;
    if (H5Dread_chunk(id, H5P_DEFAULT, &first, &mask, stored.data()) < 0 || mask != 0) return false;
    const hsize_t rows = std::min(chunk_rows, n - first);
    char* to = out + first * element_size;
    if (rows < chunk_rows) {  // the last chunk: whole in the file, partly beyond the extent
      last.resize(whole);
      to = last.data();
    }
    if (!inflate_and_unshuffle(stored.data(), stored.size(), to, whole, shuffle ? element_size : 1)) return false;
    if (rows < chunk_rows) std::memcpy(out + first * element_size, last.data(), rows * element_size);
  }
  return true;
}
}  // namespace

template <typename T>
std::vector<T> read_column(const H5::Group& group, const std::string& name) {
  H5::DataSet ds = group.openDataSet(name);
  hsize_t n = 0;
  ds.getSpace().getSimpleExtentDims(&n);
  std::vector<T> out(n);
  if (n > 0 && !read_whole_chunks(ds, native_type<T>(), reinterpret_cast<char*>(out.data()), n, sizeof(T))) {
    ds.read(out.data(), native_type<T>());
  }
  return out;
}

template <typename T>
std::vector<T> read_column_range(const H5::Group& group, const std::string& name, hsize_t first, hsize_t count) {
  H5::DataSet ds = group.openDataSet(name);
  H5::DataSpace file_space = ds.getSpace();
  std::vector<T> out(count);
  if (count == 0) return out;
  file_space.selectHyperslab(H5S_SELECT_SET, &count, &first);
  H5::DataSpace mem_space(1, &count);
  ds.read(out.data(), native_type<T>(), mem_space, file_space);
  return out;
}

std::vector<std::string> read_strings(const H5::DataSet& ds) {
  const auto n = static_cast<hsize_t>(ds.getSpace().getSimpleExtentNpoints());
  std::vector<std::string> out;
  out.reserve(n);
  const H5::StrType file_type = ds.getStrType();
  if (!file_type.isVariableStr()) {
    const std::size_t size = file_type.getSize();
    H5::StrType t(H5::PredType::C_S1, size);
    t.setCset(file_type.getCset());
    t.setStrpad(file_type.getStrpad());
    std::vector<char> packed(static_cast<std::size_t>(n) * size);
    if (n > 0 && !read_whole_chunks(ds, t, packed.data(), n, size)) ds.read(packed.data(), t);
    for (std::size_t i = 0; i < n; ++i) {
      const char* p = packed.data() + i * size;
      out.emplace_back(p, strnlen(p, size));
    }
    return out;
  }
  std::vector<char*> ptrs(n, nullptr);
  const H5::StrType t = utf8_string();
  if (n > 0) ds.read(ptrs.data(), t, H5::DataSpace::ALL, H5::DataSpace::ALL, small_conversion_buffer(n));
  for (char* p : ptrs) out.emplace_back(p ? p : "");
  if (n > 0) {
    H5::DataSpace space = ds.getSpace();
    H5Dvlen_reclaim(t.getId(), space.getId(), H5P_DEFAULT, ptrs.data());
  }
  return out;
}

std::vector<std::string> read_strings(const H5::Group& group, const std::string& name) { return read_strings(group.openDataSet(name)); }

std::vector<std::string> child_names(const H5::Group& group) {
  std::vector<std::string> out;
  for (hsize_t i = 0; i < group.getNumObjs(); ++i) out.push_back(group.getObjnameByIdx(i));
  std::sort(out.begin(), out.end());
  return out;
}

#define GAZEMILL_INSTANTIATE(T)                                                                     \
  template void write_column<T>(H5::Group&, const std::string&, const std::vector<T>&, const std::string&); \
  template std::vector<T> read_column<T>(const H5::Group&, const std::string&);                     \
  template std::vector<T> read_column_range<T>(const H5::Group&, const std::string&, hsize_t, hsize_t);
GAZEMILL_INSTANTIATE(double)
GAZEMILL_INSTANTIATE(float)
GAZEMILL_INSTANTIATE(std::int64_t)
GAZEMILL_INSTANTIATE(std::uint64_t)
GAZEMILL_INSTANTIATE(std::int32_t)
GAZEMILL_INSTANTIATE(std::uint32_t)
GAZEMILL_INSTANTIATE(std::uint8_t)
#undef GAZEMILL_INSTANTIATE

}  // namespace gazemill::h5
