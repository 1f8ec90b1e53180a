#include "engine/multistart/internal/stopping_rule.h"

#include <cmath>
#include <limits>

namespace foothold {
namespace internal {

StoppingRuleEstimate EstimateUnseenMinima(int num_searches, int num_minima) {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  StoppingRuleEstimate estimate;
  estimate.num_searches = num_searches;
  estimate.num_minima = num_minima;
  const double n = num_searches;
  const double w = num_minima;
  estimate.expected_unobserved_share = n >= 2 ? w * (w + 1) / (n * (n - 1)) : kNaN;
  estimate.is_defined = num_minima >= 1 && num_searches > num_minima + 2;
  if (!estimate.is_defined) {
    estimate.expected_num_minima = kNaN;
    estimate.expected_unseen_minima = kNaN;
    return estimate;
  }
  estimate.expected_num_minima = w * (n - 1) / (n - w - 2);
  estimate.expected_unseen_minima = w * (w + 1) / (n - w - 2);
  return estimate;
}

bool ShouldStop(const StoppingRuleEstimate& estimate, double threshold) {
  return estimate.is_defined && estimate.expected_unseen_minima < threshold;
}

double LogPosteriorWeight(int k, int num_searches, int num_minima) {
  // lgamma(m + 1) = log m!.
  return std::lgamma(k + 1.0) + std::lgamma(static_cast<double>(k)) -
         std::lgamma(k - num_minima + 1.0) - std::lgamma(static_cast<double>(num_searches + k));
}

}  // namespace internal
}  // namespace foothold
