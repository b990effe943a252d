// The drift-method registry: names, parameters with their documented
// defaults, and the errors for unknown names and bad values.

#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "alignment/drift_registry.h"

using namespace gazemill;

namespace {

std::string error_of(const std::string& name, const std::map<std::string, double>& params) {
  try {
    make_drift_corrector(name, params);
  } catch (const std::invalid_argument& e) {
    return e.what();
  }
  return "no error";
}

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

}  // namespace

// The ten methods of Carr et al. (2022), by their published names, and the majority.
TEST(DriftRegistry, KnowsTheTenPublishedMethodsAndTheMajority) {
  const std::vector<std::string> expected{"attach", "chain", "cluster", "compare", "merge", "regress",
                                          "segment", "split", "stretch", "warp", "majority"};
  EXPECT_EQ(drift_method_names(), expected);
  for (const auto& name : expected) EXPECT_EQ(make_drift_corrector(name)->name(), name);
}

TEST(DriftRegistry, UnknownNamesAndParametersAreNamed) {
  const std::string unknown = error_of("warpp", {});
  EXPECT_TRUE(contains(unknown, "warpp")) << unknown;
  EXPECT_TRUE(contains(unknown, "warp,")) << unknown;  // the known names are listed
  const std::string param = error_of("chain", {{"x_threshold_px", 10}});
  EXPECT_TRUE(contains(param, "x_threshold_px")) << param;
  EXPECT_TRUE(contains(param, "x_threshold_font_heights")) << param;
  EXPECT_TRUE(contains(error_of("attach", {{"slope", 1}}), "takes none"));
  const std::string member = error_of("majority", {{"warp.band_px", 3}});
  EXPECT_TRUE(contains(member, "band_px")) << member;
  const std::string stray = error_of("majority", {{"stretch.min_stretch", 0.8}});
  EXPECT_TRUE(contains(stray, "stretch.min_stretch")) << stray;  // stretch is no default member
  EXPECT_TRUE(contains(error_of("majority", {{"x_threshold_font_heights", 3}}), "<member>.<parameter>"));
}

TEST(DriftRegistry, ImpossibleValuesAreRejected) {
  EXPECT_TRUE(contains(error_of("chain", {{"x_threshold_font_heights", -1}}), "x_threshold_font_heights"));
  EXPECT_TRUE(contains(error_of("chain", {{"y_threshold_font_heights", std::numeric_limits<double>::infinity()}}), "finite"));
  EXPECT_TRUE(contains(error_of("regress", {{"max_slope", std::nan("")}}), "max_slope"));
  EXPECT_TRUE(contains(error_of("regress", {{"min_sd_px", 30}}), "min_sd_px"));
  EXPECT_TRUE(contains(error_of("stretch", {{"min_stretch", 1.2}}), "min_stretch"));
  EXPECT_TRUE(contains(error_of("compare", {{"candidate_lines", 2.5}}), "whole number"));
  EXPECT_THROW(make_majority_corrector({}), std::invalid_argument);
  EXPECT_THROW(make_majority_corrector({"warp", "majority"}), std::invalid_argument);
  EXPECT_THROW(make_majority_corrector({"warp", "nope"}), std::invalid_argument);
}

// Defaults with their sources: chain's x and y thresholds of 20 and 2 font
// heights are those Carr et al. (2022, "Chain") report (read in the paper);
// regress's slope bound 0.1 and SD bounds 1-20 px are from memory of the
// same paper; the rest are our choices (see each header).
TEST(DriftRegistry, ParametersReportTheDocumentedDefaults) {
  const auto chain = make_drift_corrector("chain")->parameters();
  EXPECT_DOUBLE_EQ(chain.at("x_threshold_font_heights"), 20.0);
  EXPECT_DOUBLE_EQ(chain.at("y_threshold_font_heights"), 2.0);
  const auto regress = make_drift_corrector("regress")->parameters();
  EXPECT_DOUBLE_EQ(regress.at("max_slope"), 0.1);
  EXPECT_DOUBLE_EQ(regress.at("min_sd_px"), 1.0);
  EXPECT_DOUBLE_EQ(regress.at("max_sd_px"), 20.0);
  const auto set = make_drift_corrector("chain", {{"x_threshold_font_heights", 10}})->parameters();
  EXPECT_DOUBLE_EQ(set.at("x_threshold_font_heights"), 10.0);
  // A majority reports its members' parameters under their names.
  const auto majority = make_drift_corrector("majority", {{"chain.y_threshold_font_heights", 3}})->parameters();
  EXPECT_DOUBLE_EQ(majority.at("chain.y_threshold_font_heights"), 3.0);
  EXPECT_DOUBLE_EQ(majority.at("member_count"), static_cast<double>(default_majority_members().size()));
}
