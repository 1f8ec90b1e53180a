#include "heuristics/signal/baseline.h"

#include <algorithm>
#include <sstream>
#include <utility>
#include <vector>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/internal/robust_stats.h"

namespace foothold {
namespace signal {
namespace {

const std::pair<BaselineMethod, const char*> kMethodNames[] = {
    {BaselineMethod::kEnds, "ends"},
    {BaselineMethod::kLowQuantile, "low_quantile"},
    {BaselineMethod::kLinearEnds, "linear_ends"},
    {BaselineMethod::kLinearEnvelope, "linear_envelope"},
};

std::vector<double> Slice(const Eigen::VectorXd& v, Eigen::Index begin, Eigen::Index end) {
  return std::vector<double>(v.data() + begin, v.data() + end);
}

double Mean(const std::vector<double>& values) {
  double sum = 0.0;
  for (double v : values) sum += v;
  return sum / static_cast<double>(values.size());
}

// Theil-Sen line (Sen 1968): the median of pairwise slopes, then the median intercept.
void TheilSenLine(const std::vector<double>& xs, const std::vector<double>& ys, double* intercept,
                  double* slope) {
  std::vector<double> slopes;
  for (size_t i = 0; i < xs.size(); ++i) {
    for (size_t j = i + 1; j < xs.size(); ++j) {
      if (xs[j] != xs[i]) slopes.push_back((ys[j] - ys[i]) / (xs[j] - xs[i]));
    }
  }
  *slope = slopes.empty() ? 0.0 : internal::Median(slopes);
  std::vector<double> offsets(xs.size());
  for (size_t i = 0; i < xs.size(); ++i) offsets[i] = ys[i] - *slope * xs[i];
  *intercept = internal::Median(offsets);
}

}  // namespace

const char* ToString(BaselineMethod method) {
  for (const auto& entry : kMethodNames) {
    if (entry.first == method) return entry.second;
  }
  return "unknown";
}

bool BaselineMethodFromString(const std::string& text, BaselineMethod* method) {
  for (const auto& entry : kMethodNames) {
    if (text == entry.second) {
      *method = entry.first;
      return true;
    }
  }
  return false;
}

bool BaselineOptions::Validate(std::string* error) const {
  std::ostringstream text;
  if (!(end_fraction > 0.0 && end_fraction <= 0.5)) {
    text << "end_fraction = " << end_fraction << ": must be in (0, 0.5]";
  } else if (min_end_points < 1) {
    text << "min_end_points = " << min_end_points << ": must be >= 1";
  } else if (!(quantile >= 0.0 && quantile <= 0.5)) {
    text << "quantile = " << quantile << ": must be in [0, 0.5]";
  } else if (num_bins < 2) {
    text << "num_bins = " << num_bins << ": must be >= 2";
  }
  if (text.tellp() == 0) return true;
  if (error) *error = text.str();
  return false;
}

Baseline EstimateBaseline(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                          const BaselineOptions& options) {
  Baseline out;
  out.method = options.method;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  internal::CurveRequirements requirements;
  requirements.needs_y_variation = false;
  out.status = internal::CheckCurve(x, y, requirements, &out.message);
  if (!out.IsOk()) return out;

  const Eigen::Index n = x.size();
  const Eigen::Index by_fraction =
      static_cast<Eigen::Index>(options.end_fraction * static_cast<double>(n) + 0.5);
  const Eigen::Index num_end =
      std::clamp<Eigen::Index>(std::max<Eigen::Index>(by_fraction, options.min_end_points), 1,
                               std::max<Eigen::Index>(n / 2, 1));
  switch (options.method) {
    case BaselineMethod::kEnds: {
      const double left = Mean(Slice(y, 0, num_end));
      const double right = Mean(Slice(y, n - num_end, n));
      out.intercept = 0.5 * (left + right);
      break;
    }
    case BaselineMethod::kLowQuantile:
      out.intercept = internal::Quantile(Slice(y, 0, n), options.quantile);
      break;
    case BaselineMethod::kLinearEnds: {
      const double x_left = internal::Median(Slice(x, 0, num_end));
      const double y_left = internal::Median(Slice(y, 0, num_end));
      const double x_right = internal::Median(Slice(x, n - num_end, n));
      const double y_right = internal::Median(Slice(y, n - num_end, n));
      out.slope = (y_right - y_left) / (x_right - x_left);
      out.intercept = y_left - out.slope * x_left;
      break;
    }
    case BaselineMethod::kLinearEnvelope: {
      const Eigen::Index num_bins = std::min<Eigen::Index>(options.num_bins, n);
      std::vector<double> bin_x, bin_y;
      for (Eigen::Index b = 0; b < num_bins; ++b) {
        const Eigen::Index begin = b * n / num_bins;
        const Eigen::Index end = (b + 1) * n / num_bins;
        if (end <= begin) continue;
        bin_x.push_back(internal::Median(Slice(x, begin, end)));
        bin_y.push_back(internal::Quantile(Slice(y, begin, end), options.quantile));
      }
      TheilSenLine(bin_x, bin_y, &out.intercept, &out.slope);
      break;
    }
  }
  return out;
}

}  // namespace signal
}  // namespace foothold
