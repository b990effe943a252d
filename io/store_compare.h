#pragma once
// Dataset-by-dataset comparison of two stores, for verify and for the
// determinism tests: same paths, types, shapes and bytes.

#include <string>
#include <vector>

namespace gazemill {

struct DatasetDifference {
  std::string path;
  std::string what;  // "missing", "extra", "type", "shape", "values"
};

/// Compares every dataset of two HDF5 files (attributes are not compared:
/// they hold run times). Throws InputError when a file cannot be read.
std::vector<DatasetDifference> compare_store_datasets(const std::string& expected, const std::string& actual);

}  // namespace gazemill
