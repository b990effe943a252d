// Detection benchmark: speed on a long recording, and how each detector's
// agreement with the simulator's truth degrades with noise and sampling rate, at
// the accuracy test's parameters and at every method's defaults.
// usage: gazemill_bench_detect [--speed-only | --table-only] [--samples N] [--pso] [--timing]
//        gazemill_bench_detect --settings 'METHOD NAME=VALUE ...' [--settings ...]
// Prints markdown tables; every figure is measured in this run.

#include <chrono>
#include <cstdio>
#include <cstring>
#include <random>
#include <stdexcept>
#include <string>

#include "detectors/detector_registry.h"
#include "detectors/recording_detection.h"
#include "detectors/scoring.h"
#include "detectors/velocity.h"
#include "detectors/visual_angle.h"
#include "sim/study_simulator.h"

using namespace gazemill;
using Clock = std::chrono::steady_clock;

namespace {

// A long monocular trace at 1000 Hz: fixations of 150-350 ms joined by jumps of
// 1-8 deg, 0.03 deg noise; generated directly, as only speed is measured here.
GazeTrace long_trace(std::size_t n) {
  GazeTrace g;
  g.time_us.resize(n);
  g.x_deg.resize(n);
  g.y_deg.resize(n);
  g.x_px.resize(n);
  g.y_px.resize(n);
  g.pupil.assign(n, 1000.f);
  g.valid.assign(n, 1);
  std::mt19937_64 rng(3);
  std::normal_distribution<double> noise(0.0, 0.015);
  std::uniform_int_distribution<int> fix_ms(150, 350);
  std::uniform_real_distribution<double> jump(1.0, 8.0);
  double x = 0, y = 0;
  std::size_t next_jump = 200;
  for (std::size_t i = 0; i < n; ++i) {
    if (i == next_jump) {
      x += jump(rng) * (x > 10 ? -1 : 1);
      next_jump += static_cast<std::size_t>(fix_ms(rng));
    }
    g.time_us[i] = static_cast<Microseconds>(i) * 1000;
    g.x_deg[i] = g.x_px[i] = x + noise(rng);
    g.y_deg[i] = g.y_px[i] = y + noise(rng);
  }
  g.interval_us = 1000;
  return g;
}

template <typename F>
double best_seconds(int repeats, F&& f) {
  double best = 1e300;
  for (int r = 0; r < repeats; ++r) {
    const auto t0 = Clock::now();
    f();
    best = std::min(best, std::chrono::duration<double>(Clock::now() - t0).count());
  }
  return best;
}

DetectionSpec sensible(const std::string& method) {
  DetectionSpec s;
  s.method = method;
  if (method == "ivt") s.parameters = {{"velocity_threshold_deg_s", 15}, {"sg_window_ms", 10}};
  if (method == "engbert_kliegl") s.parameters = {};  // its defaults meet the targets
  if (method == "nystrom_holmqvist") s.parameters = {{"sg_window_ms", 4}, {"max_glissade_ms", 0}, {"initial_peak_threshold_deg_s", 60}};
  if (method == "idt") s.parameters = {{"dispersion_threshold_deg", 0.06}, {"min_duration_ms", 20}, {"smoothing_window_ms", 20}};
  if (method == "idt_short_window") {  // the second I-DT row of the accuracy test
    s.method = "idt";
    s.parameters = {{"dispersion_threshold_deg", 0.04}, {"min_duration_ms", 6}, {"smoothing_window_ms", 24}};
  }
  s.blink_padding_before_ms = s.blink_padding_after_ms = 30;
  return s;
}

// gazemill detects trial by trial: the long recording as 5-second trials.
std::vector<GazeTrace> as_trials(const GazeTrace& g, std::size_t per_trial) {
  std::vector<GazeTrace> out;
  for (std::size_t a = 0; a < g.size(); a += per_trial) {
    const std::size_t b = std::min(g.size(), a + per_trial);
    GazeTrace t;
    t.interval_us = g.interval_us;
    auto cut = [&](const auto& from, auto& to) { to.assign(from.begin() + static_cast<std::ptrdiff_t>(a), from.begin() + static_cast<std::ptrdiff_t>(b)); };
    cut(g.time_us, t.time_us);
    cut(g.x_deg, t.x_deg);
    cut(g.y_deg, t.y_deg);
    cut(g.x_px, t.x_px);
    cut(g.y_px, t.y_px);
    cut(g.pupil, t.pupil);
    cut(g.valid, t.valid);
    out.push_back(std::move(t));
  }
  return out;
}

void speed(std::size_t n) {
  const std::vector<GazeTrace> trials = as_trials(long_trace(n), 5000);
  std::printf("## Speed: %zu samples (1000 Hz) in %zu trials of 5 s, one core, best of 3\n\n", n, trials.size());
  std::printf("| step | seconds | million samples/s | vs velocity + I-VT |\n|---|---|---|---|\n");
  DetectionSpec ivt = sensible("ivt");
  const auto ivt_detector = make_detector(ivt);
  volatile std::size_t sink = 0;
  const double t_ivt = best_seconds(3, [&] {
    for (const auto& g : trials) {
      std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
      ivt_detector->label(g, labels);  // Savitzky-Golay velocity + thresholding
      sink = sink + static_cast<std::size_t>(labels[g.size() / 2]);
    }
  });
  const double t_vel = best_seconds(3, [&] {
    VelocityParams vp;
    vp.sg_window_ms = 10;
    for (const auto& g : trials) {
      const Velocity v = compute_velocity(g, vp);
      sink = sink + static_cast<std::size_t>(v.speed[g.size() / 2]);
    }
  });
  auto row = [&](const char* name, double t) {
    std::printf("| %s | %.3f | %.1f | %.2fx |\n", name, t, static_cast<double>(n) / t / 1e6, t / t_ivt);
  };
  row("Savitzky-Golay velocity (10 ms)", t_vel);
  row("velocity + I-VT labels", t_ivt);
  DetectionSpec idt_defaults;
  idt_defaults.method = "idt";  // nothing but the defaults: the threshold comes from the data
  const std::pair<const char*, DetectionSpec> timed[] = {{"engbert_kliegl", sensible("engbert_kliegl")},
                                                        {"nystrom_holmqvist", sensible("nystrom_holmqvist")},
                                                        {"idt", sensible("idt")},
                                                        {"idt (defaults: threshold from the data)", idt_defaults}};
  for (const auto& [m, spec] : timed) {
    const auto d = make_detector(spec);
    const double t = best_seconds(3, [&] {
      for (const auto& g : trials) {
        std::vector<SampleLabel> labels(g.size(), SampleLabel::other);
        d->label(g, labels);
        sink = sink + static_cast<std::size_t>(labels[g.size() / 2]);
      }
    });
    row((std::string(m) + " labels").c_str(), t);
  }
  // As gazemill detect works: a recording in pixels, 5 s trials; per trial
  // the trace in degrees (visual angle per sample), spike removal, labels,
  // blinks, clean-up and events.
  Recording rec;
  rec.screen = {1920, 1080, 531.0, 299.0, 700.0};
  rec.samples.has_left = true;
  {
    const GazeTrace deg = long_trace(n);
    const VisualAngle angle(rec.screen);
    rec.samples.time_us = deg.time_us;
    for (std::size_t i = 0; i < n; ++i) {
      rec.samples.left.x_px.push_back(static_cast<float>(angle.x_px(deg.x_deg[i] - 10.0)));
      rec.samples.left.y_px.push_back(static_cast<float>(angle.y_px(deg.y_deg[i])));
      rec.samples.left.pupil.push_back(1000.f);
      rec.samples.left.valid.push_back(1);
    }
    for (std::size_t a = 0; a < n; a += 5000) {
      Trial t;
      t.id = std::to_string(a / 5000 + 1);
      t.start_us = rec.samples.time_us[a];
      t.end_us = rec.samples.time_us[std::min(n, a + 5000) - 1];
      rec.trials.push_back(t);
    }
  }
  for (const char* m : {"ivt", "nystrom_holmqvist"}) {
    DetectionSpec spec;  // the method's defaults
    spec.method = m;
    const auto d = make_detector(spec);
    const double t = best_seconds(3, [&] { sink = sink + detect_recording(rec, *d, spec).events.fixations.size(); });
    row((std::string(m) + " defaults: detect_recording from pixels").c_str(), t);
  }
  for (const char* m : {"ivt", "nystrom_holmqvist"}) {
    const DetectionSpec spec = sensible(m);
    const auto d = make_detector(spec);
    const double t = best_seconds(3, [&] {
      for (const auto& g : trials) {
        const auto labels = label_trace(g, *d, blink_params(spec), event_params(spec));
        DetectedEvents ev;
        collect_events(g, labels, "1", Eye::left, ev);
        sink = sink + ev.fixations.size();
      }
    });
    row((std::string(m) + ": labels, clean-up and events").c_str(), t);
  }
  std::printf("\n");
}

// Each method with nothing but its defaults (and the default blink padding).
DetectionSpec defaults(const std::string& method) {
  DetectionSpec s;
  s.method = method;
  return s;
}

// Settings given on the command line: "method name=value ...".
std::vector<std::pair<std::string, DetectionSpec>> given_settings;

DetectionSpec given(const std::string& column) {
  for (const auto& [name, spec] : given_settings) {
    if (name == column) return spec;
  }
  throw std::logic_error("no settings named " + column);
}

DetectionSpec parse_settings(const std::string& text) {
  DetectionSpec s;
  std::size_t a = 0;
  while (a < text.size()) {
    std::size_t b = text.find(' ', a);
    if (b == std::string::npos) b = text.size();
    const std::string word = text.substr(a, b - a);
    a = b + 1;
    if (word.empty()) continue;
    const std::size_t eq = word.find('=');
    if (eq == std::string::npos) s.method = word;
    else s.parameters[word.substr(0, eq)] = std::stod(word.substr(eq + 1));
  }
  return s;
}

bool with_pso = false;
bool with_timing = false;

void degradation(const char* title, const char* parameters, const std::vector<std::string>& methods,
                 DetectionSpec (*spec_of)(const std::string&)) {
  const std::vector<double> noises = {0.01, 0.03, 0.05, 0.1, 0.2};
  const std::vector<double> rates = {250, 500, 1000, 2000};
  std::printf("## %s: kappa fixation / saccade%s\n\n", title, with_pso ? " / post-saccadic oscillation" : "");
  std::printf("2 simulated readers x 12 items per cell, %s; %s\n\n",
              with_pso ? "with post-saccadic oscillation" : "no post-saccadic oscillation", parameters);
  std::printf("| noise (deg RMS-S2S) | rate (Hz) |");
  for (const auto& m : methods) std::printf(" %s |", m.c_str());
  std::printf("\n|---|---|");
  for (std::size_t i = 0; i < methods.size(); ++i) std::printf("---|");
  std::printf("\n");
  for (double noise : noises) {
    for (double rate : rates) {
      const auto st = sim::simulate_study(sim::detection_grid_config(rate, noise, with_pso));
      std::printf("| %.2f | %.0f |", noise, rate);
      for (const auto& m : methods) {
        const DetectionSpec spec = spec_of(m);
        const auto d = make_detector(spec);
        AgreementScorer scorer;
        for (const auto& sr : st.recordings) scorer.add(sr.truth.labels, detect_recording(sr.recording, *d, spec).labels, sr.recording.samples.time_us);
        const auto r = scorer.report();
        std::printf(" %.2f / %.2f", r.classes[0].kappa, r.classes[1].kappa);
        if (with_pso) std::printf(" / %.2f", r.classes[2].kappa);
        if (with_timing) {
          std::printf(" (%+.1f, %+.1f ms)", r.classes[0].mean_onset_difference_ms, r.classes[0].mean_offset_difference_ms);
        }
        std::printf(" |");
      }
      std::printf("\n");
      std::fflush(stdout);
    }
  }
}

}  // namespace

