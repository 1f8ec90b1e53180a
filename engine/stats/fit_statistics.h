#pragma once
// Statistics at an optimum: covariance, errors, intervals, goodness of fit, residual tests.

#include <Eigen/Core>
#include <string>
#include <vector>

#include "engine/solve/problem.h"

namespace foothold {

struct StatisticsOptions {
  // Two-sided confidence level of the intervals. Default 0.95. In (0, 1).
  double confidence_level = 0.95;
  // Singular values below rank_tolerance * largest count as zero. Default 1e-12 (relative
  // to the largest singular value of the column-scaled weighted Jacobian). In [eps, 1),
  // eps = 2.22e-16: below machine precision singular values are rounding noise.
  double rank_tolerance = 1e-12;
  // A parameter is "at bound" when within this relative distance of it (absolute when the
  // bound is 0). Default 1e-9. Finite and >= 0.
  double at_bound_tolerance = 1e-9;

  bool Validate(std::string* error) const;
};

struct FitStatistics {
  // False when the model gave a non-finite value or a non-finite Jacobian entry of a free
  // parameter at `params`; then every derived number is NaN and `message` names the row.
  bool is_finite = true;
  // False when the covariance scale cannot be estimated (no absolute sigma and dof == 0):
  // standard errors, intervals and covariance of free parameters are NaN, the correlation
  // (scale-free) is still given.
  bool has_standard_errors = true;
  // Human-readable notes on anything undefined or degenerate above; empty when all is well.
  std::string message;
  int num_points = 0;
  int num_free = 0;         // free parameters
  int dof = 0;              // num_points - num_free
  double rss = 0;           // sum of (w_i r_i)^2: chi-square when sigma is given
  double reduced_chi2 = 0;  // rss / dof (NaN when dof == 0)
  double r2 = 0;            // 1 - rss / weighted total sum of squares about the weighted mean
  double rmse = 0;          // sqrt(rss / n)
  double aic = 0;           // n ln(rss/n) + 2k (Gaussian likelihood; k = free + 1 for the variance)
  double aicc = 0;          // aic + 2k(k+1)/(n-k-1) (NaN when n - k - 1 <= 0)
  double bic = 0;           // n ln(rss/n) + k ln n
  double durbin_watson = 0;  // sum (e_i - e_{i-1})^2 / sum e_i^2, on weighted residuals in x order
  int num_runs = 0;          // Wald–Wolfowitz runs of residual signs (zeros skipped)
  double runs_z = 0;         // standardised runs statistic (NaN when undefined)
  double runs_p_value = 1;   // two-sided normal approximation
  // s_max / s_min of the column-scaled weighted Jacobian (free columns). +inf when rank
  // deficient (singular to the rank tolerance); NaN with no free parameter.
  double condition_number = 0;
  // s_max / s_rank: the conditioning of the identifiable part (equals condition_number at
  // full rank); NaN when rank == 0.
  double identifiable_condition_number = 0;
  int rank = 0;
  bool is_rank_deficient = false;
  // Covariance scale used: 1 (absolute sigma) or rss/dof (NaN when dof == 0).
  double covariance_scale = 1;
  // p x p over all parameters; rows/cols of fixed parameters are zero. Entries of
  // directions that are not identifiable are NaN and listed in `unidentifiable`.
  Eigen::MatrixXd covariance;
  // Rows/cols of fixed parameters are zero (diagonal too); NaN where not identifiable.
  Eigen::MatrixXd correlation;
  Eigen::VectorXd standard_errors;  // NaN where not identifiable; 0 for fixed
  Eigen::VectorXd ci_low;
  Eigen::VectorXd ci_high;
  // Quantile used for the intervals: Student-t with dof degrees of freedom, or the standard
  // normal when sigma is absolute (the variance is then known, not estimated).
  double t_quantile = 0;
  std::vector<bool> at_bound;       // size p; false for fixed parameters
  std::vector<int> unidentifiable;  // parameter indices touched by a null direction
  Eigen::VectorXd residuals;        // y - f, unweighted, size n (data order)
};

// Computes everything above at `params` (one Jacobian evaluation). Never throws and never
// returns a silent inf: rank deficiency is reported and the affected entries are NaN.
FitStatistics ComputeFitStatistics(const Problem& problem, const Eigen::VectorXd& params,
                                   const StatisticsOptions& options = {});

}  // namespace foothold
