#pragma once
// One local fit from one start: the entry point multistart and the server call. It runs
// Levenberg–Marquardt over the nonlinear parameters with the linear ones projected out
// (variable projection) where that applies, else plain Levenberg–Marquardt on all of them.

#include <Eigen/Core>
#include <string>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"

namespace foothold {

struct LocalFitOptions {
  // The Levenberg–Marquardt settings; with projection they apply to the reduced problem
  // (iterations, evaluations and tolerances count over the nonlinear parameters).
  LevenbergMarquardtOptions lm;
  // Solve free, unbounded linear parameters by linear least squares inside each evaluation
  // (Golub & Pereyra 1973, Kaufman 1975). Default true. Ignored where it does not apply.
  bool use_variable_projection = true;

  bool Validate(std::string* error) const;
};

// Minimises from `start` (size p, inside the bounds; the caller validates problem and
// start). Returns the full-size parameters, the rss of the full problem at start and end,
// the solver's counts and termination; the message begins with the method used
// ("variable projection: ..." or "levenberg-marquardt: ...") and, when projection was
// requested but not used, why. Never throws for a numerical outcome.
LocalFitSummary RunLocalFit(const Problem& problem, const Eigen::VectorXd& start,
                            const LocalFitOptions& options);

// True when the message of a RunLocalFit summary says projection was used.
bool UsedVariableProjection(const LocalFitSummary& summary);

}  // namespace foothold