int main(int argc, char** argv) {
  bool speed_only = false, table_only = false;
  std::size_t n = 10'000'000;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--speed-only")) speed_only = true;
    else if (!std::strcmp(argv[i], "--table-only")) table_only = true;
    else if (!std::strcmp(argv[i], "--samples") && i + 1 < argc) n = std::stoul(argv[++i]);
    else if (!std::strcmp(argv[i], "--pso")) with_pso = true;
    else if (!std::strcmp(argv[i], "--timing")) with_timing = true;
    else if (!std::strcmp(argv[i], "--settings") && i + 1 < argc) {
      given_settings.emplace_back("s" + std::to_string(given_settings.size() + 1), parse_settings(argv[++i]));
    } else {
      std::fprintf(stderr,
                   "usage: %s [--speed-only | --table-only] [--samples N] [--pso] [--timing]\n"
                   "          [--settings 'METHOD NAME=VALUE ...']...\n",
                   argv[0]);
      return 2;
    }
  }
  if (!given_settings.empty()) {
    std::vector<std::string> columns;
    for (const auto& [name, spec] : given_settings) {
      columns.push_back(name);
      std::printf("%s: %s", name.c_str(), spec.method.c_str());
      for (const auto& [k, v] : spec.parameters) std::printf(" %s=%g", k.c_str(), v);
      std::printf("\n");
    }
    std::printf("\n");
    degradation("Given settings", "columns as listed above.", columns, given);
    return 0;
  }
  if (!table_only) speed(n);
  if (!speed_only) {
    degradation("Agreement with the simulator's truth",
                "parameters as in\ntests/test_detector_accuracy.cpp (fixed across cells, not re-tuned).",
                {"ivt", "idt", "idt_short_window", "engbert_kliegl", "nystrom_holmqvist"}, sensible);
    std::printf("\n");
    degradation("The same with every method's defaults", "no parameters given.",
                {"ivt", "idt", "engbert_kliegl", "nystrom_holmqvist"}, defaults);
  }
  return 0;
}
