#include "server/verdict.h"

#include <boost/math/distributions/chi_squared.hpp>
#include <cmath>
#include <cstdio>
#include <string>
#include <vector>

namespace foothold {
namespace {

std::string Short(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof(buffer), "%.3g", value);
  return buffer;
}

std::string JoinNames(const std::vector<std::string>& names) {
  std::string joined;
  for (size_t k = 0; k < names.size(); ++k) {
    if (k > 0) joined += (k + 1 == names.size()) ? " and " : ", ";
    joined += names[k];
  }
  return joined;
}

struct Finding {
  std::string flag;
  std::string sentence;
};

// What to do about each way of stopping short, in the user's terms.
std::string StopAdvice(Termination termination) {
  switch (termination) {
    case Termination::kDeadline:
      return "allow a longer deadline or start closer to the optimum";
    case Termination::kCancelled:
      return "run it again to completion";
    default:
      return "start closer to the optimum or raise the iteration and evaluation limits";
  }
}

void AddConvergenceFindings(const FitOutcome& outcome, std::vector<Finding>* findings) {
  const LocalFitSummary& best = outcome.best;
  if (best.termination == Termination::kNonFiniteModel) {
    findings->push_back({"non_finite_model",
                         "The model gives NaN or infinity at the start point; choose a start "
                         "(or bounds) where it is defined."});
  } else if (best.termination == Termination::kNoFreeParameters) {
    findings->push_back({"no_free_parameters",
                         "Every parameter is fixed, so nothing was fitted; the statistics "
                         "describe the given values."});
  } else if (!best.IsConverged()) {
    findings->push_back({"not_converged", std::string("The fit stopped (") +
                                              ToString(best.termination) + ") before converging; " +
                                              StopAdvice(best.termination) + "."});
  }
}

void AddIdentifiabilityFindings(const FitOutcome& outcome, const VerdictOptions& options,
                                std::vector<Finding>* findings) {
  const FitStatistics& stats = outcome.statistics;
  const std::vector<std::string>& names = outcome.parameter_names;
  if (!stats.unidentifiable.empty()) {
    std::vector<std::string> affected;
    for (int j : stats.unidentifiable) affected.push_back(names[j]);
    findings->push_back({"not_identifiable", "The data cannot determine " + JoinNames(affected) +
                                                 "; fix one of them or simplify the model."});
  } else if (stats.condition_number > options.max_condition_number) {
    findings->push_back(
        {"ill_conditioned", "The Jacobian is ill-conditioned (condition number " +
                                Short(stats.condition_number) +
                                "); the errors are unreliable, consider fixing or rescaling "
                                "parameters."});
  }
  std::vector<std::string> at_bound;
  for (size_t j = 0; j < names.size() && j < stats.at_bound.size(); ++j) {
    const bool fixed = j < outcome.is_fixed.size() && outcome.is_fixed[j];
    if (stats.at_bound[j] && !fixed) at_bound.push_back(names[j]);
  }
  if (!at_bound.empty()) {
    findings->push_back({"at_bound", JoinNames(at_bound) +
                                         (at_bound.size() == 1 ? " sits" : " sit") +
                                         " on a bound, so the optimum may lie beyond it; widen "
                                         "the bounds or check the model."});
  }
  const Eigen::MatrixXd& correlation = stats.correlation;
  double worst = 0;
  int worst_a = -1;
  int worst_b = -1;
  for (Eigen::Index a = 0; a < correlation.rows(); ++a) {
    for (Eigen::Index b = a + 1; b < correlation.cols(); ++b) {
      const double r = correlation(a, b);
      if (std::isfinite(r) && std::abs(r) > std::abs(worst)) {
        worst = r;
        worst_a = static_cast<int>(a);
        worst_b = static_cast<int>(b);
      }
    }
  }
  if (worst_a >= 0 && std::abs(worst) > options.max_abs_correlation) {
    findings->push_back({"highly_correlated", names[worst_a] + " and " + names[worst_b] +
                                                  " are almost interchangeable (correlation " +
                                                  Short(worst) + "); fix one or reparametrise."});
  }
}

void AddGoodnessFindings(const FitOutcome& outcome, const VerdictOptions& options,
                         std::vector<Finding>* findings) {
  const FitStatistics& stats = outcome.statistics;
  if (stats.dof <= 0) {
    findings->push_back({"no_degrees_of_freedom",
                         "There are as many free parameters as points, so no uncertainty can "
                         "be estimated; add data or fix parameters."});
    return;
  }
  if (outcome.IsWeighted() && outcome.sigma_mode == SigmaMode::kAbsolute &&
      std::isfinite(stats.rss)) {
    const boost::math::chi_squared distribution(stats.dof);
    const double upper_tail = boost::math::cdf(boost::math::complement(distribution, stats.rss));
    const double lower_tail = boost::math::cdf(distribution, stats.rss);
    if (upper_tail < options.chi2_tail_probability) {
      findings->push_back({"chi2_high",
                           "The residuals are larger than the given sigma allow (reduced "
                           "chi-square " +
                               Short(stats.reduced_chi2) +
                               "); the sigma are too small or the model misses something."});
    } else if (lower_tail < options.chi2_tail_probability) {
      findings->push_back({"chi2_low",
                           "The residuals are smaller than the given sigma suggest (reduced "
                           "chi-square " +
                               Short(stats.reduced_chi2) +
                               "); the sigma are probably overestimated."});
    }
  }
  if (std::isfinite(stats.runs_p_value) && stats.runs_p_value < options.min_runs_p_value) {
    findings->push_back(
        {"structured_residuals",
         "The residual signs run in long stretches (runs test p = " + Short(stats.runs_p_value) +
             "); the model probably misses a feature of the data."});
  }
}

// What the multistart search says about the answer's uniqueness.
void AddSearchFindings(const FitOutcome& outcome, std::vector<Finding>* findings) {
  if (outcome.ambiguous_basins && outcome.basins.size() > 1) {
    findings->push_back(
        {"ambiguous_basins",
         "Another optimum fits almost as well (gap " + Short(outcome.best_gap_chi2) +
             " in chi-square units, under 1); the data do not choose between them, so compare "
             "the basins before trusting one."});
  }
  if (outcome.best_basin_single_start) {
    findings->push_back({"best_basin_single_start",
                         "Only one start reached the best optimum; run more starts to confirm "
                         "that nothing better remains."});
  }
}

}  // namespace

Verdict JudgeFit(const FitOutcome& outcome, const VerdictOptions& options) {
  std::vector<Finding> findings;
  AddConvergenceFindings(outcome, &findings);
  AddSearchFindings(outcome, &findings);
  AddIdentifiabilityFindings(outcome, options, &findings);
  AddGoodnessFindings(outcome, options, &findings);
  Verdict verdict;
  for (const Finding& finding : findings) verdict.flags.push_back(finding.flag);
  if (findings.empty()) {
    verdict.summary = "Converged to a well-determined optimum; the residuals show no structure.";
  } else {
    verdict.summary = findings.front().sentence;
  }
  return verdict;
}

}  // namespace foothold
