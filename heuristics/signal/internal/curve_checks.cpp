#include "heuristics/signal/internal/curve_checks.h"

#include <algorithm>
#include <cmath>
#include <sstream>

namespace foothold {
namespace signal {
namespace internal {

SignalStatus CheckCurve(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                        const CurveRequirements& requirements, std::string* message) {
  std::ostringstream text;
  const Eigen::Index n = x.size();
  SignalStatus status = SignalStatus::kOk;
  if (y.size() != n) {
    status = SignalStatus::kSizeMismatch;
    text << "x has " << n << " values but y has " << y.size();
  }
  for (Eigen::Index i = 0; i < n && status == SignalStatus::kOk; ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) {
      status = SignalStatus::kNonFinite;
      text << "point " << i << " is (" << x[i] << ", " << y[i] << "): expected finite numbers";
    }
  }
  if (status == SignalStatus::kOk && n < requirements.min_points) {
    status = SignalStatus::kTooFewPoints;
    text << n << " points: need at least " << requirements.min_points;
  }
  if (status == SignalStatus::kOk && x.maxCoeff() == x.minCoeff()) {
    status = SignalStatus::kAllXEqual;
    text << "all " << n << " x values equal " << x[0] << ": the curve has no extent";
  }
  for (Eigen::Index i = 1; i < n && status == SignalStatus::kOk && requirements.needs_sorted; ++i) {
    if (!(x[i] > x[i - 1])) {
      status = SignalStatus::kNotSorted;
      text << "x[" << i << "] = " << x[i] << " is not above x[" << i - 1 << "] = " << x[i - 1]
           << ": sort and merge duplicates first (SortAndMerge)";
    }
  }
  if (status == SignalStatus::kOk && requirements.needs_y_variation &&
      y.maxCoeff() == y.minCoeff()) {
    status = SignalStatus::kConstantY;
    text << "all " << n << " y values equal " << y[0] << ": there is no signal to analyse";
  }
  if (message) *message = text.str();
  return status;
}

double InterpolateLinear(const Eigen::VectorXd& x, const Eigen::VectorXd& y, double t) {
  const Eigen::Index n = x.size();
  if (t <= x[0]) return y[0];
  if (t >= x[n - 1]) return y[n - 1];
  const double* begin = x.data();
  const Eigen::Index upper = std::upper_bound(begin, begin + n, t) - begin;
  const Eigen::Index lower = upper - 1;
  const double fraction = (t - x[lower]) / (x[upper] - x[lower]);
  return y[lower] + fraction * (y[upper] - y[lower]);
}

}  // namespace internal
}  // namespace signal
}  // namespace foothold
