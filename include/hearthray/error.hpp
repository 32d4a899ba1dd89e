// The one exception type for bad input. Its message tells the user what to fix: which file,
// which line or surface, what was expected. Numerical trouble is never thrown: it is reported
// in the stage's result.
#pragma once

#include <stdexcept>
#include <string>

namespace hearthray {

class InputError : public std::runtime_error {
 public:
  explicit InputError(const std::string& message) : std::runtime_error(message) {}
};

}  // namespace hearthray
