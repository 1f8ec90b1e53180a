#pragma once
// Bounds, fixed parameters and the start point of a fit: family defaults overridden by the
// request's bounds, the request's start and fix values, and the family guesser's best
// candidate for every free parameter the request leaves without a start.

#include <Eigen/Core>
#include <string>
#include <vector>

#include "engine/multistart/multistart_options.h"
#include "engine/solve/problem.h"
#include "heuristics/families/catalogue.h"
#include "heuristics/search_box.h"
#include "server/fit_request.h"

namespace foothold {

struct StartChoice {
  Eigen::VectorXd start;  // size p, inside the bounds, fixed values in place
  // "user" when every free parameter came from the request, else "guess:<candidate>".
  std::string origin = "user";
  std::vector<std::string> guessed;   // parameters whose start came from the guesser
  std::vector<std::string> warnings;  // the guesser's notes for people
  // Every seeded start for multistart, best first: "user" (when the request gives every
  // free parameter), then each guess candidate with the request's values in place.
  std::vector<StartCandidate> candidates;
  // Where the quasi-random starts look (engine/multistart): from the guesser's scales and
  // the candidates, so that candidates gone wrong do not shrink it away from the optimum.
  // Empty when there is no guess (then the engine derives it from the candidates alone).
  SearchBox box;
};

// Fills problem->lower/upper/is_fixed and chooses the start. `family` is null for an
// expression model (then the generic guesser supplies candidates);
// `defaults` are the family's parameters with default bounds (empty for an expression).
// False with a message naming the field and parameter on unknown names, a parameter in
// both start and fix, a start or fixed value outside its bounds, or a missing start that
// cannot be guessed.
bool ChooseStart(const FitRequest& request, const FamilyRequest* family,
                 const std::vector<FamilyParameter>& defaults, Problem* problem, StartChoice* out,
                 std::string* error);

}  // namespace foothold
