#pragma once
// Residual diagnostics at an optimum: serial correlation (Durbin–Watson) and the
// Wald–Wolfowitz runs test on residual signs. Both read residuals in predictor order.

#include <Eigen/Core>
#include <vector>

namespace foothold {
namespace internal {

// Indices 0..n-1 ordered by the first predictor column (stable: ties keep data order).
// With no predictor column the data order is kept.
std::vector<int> OrderByFirstPredictor(const Eigen::MatrixXd& predictors);

// d = sum_{i>=1} (e_i - e_{i-1})^2 / sum_i e_i^2 over `residuals` taken in `order`
// (Durbin & Watson 1950). NaN when fewer than two residuals or when all are zero.
double DurbinWatson(const Eigen::VectorXd& residuals, const std::vector<int>& order);

struct RunsTest {
  int num_runs = 0;      // maximal blocks of equal sign, zeros skipped
  int num_positive = 0;  // n1
  int num_negative = 0;  // n2
  double expected_runs = 0;
  double variance = 0;
  double z = 0;        // (runs - expected) / sqrt(variance); NaN when undefined
  double p_value = 0;  // two-sided, standard normal; NaN when undefined
};

// Wald & Wolfowitz (1940) runs test on the signs of `residuals` taken in `order`.
// Residuals exactly zero carry no sign and are skipped. With n1 = positives and
// n2 = negatives, E[R] = 2 n1 n2 / (n1 + n2) + 1 and
// Var[R] = 2 n1 n2 (2 n1 n2 - n1 - n2) / ((n1 + n2)^2 (n1 + n2 - 1)).
// Undefined (z and p NaN) when n1 or n2 is zero or the variance is not positive.
RunsTest WaldWolfowitzRuns(const Eigen::VectorXd& residuals, const std::vector<int>& order);

}  // namespace internal
}  // namespace foothold
