#include "io/report_store.h"

#include "io/hdf5_util.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace {

template <typename F>
auto reading(const StudyStoreReader& store, const std::string& path, F&& f) {
  h5::QuietErrors quiet;
  if (!store.exists(path)) throw InputError({store.path(), 0, path}, "not in the store");
  try {
    return f(store.group(path));
  } catch (const H5::Exception& e) {
    throw InputError({store.path(), 0, path}, "damaged: " + e.getDetailMsg());
  }
}

void read_columns_into(const H5::Group& g, StoredTable& t, const std::string& path, const std::string& store_path) {
  for (const auto& name : h5::child_names(g)) {
    if (g.childObjType(name) == H5O_TYPE_GROUP) {
      if (name == "cell") read_columns_into(g.openGroup(name), t, path + "/cell", store_path);
      continue;
    }
    const H5::DataSet ds = g.openDataSet(name);
    std::size_t n = 0;
    if (ds.getTypeClass() == H5T_STRING) {
      auto v = h5::read_strings(g, name);
      n = v.size();
      t.texts[name] = std::move(v);
    } else {
      auto v = h5::read_column<double>(g, name);
      n = v.size();
      t.numbers[name] = std::move(v);
    }
    if (t.numbers.size() + t.texts.size() == 1) {
      t.rows = n;
    } else if (n != t.rows) {
      throw InputError({store_path, 0, path + "/" + name}, "has " + std::to_string(n) + " rows where the table's other columns have " +
                                                               std::to_string(t.rows));
    }
  }
}

}  // namespace

std::vector<RemovedFixationRow> read_removed_fixation_rows(const StudyStoreReader& store, const std::string& recording) {
  return reading(store, "recordings/" + recording + "/clean/removed_fixations", [](const H5::Group& g) {
    const auto id = h5::read_column<std::uint32_t>(g, "input_id");
    const auto trial = h5::read_strings(g, "trial");
    const auto start = h5::read_column<std::int64_t>(g, "start_us"), end = h5::read_column<std::int64_t>(g, "end_us");
    const auto dur = h5::read_column<double>(g, "duration_ms");
    const auto rule = h5::read_strings(g, "rule"), reason = h5::read_strings(g, "reason");
    const auto into = h5::read_column<std::int64_t>(g, "merged_into");
    std::vector<RemovedFixationRow> out;
    for (std::size_t i = 0; i < id.size(); ++i) {
      out.push_back({id[i], trial.at(i), start.at(i), end.at(i), dur.at(i), rule.at(i), reason.at(i), into.at(i)});
    }
    return out;
  });
}

std::vector<TrialVerdictRow> read_trial_verdicts(const StudyStoreReader& store, const std::string& recording) {
  return reading(store, "recordings/" + recording + "/clean/trials", [](const H5::Group& g) {
    const auto trial = h5::read_strings(g, "trial");
    const auto kept = h5::read_column<std::uint8_t>(g, "kept");
    const auto rule = h5::read_strings(g, "rule"), reason = h5::read_strings(g, "reason");
    std::vector<TrialVerdictRow> out;
    for (std::size_t i = 0; i < trial.size(); ++i) out.push_back({trial[i], kept.at(i) != 0, rule.at(i), reason.at(i)});
    return out;
  });
}

std::map<std::string, RecordingCleaningRows> cleaning_rows(const CleaningOutcome& outcome) {
  std::map<std::string, RecordingCleaningRows> out;
  for (const auto& p : outcome.state.participants) {
    for (const auto& t : p.trials) {
      RecordingCleaningRows& rows = out[t.recording];
      for (const auto& f : t.fixations) {
        if (f.kept) continue;
        const auto& why = outcome.fixation_removals.at(f.id);
        rows.removed.push_back({f.id, t.trial, f.fixation.start_us, f.fixation.end_us, f.duration_ms, outcome.report.rules.at(why.first),
                                why.second, f.merged_away ? static_cast<std::int64_t>(f.merged_into) : -1});
      }
      if (t.kept) {
        rows.verdicts.push_back({t.trial, true, "", ""});
      } else {
        const auto& why = outcome.trial_removals.at(t.id);
        rows.verdicts.push_back({t.trial, false, outcome.report.rules.at(why.first), why.second});
      }
    }
  }
  return out;
}

StoredTable read_stored_table(const StudyStoreReader& store, const std::string& group_path) {
  return reading(store, group_path, [&](const H5::Group& g) {
    StoredTable t;
    read_columns_into(g, t, group_path, store.path());
    return t;
  });
}

}  // namespace gazemill
