#pragma once
// One exception hierarchy for the whole tool, rooted at swaybound::Error.
//   SpecError   bad input at the loading edge: every problem found, each with file:line:column.
//   UsageError  bad command-line input: an option's value, options that conflict, a file named on
//               the command line that is not there; names the option (a spec's content is SpecError).
//   RunError    a run that cannot go on for a reason outside the input (I/O, resources).
// Argument checks use SWAYBOUND_REQUIRE, which is never compiled out and prints the values.
#include <stdexcept>
#include <string>
#include <vector>

#include <fmt/format.h>

namespace swaybound {

class Error : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

/// Position in a source file, 1-based; line 0 means "the file as a whole".
struct Mark {
  int line = 0;
  int column = 0;
};

/// One problem in a spec: where it is, which key, what is wrong and what is allowed.
struct Diagnostic {
  Mark mark;
  std::string path;     ///< key path, e.g. links[2].pivot.damper.exponent
  std::string message;  ///< what is wrong, with the offending value
  std::string fix;      ///< what is allowed / how to fix it
};

class SpecError : public Error {
 public:
  SpecError(std::string file, std::vector<Diagnostic> diagnostics);
  const std::string& file() const { return file_; }
  const std::vector<Diagnostic>& diagnostics() const { return diagnostics_; }
  /// "file:line:col: path: message (fix)" for one diagnostic.
  static std::string format(const std::string& file, const Diagnostic& d);

 private:
  std::string file_;
  std::vector<Diagnostic> diagnostics_;
};

/// Bad command-line input, told apart from bad spec content (SpecError): `option` names what was
/// given ("--duration", "SPEC"), `message` what is wrong with it and `fix` what to give instead.
/// what() is "OPTION: MESSAGE" (and "; FIX" when there is one).
class UsageError : public Error {
 public:
  UsageError(std::string option, std::string message, std::string fix = {});
  const std::string& option() const { return option_; }
  const std::string& message() const { return message_; }
  const std::string& fix() const { return fix_; }

 private:
  std::string option_, message_, fix_;
};

class RunError : public Error {
 public:
  using Error::Error;
};

/// Thrown by SWAYBOUND_REQUIRE: a violated precondition of a library call.
class ArgumentError : public Error {
 public:
  using Error::Error;
};

}  // namespace swaybound

/// Precondition check that is never compiled out; `...` is a fmt message naming the values.
#define SWAYBOUND_REQUIRE(cond, ...)                                                      \
  do {                                                                                    \
    if (!(cond))                                                                          \
      throw ::swaybound::ArgumentError(fmt::format("{}:{}: requirement '{}' failed: {}", \
                                                   __FILE__, __LINE__, #cond,             \
                                                   fmt::format(__VA_ARGS__)));            \
  } while (false)
