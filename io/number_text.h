#pragma once
// Numbers as table text, exactly as printf's "%.Nf" and "%.Ng" would write
// them (std::to_chars is specified to match), without parsing a format
// string per value: the tables hold millions of numbers.

#include <string>

namespace gazemill {

/// v with `decimals` digits after the point ("%.{decimals}f").
std::string fixed_text(double v, int decimals);
/// v with `significant` significant digits, trailing zeros dropped ("%.{significant}g").
std::string general_text(double v, int significant);

}  // namespace gazemill
