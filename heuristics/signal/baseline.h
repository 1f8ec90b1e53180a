#pragma once
// Baseline estimates: the level (and slope) under peaks or steps, from the data alone.

#include <Eigen/Core>
#include <string>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

enum class BaselineMethod {
  kEnds,            // constant: mean of the first and last end_fraction of the points
  kLowQuantile,     // constant: the `quantile` quantile of all y
  kLinearEnds,      // line through (median x, median y) of each end: robust to spikes there
  kLinearEnvelope,  // Theil-Sen line through the low quantile of each of num_bins bins
};
// "ends" | "low_quantile" | "linear_ends" | "linear_envelope"
const char* ToString(BaselineMethod method);
bool BaselineMethodFromString(const std::string& text, BaselineMethod* method);

struct BaselineOptions {
  BaselineMethod method = BaselineMethod::kLinearEnds;
  // Share of the points at each end used by kEnds and kLinearEnds. In (0, 0.5]; default 0.05.
  double end_fraction = 0.05;
  // At least this many points per end, when there are enough (at most half the points).
  // >= 1; default 3.
  int min_end_points = 3;
  // Quantile for kLowQuantile and for each bin of kLinearEnvelope. In [0, 0.5]; default 0.1.
  double quantile = 0.1;
  // Bins of equal point count for kLinearEnvelope. >= 2; default 10.
  int num_bins = 10;

  bool Validate(std::string* error) const;
};

// baseline(x) = intercept + slope * x; slope is 0 for the constant methods.
struct Baseline {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  BaselineMethod method = BaselineMethod::kLinearEnds;
  double intercept = 0.0;
  double slope = 0.0;

  bool IsOk() const { return status == SignalStatus::kOk; }
  double At(double x) const { return intercept + slope * x; }
};

// x strictly increasing (SortAndMerge), at least 3 points. Constant y is allowed: the
// baseline is then that constant.
Baseline EstimateBaseline(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                          const BaselineOptions& options = BaselineOptions());

}  // namespace signal
}  // namespace foothold
