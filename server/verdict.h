#pragma once
// Turns the statistics of a fit into findings a person can act on.

#include "server/fit_outcome.h"

namespace foothold {

// Thresholds behind the flags; named so the docs and tests can cite them.
struct VerdictOptions {
  // |correlation| above this between two free parameters flags "highly_correlated".
  double max_abs_correlation = 0.999;
  // Condition number above this (full rank) flags "ill_conditioned".
  double max_condition_number = 1e10;
  // Runs-test p below this flags "structured_residuals".
  double min_runs_p_value = 0.01;
  // Chi-square upper/lower tail probabilities below this flag "chi2_high"/"chi2_low"
  // (absolute sigma only).
  double chi2_tail_probability = 1e-3;
};

// Fills flags (most severe first) and one summary sentence from the outcome's fields.
Verdict JudgeFit(const FitOutcome& outcome, const VerdictOptions& options = {});

}  // namespace foothold
