// k-means as cluster and split use it. Expected groups worked by hand from
// the k-means criterion (least summed squared distance to the group means;
// Lloyd 1982, common practice).

#include <gtest/gtest.h>

#include <functional>

#include "alignment/k_means.h"

using namespace gazemill;

// {1, 2, 10, 11, 20} in three groups: {1, 2} {10, 11} {20} costs 0.5 + 0.5 +
// 0 = 1; every other split costs more (e.g. {1, 2, 10} {11} {20} about 48.7,
// {1} {2, 10, 11} {20} about 48.7). Values in scrambled order to check that
// groups follow the values, numbered upwards.
TEST(KMeans1d, HandWorkedThreeGroups) {
  EXPECT_EQ(k_means_1d({20, 1, 11, 2, 10}, 3), (std::vector<int>{2, 0, 1, 0, 1}));
}

// Equal values belong together; more groups than values leave each value
// its own group; one group takes everything.
TEST(KMeans1d, EdgeCases) {
  EXPECT_EQ(k_means_1d({5, 5, 9, 9, 9}, 2), (std::vector<int>{0, 0, 1, 1, 1}));
  EXPECT_EQ(k_means_1d({5, 3}, 4), (std::vector<int>{1, 0}));
  EXPECT_EQ(k_means_1d({5, 3, 8}, 1), (std::vector<int>{0, 0, 0}));
  EXPECT_TRUE(k_means_1d({}, 3).empty());
}

// Against every split of a sorted list into k runs (exhaustive search here,
// common practice): the optimum in one dimension is a split into runs, so the
// exhaustive minimum is the true one.
TEST(KMeans1d, MatchesExhaustiveSearchOnSmallLists) {
  const std::vector<double> v{1, 1.5, 4, 4.2, 4.4, 9, 9.5, 15, 16, 30};
  auto cost = [&](const std::vector<int>& g, int k) {
    double total = 0;
    for (int c = 0; c < k; ++c) {
      double s = 0, n = 0;
      for (std::size_t i = 0; i < v.size(); ++i) {
        if (g[i] == c) s += v[i], n += 1;
      }
      for (std::size_t i = 0; i < v.size(); ++i) {
        if (g[i] == c) total += (v[i] - s / n) * (v[i] - s / n);
      }
    }
    return total;
  };
  for (int k = 2; k <= 4; ++k) {
    double best = 1e300;
    // Cut positions c1 < c2 < c3 in 1..9 (runs of a sorted list).
    std::vector<int> cuts(static_cast<std::size_t>(k - 1));
    std::function<void(int, int)> walk = [&](int depth, int from) {
      if (depth == k - 1) {
        std::vector<int> g(v.size());
        int group = 0;
        for (std::size_t i = 0; i < v.size(); ++i) {
          while (group < k - 1 && static_cast<int>(i) >= cuts[static_cast<std::size_t>(group)]) ++group;
          g[i] = group;
        }
        best = std::min(best, cost(g, k));
        return;
      }
      for (int c = from; c < static_cast<int>(v.size()); ++c) {
        cuts[static_cast<std::size_t>(depth)] = c;
        walk(depth + 1, c + 1);
      }
    };
    walk(0, 1);
    EXPECT_NEAR(cost(k_means_1d(v, k), k), best, 1e-9) << k;
  }
}

// Two-means of saccade vectors, split's use: two leftward sweeps among
// rightward steps. Started from the most leftward and the most rightward
// point, the groups are the sweeps (0) and the steps (1) at once and stay so.
TEST(TwoMeans2d, SweepsAndSteps) {
  EXPECT_EQ(two_means_2d({{200, 0}, {-800, 50}, {210, 5}, {190, -5}, {-780, 40}}), (std::vector<int>{1, 0, 1, 1, 0}));
  EXPECT_EQ(two_means_2d({{3, 3}, {3, 3}}), (std::vector<int>{1, 1}));
  EXPECT_EQ(two_means_2d({{3, 3}}), (std::vector<int>{1}));
}
