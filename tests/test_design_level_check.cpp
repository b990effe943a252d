// A design factor's values in the trials, checked before cleaning: a typo in
// one trial's message would otherwise be a design cell of its own in every
// audit, aggregate and report (a newcomer's trial; common practice, no source).

#include <gtest/gtest.h>

#include "app/design_level_check.h"
#include "pipeline/input_error.h"
#include "pipeline/rare_values.h"

using namespace gazemill;

namespace {

RecordingEvents recording(const std::string& id, const std::vector<std::string>& frequencies) {
  RecordingEvents r;
  r.meta.id = id;
  for (std::size_t k = 0; k < frequencies.size(); ++k) {
    Trial t;
    t.id = std::to_string(k + 1);
    if (!frequencies[k].empty()) t.variables["frequency"] = frequencies[k];
    r.meta.trials.push_back(t);
  }
  return r;
}

}  // namespace

TEST(DesignLevelCheck, AValueNotListedIsAnErrorNamingTheTrial) {
  Protocol p;
  p.path = "study.toml";
  p.design.factors = {"frequency"};
  // Trial 3 of p2 is a passage: no frequency, outside the design.
  const std::vector<RecordingEvents> study = {recording("p1", {"rare", "frequent"}), recording("p2", {"frequent", "rrae", ""})};
  EXPECT_NO_THROW(check_design_levels(p, study));  // no levels listed: a warning at most

  p.design.levels["frequency"] = {"frequent", "rare"};
  p.design.levels_lines["frequency"] = 21;
  try {
    check_design_levels(p, study);
    FAIL() << "'rrae' passed";
  } catch (const InputError& e) {
    EXPECT_EQ(e.where().line, 21u);
    EXPECT_EQ(e.where().field, "design.levels.frequency");
    EXPECT_NE(std::string(e.what()).find("trial 2 of recording p2 has frequency = 'rrae'"), std::string::npos) << e.what();
  }
  p.design.levels["frequency"] = {"frequent", "rare", "rrae"};
  EXPECT_NO_THROW(check_design_levels(p, study));
}

// Under a tenth of the commonest count is rare (our threshold; common
// practice, no source): 3 beside 600 is, 60 beside 600 is not (not under).
TEST(RareValues, UnderATenthOfTheCommonest) {
  EXPECT_EQ(rare_values({{"a", 600}, {"b", 3}, {"c", 60}, {"d", 59}}), (std::vector<std::string>{"b", "d"}));
  EXPECT_TRUE(rare_values({{"only", 1}}).empty());
  EXPECT_TRUE(rare_values({}).empty());
  EXPECT_EQ(count_listing({{"a", 600}, {"b", 3}}), "a: 600, b: 3");
}
