#include "io/store_compare.h"

#include <H5Cpp.h>

#include <map>
#include <set>

#include "io/global_heap_check.h"
#include "io/hdf5_util.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace {

// Every dataset by path, following external links too (a study joined from
// shards keeps their samples in the shards' files).
struct Walk {
  std::set<std::string>* out;
  std::string prefix;
};

herr_t collect(hid_t group, const char* name, const H5L_info_t* info, void* data) {
  Walk& w = *static_cast<Walk*>(data);
  const std::string path = w.prefix + name;
  H5O_info_t o{};
  if (H5Oget_info_by_name2(group, name, &o, H5O_INFO_BASIC, H5P_DEFAULT) < 0) return 0;  // a dangling link
  if (o.type == H5O_TYPE_DATASET) {
    w.out->insert(path);
  } else if (o.type == H5O_TYPE_GROUP && info->type == H5L_TYPE_EXTERNAL) {
    const hid_t g = H5Gopen2(group, name, H5P_DEFAULT);
    Walk inner{w.out, path + "/"};
    H5Lvisit(g, H5_INDEX_NAME, H5_ITER_INC, collect, &inner);
    H5Gclose(g);
  }
  return 0;
}

std::set<std::string> dataset_paths(const H5::H5File& f) {
  std::set<std::string> out;
  Walk w{&out, ""};
  H5Lvisit(f.getId(), H5_INDEX_NAME, H5_ITER_INC, collect, &w);
  return out;
}

// The dataset's values as bytes; strings as their text.
std::string content(const H5::DataSet& ds) {
  const H5::DataType type = ds.getDataType();
  H5::DataSpace space = ds.getSpace();
  const hssize_t n = space.getSimpleExtentNpoints();
  if (type.getClass() == H5T_STRING) {  // by text: fixed- and variable-length alike
    std::string out;
    for (const auto& v : h5::read_strings(ds)) {
      out += v;
      out.push_back('\0');
    }
    return out;
  }
  const hid_t mem = H5Tget_native_type(type.getId(), H5T_DIR_DEFAULT);
  std::string out(static_cast<std::size_t>(n) * H5Tget_size(mem), '\0');
  if (n > 0) H5Dread(ds.getId(), mem, H5S_ALL, H5S_ALL, H5P_DEFAULT, out.data());
  H5Tclose(mem);
  return out;
}

}  // namespace

std::vector<DatasetDifference> compare_store_datasets(const std::string& expected, const std::string& actual) {
  h5::QuietErrors quiet;
  H5::H5File a, b;
  check_global_heaps(expected);
  check_global_heaps(actual);
  try {
    a = H5::H5File(expected, H5F_ACC_RDONLY);
  } catch (const H5::Exception&) {
    throw InputError({expected, 0, ""}, "cannot open as HDF5");
  }
  try {
    b = H5::H5File(actual, H5F_ACC_RDONLY);
  } catch (const H5::Exception&) {
    throw InputError({actual, 0, ""}, "cannot open as HDF5");
  }
  const auto pa = dataset_paths(a), pb = dataset_paths(b);
  std::vector<DatasetDifference> diffs;
  for (const auto& p : pa) {
    if (!pb.count(p)) {
      diffs.push_back({p, "missing"});
      continue;
    }
    const H5::DataSet da = a.openDataSet(p), db = b.openDataSet(p);
    // Strings compare by text: a fixed-length column and a variable-length one
    // (format 2 stores) holding the same values are the same result.
    const bool both_strings = da.getTypeClass() == H5T_STRING && db.getTypeClass() == H5T_STRING;
    if (!both_strings && !(da.getDataType() == db.getDataType())) {
      diffs.push_back({p, "type"});
      continue;
    }
    if (da.getSpace().getSimpleExtentNpoints() != db.getSpace().getSimpleExtentNpoints()) {
      diffs.push_back({p, "shape"});
      continue;
    }
    if (content(da) != content(db)) diffs.push_back({p, "values"});
  }
  for (const auto& p : pb) {
    if (!pa.count(p)) diffs.push_back({p, "extra"});
  }
  return diffs;
}

}  // namespace gazemill
