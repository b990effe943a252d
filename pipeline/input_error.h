#pragma once
// The one exception type for bad input: it always names where (file, line,
// field) and what was expected, so the user can fix the file.

#include <cstddef>
#include <stdexcept>
#include <string>

namespace gazemill {

struct InputLocation {
  std::string file;
  std::size_t line = 0;  // 1-based; 0 when the problem is not tied to a line
  std::string field;     // column name, protocol key or dataset path; may be empty
};

class InputError : public std::runtime_error {
 public:
  InputError(InputLocation where, const std::string& problem);
  const InputLocation& where() const { return where_; }
  const std::string& problem() const { return problem_; }

 private:
  InputLocation where_;
  std::string problem_;
};

}  // namespace gazemill
