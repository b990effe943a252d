#pragma once
// A study run on many machines: each shard store holds some recordings,
// ingested and detected (gazemill run --shard K/N); the merge joins them into
// one study store, the shards' samples reached by HDF5 external links (never
// copied), and runs the study-level stages (clean, align, measure) and the
// tables on the whole study.

#include <string>
#include <vector>

#include "app/study_run.h"

namespace gazemill {

/// Joins the shard stores into `<out_folder>/<study>.gzm.h5` and completes
/// the study. Throws InputError naming the shard when the shards do not make
/// one study (a shard missing or twice, other settings, a recording twice).
StudyRunReport merge_shards(const std::vector<std::string>& shard_paths, const std::string& out_folder);

/// The file name of shard K of N of a study: "<study>.shard-K-of-N.gzm.h5" (K from 0).
std::string shard_store_name(const std::string& study, unsigned index, unsigned count);

}  // namespace gazemill
