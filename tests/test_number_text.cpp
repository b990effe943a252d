// Table numbers against the C library's printf ("%.Nf", "%.Ng"), the
// reference the tables were written with before (fmt follows printf's
// rounding and notation for these specifiers; ISO C 7.21.6.1).
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <limits>
#include <random>
#include <string>
#include <vector>

#include "io/number_text.h"

namespace gazemill {
namespace {

std::string printf_text(const char* format, int precision, double v) {
  char buffer[512];
  std::snprintf(buffer, sizeof buffer, format, precision, v);
  return buffer;
}

std::vector<double> awkward_values() {
  std::vector<double> v{0.0,      -0.0,     1.0,      -1.0,     0.5,      0.0005,   0.00049999, 0.0001,   0.00009999, 1e-4,
                        999999.5, 999999.4, 1e6,      1234567,  0.125,    2.675,    1.0005,     246.0,    1.50118,    4.50098,
                        1e-300,   1e300,    -273.15,  12345.65, 99999.95, 0.3,      1.0 / 3,    2.0 / 3,  1e15,       123456789.125,
                        std::numeric_limits<double>::min(), std::numeric_limits<double>::max(), std::numeric_limits<double>::denorm_min(),
                        std::numeric_limits<double>::infinity(), -std::numeric_limits<double>::infinity(), std::nan("")};
  // Values at and beside halfway points of the printed digits, where rounding decides.
  for (int k = 0; k < 2000; ++k) {
    const double half = (k + 0.5) / 1000.0;
    v.insert(v.end(), {half, -half, std::nextafter(half, 0.0), std::nextafter(half, 1.0), half * 1000, (k + 0.5) / 8});
  }
  for (double p = 1e-5; p < 1e17; p *= 10) v.insert(v.end(), {p, std::nextafter(p, 0.0), std::nextafter(p, 1e300), -p, p * 0.9999995, p * 0.99999949});
  return v;
}

TEST(NumberText, FixedMatchesPrintf) {
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> ms(-5000, 5000);
  std::uniform_int_distribution<int> exponent(-12, 12);
  std::vector<double> values = awkward_values();
  for (int i = 0; i < 200000; ++i) values.push_back(ms(rng));
  for (int i = 0; i < 200000; ++i) values.push_back(std::round(ms(rng) * 1000) / 1000);  // microseconds as ms
  for (int i = 0; i < 50000; ++i) values.push_back(ms(rng) * std::pow(10.0, exponent(rng)));
  for (int decimals : {0, 1, 2, 3, 4, 6, 9}) {
    for (double v : values) ASSERT_EQ(fixed_text(v, decimals), printf_text("%.*f", decimals, v)) << v << " to " << decimals;
  }
}

TEST(NumberText, GeneralMatchesPrintf) {
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> unit(-1, 1);
  std::uniform_int_distribution<int> exponent(-8, 9);
  std::vector<double> values = awkward_values();
  for (int i = 0; i < 300000; ++i) values.push_back(unit(rng) * std::pow(10.0, exponent(rng)));
  for (int i = 0; i < 100000; ++i) values.push_back(std::round(unit(rng) * 1e5) / 100);  // two-decimal figures
  for (int i = 0; i < 100000; ++i) values.push_back(std::round(unit(rng) * std::pow(10.0, exponent(rng) + 7)));  // whole numbers, up to 1e16
  for (double p = 1; p < 1e17; p *= 10) values.insert(values.end(), {p - 1, p, p + 1, -(p - 1), -p});  // around each power of ten
  for (int significant : {1, 3, 6, 9, 15}) {
    for (double v : values) ASSERT_EQ(general_text(v, significant), printf_text("%.*g", significant, v)) << v << " to " << significant;
  }
}

}  // namespace
}  // namespace gazemill
