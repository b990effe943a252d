#pragma once
// The data model of one recording: samples held as columns, the messages the
// experiment wrote, and the trials segmented from those messages.

#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "pipeline/time_units.h"

namespace gazemill {

// The sampling rates of eye trackers, generously: webcams to the fastest
// research systems (common practice, no source). Times read in the wrong
// unit give a rate outside these.
inline constexpr double kLeastTrackerRateHz = 10.0;
inline constexpr double kMostTrackerRateHz = 10000.0;

enum class Eye { left, right };
std::string to_string(Eye eye);

/// Physical screen set-up; needed to turn pixels into degrees of visual angle.
struct ScreenGeometry {
  int width_px = 0;
  int height_px = 0;
  double width_mm = 0.0;
  double height_mm = 0.0;
  double viewing_distance_mm = 0.0;
};

/// Gaze of one eye, one entry per sample. Missing values are NaN.
struct EyeSamples {
  std::vector<float> x_px;
  std::vector<float> y_px;
  std::vector<float> pupil;        // tracker units (area or diameter), NaN when absent
  std::vector<std::uint8_t> valid; // 1 when x and y are both present

  std::size_t size() const { return x_px.size(); }
  void reserve(std::size_t n);
  void clear();
};

/// Samples as columns: a shared time axis plus one EyeSamples per recorded eye.
struct SampleColumns {
  std::vector<Microseconds> time_us;
  bool has_left = false;
  bool has_right = false;
  EyeSamples left;
  EyeSamples right;

  std::size_t size() const { return time_us.size(); }
  void reserve(std::size_t n);
  void clear();
  const EyeSamples& eye(Eye e) const { return e == Eye::left ? left : right; }
  EyeSamples& eye(Eye e) { return e == Eye::left ? left : right; }
};

/// A text line the experiment software wrote at a point in time.
struct Message {
  Microseconds time_us = 0;
  std::string text;
};

/// One trial: a span of the recording with the variables set by its messages.
struct Trial {
  std::string id;
  Microseconds start_us = 0;
  Microseconds end_us = 0;
  std::map<std::string, std::string> variables;  // every captured name: item, design factors, list, ...
  std::map<std::string, Microseconds> markers;   // named time points, e.g. display onset
  /// A variable's value, "" when the trial has none.
  const std::string& variable(const std::string& name) const;
};

/// Everything known about one participant session.
struct Recording {
  std::string id;
  std::string participant;
  std::string session;
  std::string source_file;
  double sample_rate_hz = 0.0;
  ScreenGeometry screen;
  SampleColumns samples;
  std::vector<Message> messages;
  std::vector<Trial> trials;
};

}  // namespace gazemill
