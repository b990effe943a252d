#include "pipeline/input_error.h"

namespace gazemill {
namespace {
std::string format(const InputLocation& w, const std::string& problem) {
  std::string s;
  if (w.file.empty() && w.field.rfind("--", 0) == 0) return "option '" + w.field + "': " + problem;  // a command-line option
  s.append(w.file.empty() ? "<input>" : w.file);
  if (w.line > 0) s.append(":").append(std::to_string(w.line));
  if (!w.field.empty()) s.append(": field '").append(w.field).append("'");
  s.append(": ").append(problem);
  return s;
}
}  // namespace

InputError::InputError(InputLocation where, const std::string& problem)
    : std::runtime_error(format(where, problem)), where_(std::move(where)), problem_(problem) {}

}  // namespace gazemill
