#include "engine/stats/internal/residual_tests.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

#include "engine/stats/internal/distributions.h"

namespace foothold {
namespace internal {

namespace {
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
}  // namespace

std::vector<int> OrderByFirstPredictor(const Eigen::MatrixXd& predictors) {
  std::vector<int> order(static_cast<size_t>(predictors.rows()));
  std::iota(order.begin(), order.end(), 0);
  if (predictors.cols() == 0) return order;
  // Stable, so repeated x values keep the order in which they were measured.
  std::stable_sort(order.begin(), order.end(),
                   [&predictors](int a, int b) { return predictors(a, 0) < predictors(b, 0); });
  return order;
}

double DurbinWatson(const Eigen::VectorXd& residuals, const std::vector<int>& order) {
  if (order.size() < 2) return kNaN;
  double numerator = 0;
  double denominator = 0;
  for (size_t k = 0; k < order.size(); ++k) {
    const double e = residuals[order[k]];
    denominator += e * e;
    if (k > 0) {
      const double difference = e - residuals[order[k - 1]];
      numerator += difference * difference;
    }
  }
  // An exact fit has no residual pattern to describe.
  if (denominator == 0) return kNaN;
  return numerator / denominator;
}

RunsTest WaldWolfowitzRuns(const Eigen::VectorXd& residuals, const std::vector<int>& order) {
  RunsTest test;
  int previous_sign = 0;
  for (int index : order) {
    const double e = residuals[index];
    if (e == 0) continue;
    const int sign = e > 0 ? 1 : -1;
    if (sign > 0) {
      ++test.num_positive;
    } else {
      ++test.num_negative;
    }
    if (sign != previous_sign) ++test.num_runs;
    previous_sign = sign;
  }
  const double n1 = test.num_positive;
  const double n2 = test.num_negative;
  const double total = n1 + n2;
  if (n1 == 0 || n2 == 0) {
    test.expected_runs = kNaN;
    test.variance = kNaN;
    test.z = kNaN;
    test.p_value = kNaN;
    return test;
  }
  const double product = 2 * n1 * n2;
  test.expected_runs = product / total + 1;
  test.variance = product * (product - n1 - n2) / (total * total * (total - 1));
  if (!(test.variance > 0)) {
    // n1 = n2 = 1: the number of runs is always 2, nothing to standardise.
    test.z = kNaN;
    test.p_value = kNaN;
    return test;
  }
  test.z = (test.num_runs - test.expected_runs) / std::sqrt(test.variance);
  test.p_value =
      2 * boost::math::cdf(boost::math::complement(NormalDistribution(), std::abs(test.z)));
  return test;
}

}  // namespace internal
}  // namespace foothold
