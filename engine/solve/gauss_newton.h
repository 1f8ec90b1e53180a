#pragma once
// Gauss–Newton with a backtracking (Armijo) line search: the step solves the linearised
// least-squares problem J d = -r by QR with column pivoting (rank-revealing, so a rank-deficient
// Jacobian gives the basic solution instead of a blow-up), and is halved until the cost decreases
// by at least c1 times the linear prediction (Armijo 1966; Nocedal & Wright 2006, Sec. 3.1 and
// 10.3). Bounds are honoured by projecting each trial point onto the box. Unlike
// Levenberg–Marquardt there is no damping: far from the optimum the full step can be poor and
// the line search only shortens it, never turns it, so Gauss–Newton can stall where LM does not.

#include <Eigen/Core>
#include <limits>
#include <string>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"

namespace foothold {

struct GaussNewtonOptions {
  // Maximum iterations (Jacobian evaluations). Default 1000. Must be >= 0.
  int max_iterations = 1000;
  // Maximum value evaluations (every line-search trial). Default 4000. Must be >= 1.
  int max_evaluations = 4000;
  // Stop when the relative rss reduction of an accepted step is <= this. Default 1e-15.
  double cost_tolerance = 1e-15;
  // Stop when ||x_new - x|| <= this * (||x|| + this). Default 1e-15.
  double step_tolerance = 1e-15;
  // Stop when the largest cosine between residual and Jacobian columns is <= this. Default 1e-15.
  double gradient_tolerance = 1e-15;
  // Armijo sufficient-decrease constant c1 in (0, 1). Default 1e-4 (Nocedal & Wright).
  double armijo_c1 = 1e-4;
  // Halvings of the step before the line search gives up. Default 60. Must be >= 1.
  int max_backtracks = 60;
  // Wall-clock limit in seconds; infinity means none. Must be > 0.
  double deadline_seconds = std::numeric_limits<double>::infinity();
  // Optional cancellation hook, checked once per iteration.
  IterationCallback callback;

  bool Validate(std::string* error) const;
};

// The Levenberg–Marquardt limits, tolerances, deadline and callback carried over.
GaussNewtonOptions GaussNewtonOptionsFrom(const LevenbergMarquardtOptions& lm);

// Minimise the rss from `start` (size p, inside the bounds). Same summary as LM: the cost is
// sum of (r_i / sigma_i)^2. Never throws for a numerical outcome.
LocalFitSummary MinimizeGaussNewton(const Problem& problem, const Eigen::VectorXd& start,
                                    const GaussNewtonOptions& options);

}  // namespace foothold
