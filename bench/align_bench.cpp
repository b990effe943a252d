// Drift correction on simulated passages (sim/passage_scanpath): the share of
// fixations each method assigns to their true line, for each distortion of
// Carr et al. (2022) swept over its range, for moderate drift of every kind
// at once, and for a mix of trials each with one distortion; then the time to
// align every trial of a 40-participant x 30-passage study. Prints the
// figures measured in this run; never fails on them.
//
//   gazemill_bench_align [--trials N] [--seed S] [--repeats R] [--majority a,b,c ...] [--combined-only] [--dump FILE]
//
// --majority adds a column for a majority of other members (repeatable);
// --combined-only skips the sweeps and the timing; --dump writes every
// method's full output (lines and fit values, in exact hexadecimal) for the
// mixed and the timed trials to FILE, so that two builds can be compared
// byte for byte.

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <functional>
#include <iterator>
#include <memory>
#include <random>
#include <string>
#include <vector>

#include "alignment/drift_registry.h"
#include "sim/passage_scanpath.h"

using namespace gazemill;

namespace {

struct Trial {
  DriftInput input;
  std::vector<int> true_line;
};

DriftInput drift_input(const sim::Passage& p, const std::vector<sim::SimulatedFixation>& fixations) {
  DriftInput in;
  in.text.line_y_px = p.line_y_px;
  in.text.line_height_px = p.line_spacing_px;
  in.text.font_height_px = p.font_height_px;
  for (const auto& line : p.words) {
    std::vector<double> xs;
    for (const auto& w : line) xs.push_back(w.centre_x_px());
    in.text.word_x_px.push_back(std::move(xs));
  }
  for (const auto& f : fixations) in.fixations.push_back({f.x_px, f.y_px, f.duration_ms});
  return in;
}

using DistortionDraw = std::function<sim::ScanpathDistortion(std::mt19937_64&)>;

std::vector<Trial> make_trials(const std::vector<sim::Passage>& passages, int count, const DistortionDraw& draw, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::vector<Trial> out;
  const sim::PassageReaderParams reader;
  for (int t = 0; t < count; ++t) {
    const sim::Passage& p = passages[static_cast<std::size_t>(t) % passages.size()];
    const sim::ScanpathDistortion d = draw(rng);
    const auto fixations = sim::generate_passage_scanpath(p, reader, d, rng);
    Trial trial;
    trial.input = drift_input(p, fixations);
    for (const auto& f : fixations) trial.true_line.push_back(f.true_line);
    out.push_back(std::move(trial));
  }
  return out;
}

double share_correct(const DriftCorrector& method, const std::vector<Trial>& trials) {
  double right = 0, all = 0;
  for (const auto& t : trials) {
    const DriftOutput out = method.correct(t.input);
    for (std::size_t i = 0; i < out.line.size(); ++i) right += out.line[i] == t.true_line[i] ? 1 : 0;
    all += static_cast<double>(out.line.size());
  }
  return all > 0 ? right / all : 1.0;
}

struct Method {
  std::string label;
  std::unique_ptr<DriftCorrector> corrector;
};

void print_header(const char* first, const std::vector<Method>& methods) {
  std::printf("%-10s", first);
  for (const auto& m : methods) std::printf(" %8s", m.label.c_str());
  std::printf("\n");
}

void print_row(const std::string& level, const std::vector<Method>& methods, const std::vector<Trial>& trials) {
  std::printf("%-10s", level.c_str());
  for (const auto& m : methods) std::printf(" %7.1f%%", 100.0 * share_correct(*m.corrector, trials));
  std::printf("\n");
  std::fflush(stdout);
}

std::string format(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%g", v);
  return buf;
}

// Every method's lines and fit values for every trial, doubles in %a so that
// equal files mean equal bits.
void dump_outputs(std::FILE* out, const char* set, const std::vector<Method>& methods, const std::vector<Trial>& trials) {
  for (const auto& m : methods) {
    for (std::size_t t = 0; t < trials.size(); ++t) {
      const DriftOutput o = m.corrector->correct(trials[t].input);
      std::fprintf(out, "%s %s %zu lines", set, m.label.c_str(), t);
      for (int l : o.line) std::fprintf(out, " %d", l);
      std::fprintf(out, "\n%s %s %zu y", set, m.label.c_str(), t);
      for (double y : o.corrected_y_px) std::fprintf(out, " %a", y);
      std::fprintf(out, "\n%s %s %zu fit", set, m.label.c_str(), t);
      for (const auto& [k, v] : o.fit) std::fprintf(out, " %s=%a", k.c_str(), v);
      std::fprintf(out, "\n");
    }
  }
}

}  // namespace

