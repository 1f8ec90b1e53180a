#include "heuristics/signal/internal/robust_stats.h"

#include <algorithm>
#include <cmath>

namespace foothold {
namespace signal {
namespace internal {

double Median(std::vector<double> values) {
  const size_t n = values.size();
  const size_t mid = n / 2;
  std::nth_element(values.begin(), values.begin() + mid, values.end());
  const double upper = values[mid];
  if (n % 2 == 1) return upper;
  const double lower = *std::max_element(values.begin(), values.begin() + mid);
  return 0.5 * (lower + upper);
}

double Quantile(std::vector<double> values, double q) {
  const size_t n = values.size();
  const double position = std::clamp(q, 0.0, 1.0) * static_cast<double>(n - 1);
  const size_t below = static_cast<size_t>(std::floor(position));
  const double fraction = position - static_cast<double>(below);
  std::nth_element(values.begin(), values.begin() + below, values.end());
  const double low = values[below];
  if (fraction == 0.0 || below + 1 >= n) return low;
  // The next order statistic is the smallest value above position `below`.
  const double high = *std::min_element(values.begin() + below + 1, values.end());
  return low + fraction * (high - low);
}

double MedianAbsoluteDeviation(const std::vector<double>& values) {
  const double center = Median(values);
  std::vector<double> deviations(values.size());
  for (size_t i = 0; i < values.size(); ++i) deviations[i] = std::abs(values[i] - center);
  return Median(std::move(deviations));
}

}  // namespace internal
}  // namespace signal
}  // namespace foothold
