// GuessOptions::Validate: the one definition shared by the family and generic guessers.

#include <sstream>

#include "heuristics/guess.h"

namespace foothold {

bool GuessOptions::Validate(std::string* error) const {
  if (max_candidates >= 1) return true;
  if (error != nullptr) {
    std::ostringstream message;
    message << "max_candidates = " << max_candidates << ": must be >= 1";
    *error = message.str();
  }
  return false;
}

}  // namespace foothold
