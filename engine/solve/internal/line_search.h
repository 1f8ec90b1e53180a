#pragma once
// Scaffolding shared by the two line-search minimisers, Gauss–Newton (gauss_newton.cpp) and
// BFGS (bfgs.cpp): the limits checked before each iteration, the box a trial point is
// projected onto, the relative-step test, and the option fields both validate and carry over
// from Levenberg–Marquardt. Each keeps its own line search, which is what tells them apart:
// Armijo backtracking along the Gauss–Newton direction, strong Wolfe along the quasi-Newton
// one.

#include <Eigen/Core>
#include <chrono>
#include <optional>
#include <ostream>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/termination.h"

namespace foothold {
namespace internal {

// Wall-clock seconds since construction.
class Stopwatch {
 public:
  Stopwatch() : started_(std::chrono::steady_clock::now()) {}
  double ElapsedSeconds() const {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - started_).count();
  }

 private:
  std::chrono::steady_clock::time_point started_;
};

// The limits a method checks before it starts another iteration.
struct IterationLimits {
  int max_iterations = 0;
  // Checked here when set. Gauss–Newton leaves it empty: it checks its budget before every
  // trial of its line search, where an iteration has already begun.
  std::optional<int> max_evaluations;
  double deadline_seconds = 0;
  const IterationCallback* callback = nullptr;  // may point to an empty function
};

// The first limit reached, in the order iterations, evaluations, deadline, cancellation:
// sets *termination, writes the limit to *message ("iteration limit 1000") and returns true.
// False when another iteration may start. `cost` is what the callback is shown.
bool IterationLimitReached(const IterationLimits& limits, int num_iterations, int num_evaluations,
                           double cost, double elapsed_seconds, Termination* termination,
                           std::ostream* message);

// x clamped componentwise into [lower, upper].
Eigen::VectorXd ProjectOntoBox(const Eigen::VectorXd& x, const Eigen::VectorXd& lower,
                               const Eigen::VectorXd& upper);

// g with the components zeroed where x sits on a bound and -g points out of the box: the
// gradient of the objective restricted to the directions the box allows.
Eigen::VectorXd ProjectedGradient(const Eigen::VectorXd& x, const Eigen::VectorXd& g,
                                  const Eigen::VectorXd& lower, const Eigen::VectorXd& upper);

// Largest alpha >= 0 with x + alpha d inside the box (infinity when nothing limits it).
double MaxStepInBox(const Eigen::VectorXd& x, const Eigen::VectorXd& d,
                    const Eigen::VectorXd& lower, const Eigen::VectorXd& upper);

// The step test both methods share: ||s|| <= tolerance * (||x|| + tolerance).
bool IsStepBelowTolerance(double step_norm, double x_norm, double tolerance);
// Writes "relative step 3e-16 <= 1e-15" for a step that passed IsStepBelowTolerance.
void WriteRelativeStep(double step_norm, double x_norm, double tolerance, std::ostream* message);

// The fields named alike in LevenbergMarquardtOptions, GaussNewtonOptions and BfgsOptions.
// `Options` is one of the last two; the caller sets the iteration and evaluation limits,
// which each method scales in its own way.
template <class Options>
void CopySharedFields(const LevenbergMarquardtOptions& lm, Options* options) {
  options->cost_tolerance = lm.cost_tolerance;
  options->step_tolerance = lm.step_tolerance;
  options->gradient_tolerance = lm.gradient_tolerance;
  options->deadline_seconds = lm.deadline_seconds;
  options->callback = lm.callback;
}

// Writes the first rule the shared limits and tolerances break ("max_iterations = -1: must
// be >= 0") and returns true; false when they are valid. The deadline is checked by
// DeadlineRuleBroken, after each method's own fields.
template <class Options>
bool SharedRuleBroken(const Options& o, std::ostream* out) {
  if (o.max_iterations < 0) {
    *out << "max_iterations = " << o.max_iterations << ": must be >= 0";
  } else if (o.max_evaluations < 1) {
    *out << "max_evaluations = " << o.max_evaluations << ": must be >= 1";
  } else if (!(o.cost_tolerance >= 0)) {
    *out << "cost_tolerance = " << o.cost_tolerance << ": must be >= 0";
  } else if (!(o.step_tolerance >= 0)) {
    *out << "step_tolerance = " << o.step_tolerance << ": must be >= 0";
  } else if (!(o.gradient_tolerance >= 0)) {
    *out << "gradient_tolerance = " << o.gradient_tolerance << ": must be >= 0";
  } else {
    return false;
  }
  return true;
}

// Writes "deadline_seconds = 0: must be > 0" and returns true when the deadline is not valid.
bool DeadlineRuleBroken(double deadline_seconds, std::ostream* out);

}  // namespace internal
}  // namespace foothold
