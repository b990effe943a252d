#pragma once
// Values of one kind (a factor's levels, the regions' roles) that are far
// rarer than the commonest: a level in 3 trials beside levels in 600 is
// likelier a typo than a design (common practice, no source).

#include <cstddef>
#include <map>
#include <string>
#include <vector>

namespace gazemill {

/// The values counted under a tenth as often as the commonest, in order.
std::vector<std::string> rare_values(const std::map<std::string, std::size_t>& counts);

/// "a: 600, b: 3", for a message.
std::string count_listing(const std::map<std::string, std::size_t>& counts);

}  // namespace gazemill
