#pragma once
// Where seeded starts come from, as the engine sees it. The heuristics layer implements
// this interface (one guesser per family, the generic guesser for expressions); the engine
// never includes heuristics, it only calls these two functions.

#include <vector>

#include "engine/multistart/multistart_options.h"
#include "engine/solve/problem.h"

namespace foothold {

class StartSource {
 public:
  virtual ~StartSource() = default;
  // Seeded candidates in priority order ("user" first by convention, then
  // "guess:<name>"), each of size problem.NumParameters().
  virtual std::vector<StartCandidate> Candidates(const Problem& problem) const = 0;
  // The region for quasi-random starts. The default (an empty box) lets the driver derive
  // it from the problem's bounds and the candidates.
  virtual SearchBox Box(const Problem& problem) const { return SearchBox{}; }
};

}  // namespace foothold
