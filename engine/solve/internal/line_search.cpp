#include "engine/solve/internal/line_search.h"

#include <algorithm>
#include <limits>

namespace foothold {
namespace internal {

bool IterationLimitReached(const IterationLimits& limits, int num_iterations, int num_evaluations,
                           double cost, double elapsed_seconds, Termination* termination,
                           std::ostream* message) {
  if (num_iterations >= limits.max_iterations) {
    *termination = Termination::kIterationLimit;
    *message << "iteration limit " << limits.max_iterations;
  } else if (limits.max_evaluations && num_evaluations >= *limits.max_evaluations) {
    *termination = Termination::kEvaluationLimit;
    *message << "evaluation limit " << *limits.max_evaluations;
  } else if (elapsed_seconds > limits.deadline_seconds) {
    *termination = Termination::kDeadline;
    *message << "deadline " << limits.deadline_seconds << " s";
  } else if (limits.callback && *limits.callback && !(*limits.callback)(num_iterations, cost)) {
    *termination = Termination::kCancelled;
    *message << "cancelled at iteration " << num_iterations;
  } else {
    return false;
  }
  return true;
}

Eigen::VectorXd ProjectOntoBox(const Eigen::VectorXd& x, const Eigen::VectorXd& lower,
                               const Eigen::VectorXd& upper) {
  return x.cwiseMax(lower).cwiseMin(upper);
}

Eigen::VectorXd ProjectedGradient(const Eigen::VectorXd& x, const Eigen::VectorXd& g,
                                  const Eigen::VectorXd& lower, const Eigen::VectorXd& upper) {
  Eigen::VectorXd pg = g;
  for (int i = 0; i < x.size(); ++i) {
    if ((x[i] <= lower[i] && g[i] > 0) || (x[i] >= upper[i] && g[i] < 0)) pg[i] = 0;
  }
  return pg;
}

double MaxStepInBox(const Eigen::VectorXd& x, const Eigen::VectorXd& d,
                    const Eigen::VectorXd& lower, const Eigen::VectorXd& upper) {
  double alpha = std::numeric_limits<double>::infinity();
  for (int i = 0; i < x.size(); ++i) {
    if (d[i] > 0) alpha = std::min(alpha, (upper[i] - x[i]) / d[i]);
    if (d[i] < 0) alpha = std::min(alpha, (lower[i] - x[i]) / d[i]);
  }
  return std::max(alpha, 0.0);
}

bool IsStepBelowTolerance(double step_norm, double x_norm, double tolerance) {
  return step_norm <= tolerance * (x_norm + tolerance);
}

void WriteRelativeStep(double step_norm, double x_norm, double tolerance, std::ostream* message) {
  *message << "relative step " << step_norm / (x_norm + tolerance) << " <= " << tolerance;
}

bool DeadlineRuleBroken(double deadline_seconds, std::ostream* out) {
  if (deadline_seconds > 0) return false;
  *out << "deadline_seconds = " << deadline_seconds << ": must be > 0";
  return true;
}

}  // namespace internal
}  // namespace foothold