int main(int argc, char** argv) {
  int trials_per_level = 200, repeats = 5;
  std::uint64_t seed = 2022;
  bool combined_only = false;
  const char* dump_path = nullptr;
  std::vector<std::vector<std::string>> extra_majorities;
  for (int i = 1; i < argc; ++i) {
    const bool has_value = i + 1 < argc;
    if (!std::strcmp(argv[i], "--combined-only")) {
      combined_only = true;
    } else if (has_value && !std::strcmp(argv[i], "--trials")) {
      trials_per_level = std::max(1, std::atoi(argv[++i]));
    } else if (has_value && !std::strcmp(argv[i], "--seed")) {
      seed = std::strtoull(argv[++i], nullptr, 10);
    } else if (has_value && !std::strcmp(argv[i], "--dump")) {
      dump_path = argv[++i];
    } else if (has_value && !std::strcmp(argv[i], "--repeats")) {
      repeats = std::max(1, std::atoi(argv[++i]));
    } else if (has_value && !std::strcmp(argv[i], "--majority")) {
      std::vector<std::string> members;
      std::string list = argv[++i];
      for (std::size_t start = 0; start <= list.size();) {
        const std::size_t comma = std::min(list.find(',', start), list.size());
        members.push_back(list.substr(start, comma - start));
        start = comma + 1;
      }
      extra_majorities.push_back(std::move(members));
    } else {
      std::fprintf(stderr, "usage: gazemill_bench_align [--trials N] [--seed S] [--repeats R] [--majority a,b,c ...] [--combined-only] [--dump FILE]\n");
      return 2;
    }
  }
  const sim::PassageParams passage_params;
  const double h = passage_params.line_spacing_px;
  std::mt19937_64 passage_rng(seed);
  std::vector<sim::Passage> passages;
  for (int i = 0; i < 30; ++i) passages.push_back(sim::generate_passage(passage_params, passage_rng));

  std::vector<Method> methods;
  for (const auto& name : drift_method_names()) {
    methods.push_back({name, make_drift_corrector(name)});
  }
  for (std::size_t k = 0; k < extra_majorities.size(); ++k) {
    std::string label = "maj" + std::to_string(k + 1), list;
    for (const auto& m : extra_majorities[k]) list += (list.empty() ? "" : ", ") + m;
    std::printf("%s = majority of %s\n", label.c_str(), list.c_str());
    methods.push_back({label, make_majority_corrector(extra_majorities[k])});
  }
  std::printf("Share of fixations on their true line; %d simulated passages of 5-12 lines, %g px apart, %d trials per row.\n",
              static_cast<int>(passages.size()), h, trials_per_level);
  std::printf("majority = %s", kDefaultDriftMethod);
  std::string members;
  for (const auto& m : default_majority_members()) members += (members.empty() ? "" : ", ") + m;
  std::printf(" of %s (ties to the first listed).\n", members.c_str());

  struct Sweep {
    const char* name;
    std::vector<double> levels;
    std::function<void(sim::ScanpathDistortion&, double)> set;
  };
  const std::vector<Sweep> sweeps = {
      {"noise_sd_px", {0, 5, 10, 15, 20}, [](sim::ScanpathDistortion& d, double v) { d.noise_sd_px = v; }},
      {"slope", {0, 0.02, 0.04, 0.06, 0.08, 0.1, -0.05, -0.1}, [](sim::ScanpathDistortion& d, double v) { d.slope = v; }},
      {"shift", {0, 0.04, 0.08, 0.12, 0.16, 0.2, -0.1, -0.2}, [](sim::ScanpathDistortion& d, double v) { d.shift = v; }},
      {"offset_px", {0, 10, 20, 30, 40, 50, -25, -50}, [](sim::ScanpathDistortion& d, double v) { d.offset_px = v; }},
      {"within_p", {0, 0.2, 0.4, 0.6, 0.8, 1.0},
       [](sim::ScanpathDistortion& d, double v) { d.within_line_regression_probability = v; }},
      {"between_p", {0, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0},
       [](sim::ScanpathDistortion& d, double v) { d.between_line_regression_probability = v; }},
  };
  std::uint64_t trial_seed = seed + 1;
  for (const auto& sweep : combined_only ? std::vector<Sweep>{} : sweeps) {
    std::printf("\n");
    print_header(sweep.name, methods);
    for (double level : sweep.levels) {
      const auto trials = make_trials(
          passages, trials_per_level,
          [&](std::mt19937_64&) {
            sim::ScanpathDistortion d;
            sweep.set(d, level);
            return d;
          },
          trial_seed++);
      print_row(format(level), methods, trials);
    }
  }

  // Moderate drift, every kind at once, each trial its own draw.
  const DistortionDraw moderate = [h](std::mt19937_64& rng) {
    std::uniform_real_distribution<double> u(-1.0, 1.0);
    sim::ScanpathDistortion d;
    d.noise_sd_px = 0.15 * h * (0.5 + 0.5 * u(rng));
    d.slope = 0.03 * u(rng);
    d.shift = 0.05 * u(rng);
    d.offset_px = 0.3 * h * u(rng);
    d.within_line_regression_probability = 0.1;
    d.between_line_regression_probability = 0.01;
    return d;
  };
  // A mix of trials, each with one distortion at a level drawn over its whole range.
  const DistortionDraw mixed = [h](std::mt19937_64& rng) {
    std::uniform_real_distribution<double> u(0.0, 1.0);
    sim::ScanpathDistortion d;
    const int kind = std::uniform_int_distribution<int>(0, 5)(rng);
    const double sign = u(rng) < 0.5 ? -1.0 : 1.0;
    switch (kind) {
      case 0: d.noise_sd_px = 0.4 * h * u(rng); break;
      case 1: d.slope = sign * 0.1 * u(rng); break;
      case 2: d.shift = sign * 0.2 * u(rng); break;
      case 3: d.offset_px = sign * h * u(rng); break;
      case 4: d.within_line_regression_probability = u(rng); break;
      default: d.between_line_regression_probability = u(rng); break;
    }
    return d;
  };
  std::printf("\n");
  print_header("combined", methods);
  print_row("moderate", methods, make_trials(passages, 5 * trials_per_level, moderate, trial_seed++));
  const auto mixed_trials = make_trials(passages, 5 * trials_per_level, mixed, trial_seed++);
  print_row("mixed", methods, mixed_trials);
  std::printf("moderate: each trial noise SD 0.075-0.15 line spacings, |slope| <= 0.03, |shift| <= 0.05,\n"
              "          |offset| <= 0.3 line spacings, within-line regressions 0.1, between-line 0.01.\n"
              "mixed:    each trial one distortion, drawn uniformly over its whole range (either sign).\n");

  // Does the default's confidence find the trials it gets wrong? Mixed trials by confidence band.
  {
    const auto def = make_drift_corrector(kDefaultDriftMethod);
    const double bands[] = {0.0, 0.7, 0.75, 0.8, 0.9, 1.0001};
    std::printf("\n%s's confidence on the mixed trials:\n  confidence   trials  under 99%% right  fixations right\n", kDefaultDriftMethod);
    for (std::size_t b = 0; b + 1 < std::size(bands); ++b) {
      double right = 0, all = 0;
      int trials = 0, poor = 0;
      for (const auto& t : mixed_trials) {
        const DriftOutput out = def->correct(t.input);
        const double c = out.fit.at("confidence");
        if (c < bands[b] || c >= bands[b + 1]) continue;
        ++trials;
        double trial_right = 0;
        for (std::size_t i = 0; i < out.line.size(); ++i) trial_right += out.line[i] == t.true_line[i] ? 1 : 0;
        poor += trial_right < 0.99 * static_cast<double>(out.line.size()) ? 1 : 0;
        right += trial_right;
        all += static_cast<double>(out.line.size());
      }
      std::printf("  %.2f-%.2f  %7d  %15d  %14.1f%%\n", bands[b], std::min(1.0, bands[b + 1]), trials, poor,
                  all > 0 ? 100.0 * right / all : 0.0);
    }
  }

  // Speed: every trial of a 40-participant x 30-passage study, moderate drift.
  const auto study = make_trials(passages, 40 * 30, moderate, trial_seed++);
  if (dump_path) {
    std::FILE* out = std::fopen(dump_path, "w");
    if (!out) {
      std::fprintf(stderr, "cannot write %s\n", dump_path);
      return 2;
    }
    dump_outputs(out, "mixed", methods, mixed_trials);
    dump_outputs(out, "study", methods, study);
    std::fclose(out);
  }
  if (combined_only) return 0;
  std::size_t fixations = 0;
  for (const auto& t : study) fixations += t.input.fixations.size();
  std::printf("\nTime to align a 40 x 30 study (%zu trials, %zu fixations), median of %d runs:\n", study.size(), fixations, repeats);
  for (const auto& m : methods) {
    std::vector<double> seconds;
    for (int r = 0; r < repeats; ++r) {
      const auto t0 = std::chrono::steady_clock::now();
      std::size_t lines = 0;
      for (const auto& t : study) lines += m.corrector->correct(t.input).line.size();
      seconds.push_back(std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
      if (lines != fixations) return 1;
    }
    std::sort(seconds.begin(), seconds.end());
    std::printf("  %-9s %8.3f s\n", m.label.c_str(), seconds[seconds.size() / 2]);
  }
  return 0;
}
