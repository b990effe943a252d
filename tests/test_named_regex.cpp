#include <gtest/gtest.h>

#include <stdexcept>
#include <string>

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

// std::regex (libstdc++) reads counts into an int without an overflow check;
// a fuzzer found "\8888888888888888888" in a protocol pattern.
TEST(NamedRegex, RejectsCountsAndPatternsTooLongToCompileSafely) {
  EXPECT_THROW(NamedRegex(R"(\8888888888888888888)"), std::invalid_argument);
  EXPECT_THROW(NamedRegex("a{99999999999}"), std::invalid_argument);
  EXPECT_THROW(NamedRegex("a{1,99999}"), std::invalid_argument);
  EXPECT_THROW(NamedRegex(std::string(1001, 'a')), std::invalid_argument);
  EXPECT_NO_THROW(NamedRegex(R"(^T(?<trial>\d{1,4}) [a-z]{2,3}$)"));
  EXPECT_NO_THROW(NamedRegex(R"(\\12345)"));  // an escaped backslash, then digits
  EXPECT_NO_THROW(NamedRegex(std::string(1000, 'a')));
}

// The matcher recurses per character matched: with an 8 MiB stack a 26 000-
// character message crashed a search for ".*". Long texts now match on a
// stack sized for them; absurd ones are refused with a reason.
TEST(NamedRegex, LongTextsMatchWithoutOverflowingTheStack) {
  NamedRegex re(R"(^TRIAL (?<trial>\d+) (?<rest>.*)$)");
  const std::string text = "TRIAL 7 " + std::string(60000, 'w');
  const auto m = re.search(text);
  ASSERT_TRUE(m.has_value());
  EXPECT_EQ(m->at("trial"), "7");
  EXPECT_EQ(m->at("rest").size(), 60000u);
  EXPECT_THROW(re.search(std::string(20000000, 'w')), std::length_error);
}
