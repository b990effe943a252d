#pragma once
// The float value of a plain decimal read as an integer mantissa and a count
// of decimals (512.25 is 51225 and 2), as parsing to double and narrowing to
// float gives it (the numpy/pandas path), but without a division for the
// short numbers that make up most of a gaze export.
//
// Why multiplying by the rounded 10^-d is exact here, for m < 10^7 and d <= 7.
// Let q = m / 10^d. The double product p = m * round(10^-d) is within a
// relative 2^-52 of q (two roundings). A float rounding boundary is a
// midpoint M = N / 2^j with N odd and N < 2^25. If q != M, then
// |q - M| = |m 2^j - N 10^d| / (10^d 2^j) >= 1 / (10^d 2^j), so relative to M
// the gap is at least 1 / (N 10^d) > 2^-(25 + 23.3) = 2^-48.3, far more than
// 2^-52: p lies on the same side of every midpoint as q and rounds to the
// same float. q = M is impossible: a dyadic q has at most 24 significant bits
// (it is m / 5^d over a power of two, with m / 5^d < 2^24), so it is itself a
// float. The same argument shows the double path cannot round twice wrongly,
// so both equal the float nearest to q. Longer numbers take the division.

#include <cstdint>

namespace gazemill {

namespace decimal_detail {
// All exact in double (10^22 is the last that is); the inverses are the nearest doubles.
inline constexpr double kPow10[] = {1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15};
inline constexpr double kInversePow10[] = {1e0, 1e-1, 1e-2, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7};
}  // namespace decimal_detail

/// The double nearest to +-mantissa / 10^decimals, for mantissa < 2^53 and
/// decimals <= 15: one correctly rounded division of two exact doubles.
inline double decimal_to_double(std::uint64_t mantissa, int decimals, bool negative) {
  const double v = static_cast<double>(mantissa) / decimal_detail::kPow10[decimals];
  return negative ? -v : v;
}

/// The same value narrowed to float, for mantissa < 10^15 and decimals <= 15.
inline float decimal_to_float(std::uint64_t mantissa, int decimals, bool negative) {
  if (mantissa < 10000000 && decimals <= 7) {
    const double v = static_cast<double>(mantissa) * decimal_detail::kInversePow10[decimals];
    return static_cast<float>(negative ? -v : v);
  }
  return static_cast<float>(decimal_to_double(mantissa, decimals, negative));
}

}  // namespace gazemill
