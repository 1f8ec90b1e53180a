#include "heuristics/signal/noise.h"

#include <cmath>
#include <vector>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/internal/robust_stats.h"

namespace foothold {
namespace signal {

const char* ToString(NoiseMethod method) {
  switch (method) {
    case NoiseMethod::kFirstDifference:
      return "first_difference";
    case NoiseMethod::kSecondDifference:
      return "second_difference";
  }
  return "unknown";
}

NoiseEstimate EstimateNoise(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                            NoiseMethod method) {
  NoiseEstimate out;
  out.method = method;
  out.status = internal::CheckCurve(x, y, internal::CurveRequirements(), &out.message);
  if (!out.IsOk()) return out;

  const Eigen::Index n = y.size();
  std::vector<double> differences;
  double scale = 1.0;
  if (method == NoiseMethod::kFirstDifference) {
    differences.reserve(static_cast<size_t>(n - 1));
    for (Eigen::Index i = 0; i + 1 < n; ++i) differences.push_back(y[i + 1] - y[i]);
    scale = 1.0 / std::sqrt(2.0);  // Var(y_{i+1} - y_i) = 2 s^2.
  } else {
    differences.reserve(static_cast<size_t>(n - 2));
    for (Eigen::Index i = 1; i + 1 < n; ++i) {
      const double h = x[i + 1] - x[i - 1];
      const double a = (x[i + 1] - x[i]) / h;
      const double b = (x[i] - x[i - 1]) / h;
      const double residual = y[i] - (a * y[i - 1] + b * y[i + 1]);
      differences.push_back(residual / std::sqrt(1.0 + a * a + b * b));
    }
  }
  out.num_differences = static_cast<int>(differences.size());
  out.sigma = internal::kMadToSigma * scale * internal::MedianAbsoluteDeviation(differences);
  return out;
}

}  // namespace signal
}  // namespace foothold
