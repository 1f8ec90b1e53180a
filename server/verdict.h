#pragma once
// Turns the statistics of a fit into findings a person can act on. docs/verdicts.md lists
// every flag, its threshold and why.

#include <string>

#include "engine/solve/problem.h"
#include "server/fit_outcome.h"

namespace foothold {

// Thresholds behind the flags; named so the docs and tests can cite them.
struct VerdictOptions {
  // |correlation| above this between two free parameters flags "strongly_correlated".
  // Default 0.99. In (0, 1).
  double max_abs_correlation = 0.99;
  // Condition number of the column-scaled weighted Jacobian above this flags
  // "not_identifiable" even at full rank. Default 1e10: beyond it about ten of the sixteen
  // digits of a double are lost in the covariance. > 1.
  double max_condition_number = 1e10;
  // Significance level of the residual-structure tests: the runs test p below this, or the
  // Durbin–Watson statistic outside 2 +- z(1 - level/2) * 2/sqrt(n), flags
  // "structured_residuals". Default 0.01 (runs test) and 0.001 (Durbin–Watson). In (0, 1).
  double runs_test_level = 0.01;
  double durbin_watson_level = 0.001;
  // Two-sided probability content of the chi-square range: with absolute sigma, a chi-square
  // outside the central chi2_range_probability of the chi-square distribution with dof
  // degrees of freedom flags "chi2_inconsistent". Default 0.99. In (0, 1).
  double chi2_range_probability = 0.99;
  // "too_few_points" when dof < max(min_degrees_of_freedom, free parameters). Default 3.
  // >= 1.
  int min_degrees_of_freedom = 3;
  // A location parameter (center*, log_ec50, km, kd, the gompertz inflection) further than
  // this fraction of the x span outside [min x, max x] flags "extrapolated". Default 0. >= 0.
  double extrapolation_margin = 0;
  // Two basins whose chi-square differs by less than this (chi-square units) are the same
  // curve under two parameter sets, a symmetry of the model: the "ambiguous_basins" sentence
  // then says to bound a parameter. Default 1e-6, far below any gap noise could make. >= 0.
  double equivalent_gap_chi2 = 1e-6;
  // "outliers" when a robust fit marks at least this many points (|e_i / scale| beyond the
  // loss's cut, FitOutcome::outliers). Default 1. >= 1.
  int min_outliers = 1;
  // With profile intervals requested, "intervals_disagree" names the free parameters whose
  // profile interval has an open end, or a half-width (either side, measured from the
  // estimate) more than this many times or less than 1/this of the Wald one. Default 2: a
  // mismatch by a factor of two is far beyond the few per cent a nearly linear model gives,
  // and marks a curved or barely identified direction. > 1.
  double max_interval_ratio = 2.0;

  bool Validate(std::string* error) const;
};

// Fills flags (most severe first) and one summary sentence from the outcome's fields.
// Without the problem the data's x range is unknown and "extrapolated" is not judged.
Verdict JudgeFit(const FitOutcome& outcome, const VerdictOptions& options = {});
// The same with the fitted problem, whose "x" predictor gives the data's x range.
Verdict JudgeFit(const FitOutcome& outcome, const Problem& problem,
                 const VerdictOptions& options = {});

}  // namespace foothold
