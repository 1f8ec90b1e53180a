#include "heuristics/search_box.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace foothold {

SearchBox SearchBoxFromGuess(const Problem& problem, const std::vector<StartCandidate>& candidates,
                             const Eigen::VectorXd& scale, const std::vector<bool>& log_scale) {
  constexpr double kInfinity = std::numeric_limits<double>::infinity();
  // Same spans as the engine's own rule (engine/multistart/internal/start_schedule.cpp).
  constexpr double kPositiveSpan = 100.0;
  constexpr double kHalfWidthFactor = 2.0;
  const int p = problem.NumParameters();
  SearchBox box;
  box.lower = Eigen::VectorXd::Constant(p, -kInfinity);
  box.upper = Eigen::VectorXd::Constant(p, kInfinity);
  if (candidates.empty() || scale.size() != p) return box;
  for (int j = 0; j < p; ++j) {
    const double lower = problem.Lower(j), upper = problem.Upper(j);
    const double s = scale[j];
    if (problem.IsFixed(j) || (std::isfinite(lower) && std::isfinite(upper))) continue;
    if (!(std::isfinite(s) && s > 0)) continue;
    double low = kInfinity, high = -kInfinity, magnitude = 0;
    for (const StartCandidate& candidate : candidates) {
      const double v = std::min(upper, std::max(lower, candidate.parameters[j]));
      low = std::min(low, v);
      high = std::max(high, v);
      magnitude = std::max(magnitude, std::abs(v));
    }
    const bool is_log = j < static_cast<int>(log_scale.size()) && log_scale[j];
    if (is_log && std::isfinite(lower) && lower >= 0 && low > 0 && !std::isfinite(upper)) {
      box.lower[j] = std::max(lower, std::min(low, s) / kPositiveSpan);
      box.upper[j] = std::max(high, s) * kPositiveSpan;
      continue;
    }
    const double half_width = kHalfWidthFactor * std::max(magnitude, s);
    if (!std::isfinite(lower)) box.lower[j] = low - half_width;
    if (!std::isfinite(upper)) box.upper[j] = high + half_width;
  }
  return box;
}

}  // namespace foothold
