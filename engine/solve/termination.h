#pragma once
// Why a local solver stopped. The strings are exactly what the result document carries.

#include <string>

namespace foothold {

enum class Termination {
  kCostConverged,      // relative reduction of the cost below tolerance (or zero cost)
  kStepConverged,      // relative step (trust radius) below tolerance
  kGradientConverged,  // scaled gradient below tolerance
  kIterationLimit,
  kEvaluationLimit,
  kNonFiniteModel,     // the model gave NaN/Inf at the start point
  kDeadline,
  kCancelled,
  kNoFreeParameters,   // every parameter fixed: nothing to fit, statistics still computed
};

const char* ToString(Termination termination);  // "cost_converged", ...
bool TerminationFromString(const std::string& text, Termination* termination);
// Converged means the end point is a (local) optimum the statistics may describe.
bool IsConverged(Termination termination);

}  // namespace foothold
