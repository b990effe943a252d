#include "io/sample_digest_io.h"

#include "io/hdf5_util.h"
#include "pipeline/input_error.h"

namespace gazemill {
namespace {

struct CountField {
  const char* name;
  std::uint64_t SampleDigest::*field;
};
constexpr CountField kCounts[] = {{"samples", &SampleDigest::samples},
                                  {"missing_samples", &SampleDigest::missing_samples},
                                  {"trial_samples", &SampleDigest::trial_samples},
                                  {"trial_missing_samples", &SampleDigest::trial_missing_samples},
                                  {"intervals", &SampleDigest::intervals},
                                  {"irregular_intervals", &SampleDigest::irregular_intervals},
                                  {"gaps", &SampleDigest::gaps},
                                  {"non_increasing", &SampleDigest::non_increasing},
                                  {"regular_intervals", &SampleDigest::regular_intervals}};

}  // namespace

void write_sample_digest(StudyStoreWriter& store, const std::string& id, const SampleDigest& digest) {
  H5::Group events = store.group("/recordings/" + id + "/events");
  H5::Group g = h5::create_group(events, "sample_digest");
  const SampleDigest& d = digest;
  h5::set_attr(g, "max_points_per_trial", static_cast<std::uint64_t>(d.max_points_per_trial));
  for (const auto& c : kCounts) h5::set_attr(g, c.name, d.*c.field);
  h5::set_attr(g, "longest_gap_us", static_cast<std::int64_t>(d.longest_gap_us));
  h5::set_attr(g, "interval_variance_sum_us2", d.interval_variance_sum_us2);
  h5::write_column(g, "trial_rate_hz", d.trial_rates_hz, "Hz");
  h5::write_column(g, "fixation_rms_s2s_deg", d.fixation_rms_s2s_deg, "deg");
  h5::write_column(g, "fixation_std_deg", d.fixation_std_deg, "deg");
  H5::Group t = h5::create_group(g, "time_courses");
  std::vector<double> bin_ms;
  std::vector<std::uint32_t> points;
  std::vector<float> x, y;
  for (const auto& c : d.time_courses) {
    bin_ms.push_back(c.bin_ms);
    points.push_back(static_cast<std::uint32_t>(c.x_px.size()));
    x.insert(x.end(), c.x_px.begin(), c.x_px.end());
    y.insert(y.end(), c.y_px.begin(), c.y_px.end());
  }
  h5::write_column(t, "bin_ms", bin_ms, "ms");
  h5::write_column(t, "points", points);
  h5::write_column(t, "x_px", x, "px");
  h5::write_column(t, "y_px", y, "px");
}

std::optional<SampleDigest> read_sample_digest(const StudyStoreReader& store, const std::string& id) {
  const std::string path = "recordings/" + id + "/events/sample_digest";
  if (!store.exists(path)) return std::nullopt;
  h5::QuietErrors quiet;
  try {
    H5::Group g = store.group(path);
    SampleDigest d;
    auto u64 = [&](const char* name) {
      std::uint64_t v = 0;
      g.openAttribute(name).read(H5::PredType::NATIVE_UINT64, &v);
      return v;
    };
    d.max_points_per_trial = static_cast<std::size_t>(u64("max_points_per_trial"));
    for (const auto& c : kCounts) d.*c.field = u64(c.name);
    d.longest_gap_us = h5::get_int_attr(g, "longest_gap_us");
    d.interval_variance_sum_us2 = h5::get_double_attr(g, "interval_variance_sum_us2");
    d.trial_rates_hz = h5::read_column<double>(g, "trial_rate_hz");
    d.fixation_rms_s2s_deg = h5::read_column<double>(g, "fixation_rms_s2s_deg");
    d.fixation_std_deg = h5::read_column<double>(g, "fixation_std_deg");
    H5::Group t = g.openGroup("time_courses");
    const auto bin_ms = h5::read_column<double>(t, "bin_ms");
    const auto points = h5::read_column<std::uint32_t>(t, "points");
    const auto x = h5::read_column<float>(t, "x_px");
    const auto y = h5::read_column<float>(t, "y_px");
    if (points.size() != bin_ms.size() || x.size() != y.size()) throw InputError({store.path(), 0, path}, "time course columns of unequal length");
    std::size_t at = 0;
    for (std::size_t k = 0; k < points.size(); ++k) {
      if (at + points[k] > x.size()) throw InputError({store.path(), 0, path}, "time course points beyond the stored values");
      TrialTimeCourse c;
      c.bin_ms = bin_ms[k];
      c.x_px.assign(x.begin() + static_cast<std::ptrdiff_t>(at), x.begin() + static_cast<std::ptrdiff_t>(at + points[k]));
      c.y_px.assign(y.begin() + static_cast<std::ptrdiff_t>(at), y.begin() + static_cast<std::ptrdiff_t>(at + points[k]));
      at += points[k];
      d.time_courses.push_back(std::move(c));
    }
    return d;
  } catch (const H5::Exception& e) {
    throw InputError({store.path(), 0, path}, "unreadable sample digest: " + e.getDetailMsg());
  }
}

}  // namespace gazemill
