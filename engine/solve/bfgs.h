#pragma once
// BFGS quasi-Newton minimisation of a smooth objective over a box (Nocedal & Wright 2006,
// Alg. 6.1 with the line search of Alg. 3.5/3.6, strong Wolfe conditions c1 = 1e-4, c2 = 0.9).
// Bounds by projection: a variable at a bound whose gradient pushes outward is held there (the
// projected gradient is zero in it), the direction is the inverse-Hessian step on the others,
// and the line search is capped at the largest step that stays inside the box; a step that
// stops on a bound needs only the Armijo condition. The inverse-Hessian approximation starts
// from the matrix the caller gives (for least squares, the inverse Gauss–Newton Hessian) or
// from a scaled identity, is updated only when s^T y > 0 and restarts when its direction is
// not a descent direction.

#include <Eigen/Core>
#include <functional>
#include <limits>
#include <string>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/termination.h"

namespace foothold {

// f(x) and its gradient; returns false where the objective is not finite.
using SmoothObjective =
    std::function<bool(const Eigen::VectorXd& x, double* value, Eigen::VectorXd* gradient)>;

struct BfgsOptions {
  // Maximum iterations (line searches). Default 2000. Must be >= 0.
  int max_iterations = 2000;
  // Maximum objective evaluations. Default 8000. Must be >= 1.
  int max_evaluations = 8000;
  // Stop when the relative decrease of an accepted step is <= this. Default 1e-15.
  double cost_tolerance = 1e-15;
  // Stop when ||x_new - x|| <= this * (||x|| + this). Default 1e-15.
  double step_tolerance = 1e-15;
  // Stop when max_i |g_i| max(|x_i|, 1) <= this * |f| over the projected gradient g: no
  // coordinate can change f by more than this fraction at its own scale. Default 1e-15.
  double gradient_tolerance = 1e-15;
  // Strong Wolfe constants 0 < c1 < c2 < 1. Defaults 1e-4 and 0.9 (Nocedal & Wright).
  double wolfe_c1 = 1e-4;
  double wolfe_c2 = 0.9;
  // Wall-clock limit in seconds; infinity means none. Must be > 0.
  double deadline_seconds = std::numeric_limits<double>::infinity();
  // Optional cancellation hook, checked once per iteration.
  IterationCallback callback;

  bool Validate(std::string* error) const;
};

BfgsOptions BfgsOptionsFrom(const LevenbergMarquardtOptions& lm);

struct BfgsSummary {
  Termination termination = Termination::kIterationLimit;
  std::string message;  // the test that fired, with its numbers
  Eigen::VectorXd x;
  double initial_value = 0;
  double final_value = 0;
  int num_iterations = 0;
  int num_evaluations = 0;  // objective evaluations (each with its gradient)
  double total_seconds = 0;
};

// Minimise `objective` from `start` (inside [lower, upper]; sizes agree). `initial_inverse_hessian`
// may be empty (then a scaled identity after the first step). Never throws for a numerical outcome.
BfgsSummary MinimizeBfgs(const SmoothObjective& objective, const Eigen::VectorXd& start,
                         const Eigen::VectorXd& lower, const Eigen::VectorXd& upper,
                         const Eigen::MatrixXd& initial_inverse_hessian,
                         const BfgsOptions& options);

}  // namespace foothold
