// Coverage-guided fuzzing of the study store reader (libFuzzer, clang only;
// built by scripts/fuzz, which seeds it with the fixture study's store as
// ingest writes it). Stores are files users hand gazemill; a damaged or
// hostile one must give a result or an error, never a crash: an InputError,
// or an HDF5 exception (main names the store for those). Anything else, a
// crash or a sanitizer report, is a bug. What tests/hardening/
// check_damaged_stores.py does with a dozen fixed damages, this does at random.

#include <H5Cpp.h>
#include <unistd.h>

#include <cstdint>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>

#include "app/inspect.h"
#include "io/hdf5_util.h"
#include "io/sample_digest_io.h"
#include "io/study_store.h"
#include "pipeline/input_error.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const std::string path = [] {
    gazemill::h5::library_start();
    const char* dir = std::getenv("TMPDIR");
    return std::string(dir ? dir : "/tmp") + "/gazemill-fuzz-" + std::to_string(::getpid()) + "-store.gzm.h5";
  }();
  {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
  }
  try {
    std::ostringstream overview;
    gazemill::print_store_overview(path, overview);
    gazemill::StudyStoreReader store(path);
    for (const auto& id : store.recording_ids()) {
      (void)store.read_recording(id, true);
      (void)gazemill::read_sample_digest(store, id);  // before the events: a store may have either alone
      (void)store.read_events(id);
      (void)store.read_sample_labels(id);
    }
  } catch (const gazemill::InputError&) {
  } catch (const H5::Exception&) {
    // The expected outcomes for a damaged file; anything else escapes to libFuzzer.
  }
  return 0;
}
