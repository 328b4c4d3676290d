// Errors the library throws; the command line prints them and maps them to exit codes.
//
// The library never prints or exits. Bad input is an `InputError` (exit status 1) that says
// where (file:line:column and the offending line), what was expected, what was found, and
// which option or profile key would fix it. Bad command-line usage is a `UsageError`
// (exit status 2). Broken invariants are asserts, not errors.
#pragma once

#include <stdexcept>
#include <string>
#include <vector>

namespace vzero {

// A place in an input file. line and column are 1-based; 0 means "not known".
struct Where {
  std::string file;
  int line = 0;
  int column = 0;
  std::string text;  // the offending line, shown under the message (may be empty)
};

class InputError : public std::runtime_error {
 public:
  // `what` is the message without the location prefix, e.g.
  // `cannot read "1,23E-4" as a number (well B7)`.
  InputError(Where where, std::string what, std::vector<std::string> fixes = {});

  const Where& where() const noexcept { return where_; }
  const std::string& message() const noexcept { return message_; }
  const std::vector<std::string>& fixes() const noexcept { return fixes_; }

  // The full text as printed, e.g.
  //   run_07.csv:14:10: cannot read "1,23E-4" as a number (well B7)
  //     line 14: 12:00:05;1,23E-4;0,98
  //     possible fix: set decimal = "," in the profile
  std::string formatted() const;

 private:
  Where where_;
  std::string message_;
  std::vector<std::string> fixes_;
};

// Wrong use of the command line or of an options struct: exit status 2.
class UsageError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace vzero
