#include "io/alignment_io.h"


#include <cmath>
#include <limits>
#include <set>

#include "io/hdf5_util.h"
#include "io/number_text.h"
#include "pipeline/input_error.h"

namespace gazemill {

void write_alignment(StudyStoreWriter& store, const std::vector<RecordingAlignment>& alignment) {
  for (const auto& a : alignment) {
    H5::Group g = store.group("recordings/" + a.recording + "/align");
    std::vector<std::uint32_t> ids;
    std::vector<std::int32_t> lines;
    std::vector<double> ys;
    for (const auto& [id, l] : a.fixations) {
      ids.push_back(id);
      lines.push_back(l.line + 1);
      ys.push_back(l.corrected_y_px);
    }
    H5::Group f = h5::create_group(g, "fixations");
    h5::write_column(f, "input_id", ids);
    h5::write_column(f, "line", lines);
    h5::write_column(f, "corrected_y_px", ys, "px");
    std::vector<std::string> trial, method;
    std::vector<double> confidence;
    std::vector<std::uint8_t> flagged, excluded;
    std::vector<std::string> review;
    for (const auto& t : a.trials) {
      trial.push_back(t.trial);
      method.push_back(t.method);
      confidence.push_back(t.confidence);
      flagged.push_back(t.flagged);
      excluded.push_back(t.excluded);
      review.push_back(t.review);
    }
    H5::Group tr = h5::create_group(g, "trials");
    h5::write_strings(tr, "trial", trial);
    h5::write_strings(tr, "method", method);
    h5::write_column(tr, "confidence", confidence);
    h5::write_column(tr, "flagged", flagged);
    h5::write_column(tr, "excluded", excluded);
    h5::write_strings(tr, "review", review);
    std::set<std::string> names;
    for (const auto& t : a.trials) {
      for (const auto& [n, v] : t.fit) {
        if (n != "confidence") names.insert(n);
      }
    }
    H5::Group fit = h5::create_group(tr, "fit");
    for (const auto& n : names) {
      std::vector<double> column;
      for (const auto& t : a.trials) {
        const auto it = t.fit.find(n);
        column.push_back(it == t.fit.end() ? std::numeric_limits<double>::quiet_NaN() : it->second);
      }
      h5::write_column(fit, n, column, n.ends_with("_px") ? "px" : "");
    }
  }
}

std::string alignment_trials_tsv(const std::vector<RecordingAlignment>& alignment) {
  std::set<std::string> names;
  for (const auto& a : alignment) {
    for (const auto& t : a.trials) {
      for (const auto& [n, v] : t.fit) {
        if (n != "confidence") names.insert(n);
      }
    }
  }
  std::string out = "recording\ttrial\tmethod\tconfidence\tflagged\texcluded\treview";
  for (const auto& n : names) out += "\t" + n;
  out += "\n";
  auto num = [](double v) { return std::isfinite(v) ? general_text(v, 6) : std::string("NA"); };
  for (const auto& a : alignment) {
    for (const auto& t : a.trials) {
      out += a.recording + "\t" + t.trial + "\t" + t.method + "\t" + num(t.confidence) + "\t" + (t.flagged ? "1" : "0") + "\t" +
             (t.excluded ? "1" : "0") + "\t" + (t.review.empty() ? "NA" : t.review);
      for (const auto& n : names) {
        const auto it = t.fit.find(n);
        out += "\t" + (it == t.fit.end() ? std::string("NA") : num(it->second));
      }
      out += "\n";
    }
  }
  return out;
}

std::vector<RecordingAlignment> read_alignment(const StudyStoreReader& store) {
  h5::QuietErrors quiet;
  std::vector<RecordingAlignment> out;
  for (const auto& id : store.recording_ids()) {
    const std::string base = "recordings/" + id + "/align";
    if (!store.exists(base)) throw InputError({store.path(), 0, base}, "no line assignments; run gazemill align first");
    RecordingAlignment a;
    a.recording = id;
    try {
      H5::Group f = store.group(base + "/fixations");
      const auto ids = h5::read_column<std::uint32_t>(f, "input_id");
      const auto lines = h5::read_column<std::int32_t>(f, "line");
      const auto ys = h5::read_column<double>(f, "corrected_y_px");
      for (std::size_t i = 0; i < ids.size(); ++i) a.fixations[ids[i]] = {lines.at(i) - 1, ys.at(i)};
      H5::Group t = store.group(base + "/trials");
      const auto trial = h5::read_strings(t, "trial"), method = h5::read_strings(t, "method");
      const auto confidence = h5::read_column<double>(t, "confidence");
      const auto flagged = h5::read_column<std::uint8_t>(t, "flagged");
      const auto excluded = h5::read_column<std::uint8_t>(t, "excluded");
      const auto review = h5::read_strings(t, "review");
      for (std::size_t i = 0; i < trial.size(); ++i) {
        a.trials.push_back({trial[i], method.at(i), confidence.at(i), flagged.at(i) != 0, {}, review.at(i), excluded.at(i) != 0});
      }
      H5::Group fit = t.openGroup("fit");
      for (const auto& n : h5::child_names(fit)) {
        const auto values = h5::read_column<double>(fit, n);
        for (std::size_t i = 0; i < values.size() && i < a.trials.size(); ++i) {
          if (!std::isnan(values[i])) a.trials[i].fit[n] = values[i];
        }
      }
    } catch (const H5::Exception& e) {
      throw InputError({store.path(), 0, base}, "damaged line assignments: " + e.getDetailMsg());
    }
    out.push_back(std::move(a));
  }
  return out;
}

}  // namespace gazemill
