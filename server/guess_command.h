#pragma once
// `foothold guess`: the seeded starts a fit would use, with their names, and no fit.

#include <ostream>
#include <string>
#include <vector>

#include "server/fit_service.h"

namespace foothold {

// One seeded start as `foothold guess` lists it: its origin ("user", "guess:<name>"), its
// parameters and the rss there (NaN where the model is not finite).
struct ListedGuess {
  std::string origin;
  Eigen::VectorXd parameters;
  double rss = 0;
};

// The seeded starts of a prepared fit, in the order the multistart runs them.
std::vector<ListedGuess> ListGuesses(const PreparedFit& prepared);

// `args` are the words after "guess": the same DATA and model flags as `foothold fit`.
// Exit 0 with the candidates, 2 on bad input (one line on `err`).
int RunGuessCommand(const std::vector<std::string>& args, std::ostream& out, std::ostream& err);

}  // namespace foothold
