#include "engine/solve/termination.h"

namespace foothold {
namespace {

struct TerminationName {
  Termination termination;
  const char* name;
};

constexpr TerminationName kTerminationNames[] = {
    {Termination::kCostConverged, "cost_converged"},
    {Termination::kStepConverged, "step_converged"},
    {Termination::kGradientConverged, "gradient_converged"},
    {Termination::kIterationLimit, "iteration_limit"},
    {Termination::kEvaluationLimit, "evaluation_limit"},
    {Termination::kNonFiniteModel, "non_finite_model"},
    {Termination::kDeadline, "deadline"},
    {Termination::kCancelled, "cancelled"},
    {Termination::kNoFreeParameters, "no_free_parameters"},
};

}  // namespace

const char* ToString(Termination termination) {
  for (const auto& entry : kTerminationNames) {
    if (entry.termination == termination) return entry.name;
  }
  return "unknown";
}

bool TerminationFromString(const std::string& text, Termination* termination) {
  for (const auto& entry : kTerminationNames) {
    if (text == entry.name) {
      *termination = entry.termination;
      return true;
    }
  }
  return false;
}

bool IsConverged(Termination termination) {
  return termination == Termination::kCostConverged ||
         termination == Termination::kStepConverged ||
         termination == Termination::kGradientConverged ||
         termination == Termination::kNoFreeParameters;
}

}  // namespace foothold
