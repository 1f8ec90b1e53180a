#pragma once
// Order statistics used by several signal tools. Inputs are taken by value because the
// selection algorithms reorder them.

#include <vector>

namespace foothold {
namespace signal {
namespace internal {

// Median of a non-empty vector (mean of the two middle values for even sizes).
double Median(std::vector<double> values);
// Quantile q in [0, 1] with linear interpolation between order statistics (the
// "type 7" definition of Hyndman & Fan 1996). Non-empty input.
double Quantile(std::vector<double> values, double q);
// Median absolute deviation about the median, unscaled. Non-empty input.
double MedianAbsoluteDeviation(const std::vector<double>& values);

// 1 / Phi^-1(3/4): multiplies a MAD to give a consistent Gaussian standard deviation.
constexpr double kMadToSigma = 1.482602218505602;

}  // namespace internal
}  // namespace signal
}  // namespace foothold
