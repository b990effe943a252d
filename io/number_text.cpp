#include "io/number_text.h"

#include <charconv>
#include <cmath>
#include <cstdint>

namespace gazemill {
namespace {

std::string with_precision(double v, std::chars_format format, int precision) {
  char buffer[384];  // the widest "%.Nf" of a double (1e308 and some decimals) fits
  const auto r = std::to_chars(buffer, buffer + sizeof buffer, v, format, precision);
  if (r.ec != std::errc()) return "NA";  // unreachable for the precisions used; never a wrong number
  return std::string(buffer, r.ptr);
}

constexpr double kPowersOfTen[] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
                                   1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};

// v x 10^decimals rounded to the nearest integer, as printf rounds v's exact
// value, when that can be decided from the double product: its error is at
// most half a unit in its last place, so only products within a few units of
// a half are left to the exact (slow) path. Also false when out of range.
bool scaled_integer(double v, int decimals, std::uint64_t& n) {
  if (decimals < 0 || decimals > 22 || !std::isfinite(v)) return false;
  const double x = std::fabs(v) * kPowersOfTen[decimals];  // 10^k is exact for k <= 22
  if (!(x < 4e15)) return false;
  const double whole = std::floor(x);
  const double fraction = x - whole;  // exact: x and whole are within 2^52
  const double tolerance = x * 0x1p-50 + 0x1p-60;
  if (std::fabs(fraction - 0.5) <= tolerance) return false;
  n = static_cast<std::uint64_t>(whole) + (fraction > 0.5 ? 1 : 0);
  return true;
}

// n / 10^decimals with exactly `decimals` digits after the point.
std::string decimal_text(bool negative, std::uint64_t n, int decimals) {
  char digits[24];
  const auto r = std::to_chars(digits, digits + sizeof digits, n);
  const int length = static_cast<int>(r.ptr - digits);
  std::string out;
  out.reserve(static_cast<std::size_t>(length + decimals + 3));
  if (negative) out += '-';
  if (length <= decimals) {
    out += "0.";
    out.append(static_cast<std::size_t>(decimals - length), '0');
    out.append(digits, digits + length);
  } else {
    out.append(digits, digits + length - decimals);
    if (decimals > 0) {
      out += '.';
      out.append(digits + length - decimals, digits + length);
    }
  }
  return out;
}

}  // namespace

std::string fixed_text(double v, int decimals) {
  std::uint64_t n = 0;
  if (scaled_integer(v, decimals, n)) return decimal_text(std::signbit(v), n, decimals);
  return with_precision(v, std::chars_format::fixed, decimals);
}

std::string general_text(double v, int significant) {
  // printf's "%.Pg" writes fixed notation with P - 1 - X decimals, trailing
  // zeros dropped, where X is the decimal exponent of v rounded to P digits,
  // when -4 <= X < P; otherwise exponent notation (left to the exact path).
  const double a = std::fabs(v);
  if (significant >= 1 && significant <= 15 && std::isfinite(v)) {
    if (a == 0) return std::signbit(v) ? "-0" : "0";
    // Whole numbers with at most P digits (most table values: milliseconds,
    // counts) print as the integer itself: no exponent, no point.
    if (a < kPowersOfTen[significant] && a == std::floor(a)) {
      char digits[24];
      const auto r = std::to_chars(digits, digits + sizeof digits, static_cast<std::int64_t>(v));
      return std::string(digits, r.ptr);
    }
    if (a >= 1e-4 && a < kPowersOfTen[significant]) {
      const int exponent = static_cast<int>(std::floor(std::log10(a)));
      const int decimals = significant - 1 - exponent;
      std::uint64_t n = 0;
      // n must have exactly P digits: otherwise the exponent guess was off or
      // rounding carried into the next power of ten, and the exact path decides.
      if (scaled_integer(v, decimals, n) && n >= static_cast<std::uint64_t>(kPowersOfTen[significant - 1]) &&
          n < static_cast<std::uint64_t>(kPowersOfTen[significant])) {
        std::string out = decimal_text(std::signbit(v), n, decimals);
        if (decimals > 0) {
          while (out.back() == '0') out.pop_back();
          if (out.back() == '.') out.pop_back();
        }
        return out;
      }
    }
  }
  return with_precision(v, std::chars_format::general, significant);
}

}  // namespace gazemill
