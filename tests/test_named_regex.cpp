#include <gtest/gtest.h>

#include "pipeline/named_regex.h"

using gazemill::NamedRegex;

TEST(NamedRegex, CapturesByName) {
  NamedRegex re(R"(^TRIAL (?<trial>\d+) ITEM (?<item>\w+)$)");
  auto m = re.search("TRIAL 12 ITEM harbour");
  ASSERT_TRUE(m);
  EXPECT_EQ(m->at("trial"), "12");
  EXPECT_EQ(m->at("item"), "harbour");
  EXPECT_FALSE(re.search("TRIAL x ITEM y"));
}

TEST(NamedRegex, UnnamedAndNonCapturingGroupsKeepNumbering) {
  // Group 1 is unnamed, (?:...) does not count, escaped and bracketed parens are literal.
  NamedRegex re(R"((a|b)(?:c)\((?<x>[()]+)\)(?<y>\d))");
  auto m = re.search("bc(()))7");
  ASSERT_TRUE(m);
  EXPECT_EQ(m->at("x"), "())");
  EXPECT_EQ(m->at("y"), "7");
}

TEST(NamedRegex, OptionalGroupAbsentWhenUnmatched) {
  NamedRegex re(R"(sub-(?<participant>\w+?)(?:_ses-(?<session>\w+))?$)");
  auto m = re.search("sub-07");
  ASSERT_TRUE(m);
  EXPECT_EQ(m->at("participant"), "07");
  EXPECT_EQ(m->count("session"), 0u);
}

TEST(NamedRegex, RejectsMalformedPatterns) {
  EXPECT_THROW(NamedRegex("(?<>x)"), std::invalid_argument);
  EXPECT_THROW(NamedRegex("(?<a x)"), std::invalid_argument);
  EXPECT_THROW(NamedRegex("(unclosed"), std::invalid_argument);
}
