#pragma once
// Small helpers over the HDF5 C++ API. Every HDF5 call of the project goes
// through io/, and errors are rethrown naming the file and the object path.

#include <H5Cpp.h>

#include <cstdint>
#include <string>
#include <vector>

namespace gazemill::h5 {

/// Silences HDF5's own error printing while alive (it prints stacks to stderr).
class QuietErrors {
 public:
  QuietErrors();
  ~QuietErrors();
  QuietErrors(const QuietErrors&) = delete;
  QuietErrors& operator=(const QuietErrors&) = delete;

 private:
  H5E_auto2_t func_ = nullptr;
  void* data_ = nullptr;
};

/// Before any other HDF5 call of the program: HDF5's own error printing off
/// for good (its stacks fold into our messages), and no clean-up at exit,
/// which after a failed write (a full disk) would flush again and crash.
void library_start();
/// At a successful end: closes the library (flushes nothing left open).
void library_finish();
/// Whether this HDF5 was built thread-safe (one global lock around every
/// call), so that two threads may each read a store of their own.
bool library_serialises_threads();
/// Error printing off for the calling thread (HDF5 keeps it per thread);
/// every thread that calls HDF5 calls this first, as library_start does.
void quiet_this_thread();
/// The operating system's reason for the error HDF5 last reported (e.g.
/// "No space left on device"), or the innermost HDF5 message; "" if none.
std::string last_error_reason();
/// The HDF5 file the program last opened and what for ("reading",
/// "writing"), so that an HDF5 failure that escapes as no typed error can
/// still be reported with its file; empty before any.
void note_file(const std::string& path, const char* purpose);
std::string last_file();
std::string last_file_purpose();

template <typename T> H5::PredType native_type();

/// Group creation that never records modification times (byte-stable output).
H5::Group create_group(H5::Group& parent, const std::string& name);
H5::Group open_or_create_group(H5::Group& parent, const std::string& name);
bool exists(const H5::Group& parent, const std::string& path);

/// Dataset creation list: chunked, shuffled, deflated, no time stamps.
H5::DSetCreatPropList chunked_props(hsize_t chunk_rows, int deflate_level);

void set_attr(H5::H5Object& obj, const std::string& name, const std::string& value);
void set_attr(H5::H5Object& obj, const std::string& name, double value);
void set_attr(H5::H5Object& obj, const std::string& name, std::int64_t value);
void set_attr(H5::H5Object& obj, const std::string& name, std::uint64_t value);

bool has_attr(const H5::H5Object& obj, const std::string& name);
std::string get_string_attr(const H5::H5Object& obj, const std::string& name);
double get_double_attr(const H5::H5Object& obj, const std::string& name);
std::int64_t get_int_attr(const H5::H5Object& obj, const std::string& name);

/// Writes a whole 1-D dataset, compressed, with a "unit" attribute when given.
template <typename T>
void write_column(H5::Group& group, const std::string& name, const std::vector<T>& values,
                  const std::string& unit = "");
void write_strings(H5::Group& group, const std::string& name, const std::vector<std::string>& values);

template <typename T>
std::vector<T> read_column(const H5::Group& group, const std::string& name);
/// Reads rows [first, first + count) of a 1-D dataset.
template <typename T>
std::vector<T> read_column_range(const H5::Group& group, const std::string& name, hsize_t first, hsize_t count);
/// A 1-D string dataset, fixed-length or variable-length, as text.
std::vector<std::string> read_strings(const H5::Group& group, const std::string& name);
std::vector<std::string> read_strings(const H5::DataSet& dataset);
std::vector<std::string> child_names(const H5::Group& group);

}  // namespace gazemill::h5
