#include "pipeline/named_regex.h"

#include <pthread.h>

#include <algorithm>
#include <cstring>
#include <exception>
#include <stdexcept>

namespace gazemill {
namespace {

bool is_name_char(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_';
}

bool is_digit(char c) { return c >= '0' && c <= '9'; }

// libstdc++'s regex compiler recurses per pattern element and reads counts
// into an int without an overflow check: a 100 000-character pattern
// overflowed the stack, and "\8888888888888888888" (found by fuzzing) or
// "a{99999999999}" overflow the int. No message or file-name pattern needs
// either.
constexpr std::size_t kMaxPatternChars = 1000;
constexpr std::size_t kMaxCountDigits = 4;

// libstdc++'s matcher recurses once or more per character it consumes, more
// for each group or quantifier it is nested in: measured with GCC 12, about
// 320 bytes a character plus about 300 for each level, so an 8 MiB stack
// ends between 3 000 and 26 000 characters. Longer texts are searched on a
// thread whose stack is sized from this estimate (bytes, generous).
std::size_t search_stack_bytes(std::size_t text_chars, std::size_t nesting) {
  return (text_chars + 64) * (nesting + 2) * 512;
}
constexpr std::size_t kStackOfCaller = std::size_t{2} << 20;  // well within any thread's own
constexpr std::size_t kMaxSearchStack = std::size_t{1} << 30;  // virtual; pages are touched only as used

}  // namespace

NamedRegex::NamedRegex(const std::string& pattern) : pattern_(pattern) {
  if (pattern.size() > kMaxPatternChars) {
    throw std::invalid_argument("a pattern of " + std::to_string(pattern.size()) + " characters is longer than the " +
                                std::to_string(kMaxPatternChars) + " allowed");
  }
  // Counts ({n,m}) and back-references (\n) must be short numbers.
  const auto check_number_at = [&](std::size_t j) {
    std::size_t k = j;
    while (k < pattern.size() && is_digit(pattern[k])) ++k;
    if (k - j > kMaxCountDigits) {
      throw std::invalid_argument("the number at offset " + std::to_string(j) + " has more than " +
                                  std::to_string(kMaxCountDigits) + " digits");
    }
    return k;
  };
  for (std::size_t i = 0; i < pattern.size(); ++i) {
    const char c = pattern[i];
    if (c == '\\') {
      if (i + 1 < pattern.size() && is_digit(pattern[i + 1])) check_number_at(i + 1);
      ++i;  // the escaped character is no operator
    } else if (c == '{') {
      const std::size_t k = check_number_at(i + 1);
      if (k < pattern.size() && pattern[k] == ',') check_number_at(k + 1);
    }
    if (c == '(' || c == '*' || c == '+' || c == '?' || c == '{') ++nesting_;
  }
  // Rewrite (?<name>...) to (...) and remember which group number got which name.
  std::string plain;
  plain.reserve(pattern.size());
  std::size_t group = 0;
  bool in_class = false;
  for (std::size_t i = 0; i < pattern.size(); ++i) {
    const char c = pattern[i];
    if (c == '\\') {
      plain += c;
      if (i + 1 < pattern.size()) plain += pattern[++i];
      continue;
    }
    if (in_class) {
      if (c == ']') in_class = false;
      plain += c;
      continue;
    }
    if (c == '[') {
      in_class = true;
      plain += c;
      continue;
    }
    if (c == '(') {
      if (i + 1 < pattern.size() && pattern[i + 1] == '?') {
        if (i + 2 < pattern.size() && pattern[i + 2] == '<') {
          std::size_t j = i + 3;
          while (j < pattern.size() && is_name_char(pattern[j])) ++j;
          if (j == i + 3 || j >= pattern.size() || pattern[j] != '>') {
            throw std::invalid_argument("a named group must look like (?<name>...) at offset " +
                                        std::to_string(i));
          }
          ++group;
          std::string name = pattern.substr(i + 3, j - i - 3);
          groups_.emplace_back(group, name);
          if (std::find(names_.begin(), names_.end(), name) == names_.end()) names_.push_back(name);
          plain += '(';
          i = j;
          continue;
        }
        // (?: (?= (?! are not capturing.
      } else {
        ++group;
      }
    }
    plain += c;
  }
  try {
    regex_ = std::regex(plain, std::regex::ECMAScript);
  } catch (const std::regex_error& e) {
    throw std::invalid_argument(std::string("not a valid regular expression: ") + e.what());
  }
}

namespace {

struct SearchCall {
  const std::regex* regex;
  std::string_view text;
  std::match_results<std::string_view::const_iterator>* match;
  bool found = false;
  std::exception_ptr error;
};

void* run_search(void* arg) {
  auto* call = static_cast<SearchCall*>(arg);
  try {
    call->found = std::regex_search(call->text.begin(), call->text.end(), *call->match, *call->regex);
  } catch (...) {
    call->error = std::current_exception();
  }
  return nullptr;
}

// The search on a thread of its own with a stack of `stack_bytes`.
void search_on_big_stack(SearchCall& call, std::size_t stack_bytes) {
  pthread_attr_t attr;
  pthread_attr_init(&attr);
  int rc = pthread_attr_setstacksize(&attr, stack_bytes);
  pthread_t thread;
  if (rc == 0) rc = pthread_create(&thread, &attr, run_search, &call);
  pthread_attr_destroy(&attr);
  if (rc != 0) {
    throw std::length_error("no thread with a " + std::to_string(stack_bytes >> 20) +
                            " MiB stack for matching a text of " + std::to_string(call.text.size()) +
                            " characters: " + std::strerror(rc));
  }
  pthread_join(thread, nullptr);
  if (call.error) std::rethrow_exception(call.error);
}

}  // namespace

std::optional<std::map<std::string, std::string>> NamedRegex::search(std::string_view text) const {
  std::match_results<std::string_view::const_iterator> m;
  SearchCall call{&regex_, text, &m, false, nullptr};
  const std::size_t stack = search_stack_bytes(text.size(), nesting_);
  if (stack <= kStackOfCaller) {
    run_search(&call);
    if (call.error) std::rethrow_exception(call.error);
  } else if (stack <= kMaxSearchStack) {
    search_on_big_stack(call, stack);
  } else {
    throw std::length_error("a text of " + std::to_string(text.size()) +
                            " characters is too long to match against the pattern " + pattern_);
  }
  if (!call.found) return std::nullopt;
  std::map<std::string, std::string> out;
  for (const auto& [index, name] : groups_) {
    if (index < m.size() && m[index].matched) out[name] = m[index].str();
  }
  return out;
}

}  // namespace gazemill
