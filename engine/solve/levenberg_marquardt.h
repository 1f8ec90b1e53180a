#pragma once
// Levenberg–Marquardt after Moré (1978): scaled trust region, pivoted QR of the
// weighted Jacobian, the damping found by Moré's safeguarded Newton iteration,
// bounds honoured exactly by projection with an active set.

#include <Eigen/Core>
#include <functional>
#include <limits>
#include <string>

#include "engine/solve/problem.h"
#include "engine/solve/termination.h"

namespace foothold {

// Called once per iteration with the iteration count and the current cost; returning
// false stops the solver with Termination::kCancelled.
using IterationCallback = std::function<bool(int iteration, double cost)>;

struct LevenbergMarquardtOptions {
  // Maximum outer iterations (Jacobian evaluations). Default 1000. Must be >= 0.
  int max_iterations = 1000;
  // Maximum model evaluations (values only, each trial step). Default 4000. Must be >= 1.
  int max_evaluations = 4000;
  // Stop when actual and predicted relative cost reductions are both <= this. Default 1e-15.
  double cost_tolerance = 1e-15;
  // Stop when the trust radius is <= this times the scaled parameter norm. Default 1e-15.
  double step_tolerance = 1e-15;
  // Stop when the largest cosine between residual and Jacobian columns is <= this. Default 1e-15.
  double gradient_tolerance = 1e-15;
  // Initial trust radius = factor * ||D x0|| (or factor when that is 0). Moré's 100. Must be > 0.
  double initial_radius_factor = 100.0;
  // Geodesic acceleration (Transtrum & Sethna 2011): second-order correction of each step.
  bool use_geodesic_acceleration = false;
  // Reject an accelerated step whose correction exceeds this ratio of the velocity. Default 0.75.
  double geodesic_max_ratio = 0.75;
  // Wall-clock limit for this local fit in seconds; infinity means none. Must be > 0.
  double deadline_seconds = std::numeric_limits<double>::infinity();
  // Optional cancellation hook, checked once per iteration.
  IterationCallback callback;

  bool Validate(std::string* error) const;
};

struct LocalFitSummary {
  Termination termination = Termination::kIterationLimit;
  // Says which test fired, with its numbers ("relative cost change 3e-17 <= 1e-15").
  std::string message;
  Eigen::VectorXd start;       // size p
  Eigen::VectorXd parameters;  // size p, the end point (fixed ones unchanged)
  double initial_cost = 0;     // rss = sum of (w_i r_i)^2 at the start
  double final_cost = 0;       // rss at the end point
  int num_iterations = 0;
  int num_evaluations = 0;           // value evaluations
  int num_jacobian_evaluations = 0;
  double total_seconds = 0;

  bool IsConverged() const { return foothold::IsConverged(termination); }
  std::string BriefReport() const;
  std::string FullReport() const;
};

// Minimise from `start` (size p, inside the bounds: the caller validates). Never throws for
// a numerical outcome: a start where the model is non-finite returns kNonFiniteModel.
LocalFitSummary MinimizeLevenbergMarquardt(const Problem& problem, const Eigen::VectorXd& start,
                                           const LevenbergMarquardtOptions& options);

}  // namespace foothold
