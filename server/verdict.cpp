#include "server/verdict.h"

#include <algorithm>
#include <boost/math/distributions/chi_squared.hpp>
#include <boost/math/distributions/normal.hpp>
#include <cmath>
#include <cstdio>
#include <limits>
#include <string>
#include <vector>

namespace foothold {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

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

// The data's x range, NaN when the problem has no "x" predictor or no points.
struct XRange {
  double min = kNaN;
  double max = kNaN;
  bool IsKnown() const { return std::isfinite(min) && std::isfinite(max); }
};

XRange XRangeOf(const Problem& problem) {
  XRange range;
  const int column = problem.data.PredictorIndex("x");
  if (column < 0 || problem.data.predictors.rows() == 0) return range;
  range.min = problem.data.predictors.col(column).minCoeff();
  range.max = problem.data.predictors.col(column).maxCoeff();
  return range;
}

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

// dof < max(min_degrees_of_freedom, free parameters): too little data beyond the parameters
// to estimate the noise or test the residuals.
void AddSizeFindings(const FitOutcome& outcome, const VerdictOptions& options,
                     std::vector<Finding>* findings) {
  const FitStatistics& stats = outcome.statistics;
  if (stats.num_free == 0) return;
  const int needed = std::max(options.min_degrees_of_freedom, stats.num_free);
  if (stats.dof >= needed) return;
  findings->push_back(
      {"too_few_points", std::to_string(stats.num_points) + " points for " +
                             std::to_string(stats.num_free) + " free parameters leave " +
                             std::to_string(stats.dof) + " degrees of freedom (at least " +
                             std::to_string(needed) +
                             " needed); add points or fix parameters before trusting the "
                             "uncertainties."});
}

void AddIdentifiabilityFindings(const FitOutcome& outcome, const VerdictOptions& options,
                                std::vector<Finding>* findings) {
  const FitStatistics& stats = outcome.statistics;
  const std::vector<std::string>& names = outcome.parameter_names;
  if (!stats.unidentifiable.empty()) {
    std::vector<std::string> affected;
    for (int j : stats.unidentifiable) affected.push_back(names[j]);
    findings->push_back({"not_identifiable", "The data cannot determine " + JoinNames(affected) +
                                                 " (the Jacobian is rank deficient); fix one of "
                                                 "them or simplify the model."});
  } else if (stats.condition_number > options.max_condition_number) {
    findings->push_back(
        {"not_identifiable", "The parameters are barely determined (condition number " +
                                 Short(stats.condition_number) + " > " +
                                 Short(options.max_condition_number) +
                                 "); fix or rescale parameters before trusting the errors."});
  }
}

void AddBoundFindings(const FitOutcome& outcome, std::vector<Finding>* findings) {
  const FitStatistics& stats = outcome.statistics;
  const std::vector<std::string>& names = outcome.parameter_names;
  std::vector<std::string> at_bound;
  for (size_t j = 0; j < names.size() && j < stats.at_bound.size(); ++j) {
    const bool fixed = j < outcome.is_fixed.size() && outcome.is_fixed[j];
    if (stats.at_bound[j] && !fixed) at_bound.push_back(names[j]);
  }
  if (at_bound.empty()) return;
  findings->push_back({"at_bound", JoinNames(at_bound) + (at_bound.size() == 1 ? " sits" : " sit") +
                                       " on a bound, so the optimum may lie beyond it; widen "
                                       "the bounds or check the model."});
}

void AddCorrelationFindings(const FitOutcome& outcome, const VerdictOptions& options,
                            std::vector<Finding>* findings) {
  const Eigen::MatrixXd& correlation = outcome.statistics.correlation;
  const std::vector<std::string>& names = outcome.parameter_names;
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
  if (worst_a < 0 || std::abs(worst) <= options.max_abs_correlation) return;
  findings->push_back({"strongly_correlated",
                       names[worst_a] + " and " + names[worst_b] +
                           " trade off against each other (correlation " + Short(worst) +
                           "); their individual errors mislead, so fix one, reparametrise or "
                           "measure where they differ."});
}

// Runs test (Wald & Wolfowitz 1940) and Durbin–Watson (Durbin & Watson 1950). Under
// independent residuals DW is asymptotically normal with mean 2 and variance 4/n, since
// DW ~ 2(1 - r1) and the lag-1 autocorrelation r1 has variance 1/n.
void AddResidualFindings(const FitOutcome& outcome, const VerdictOptions& options,
                         std::vector<Finding>* findings) {
  const FitStatistics& stats = outcome.statistics;
  if (std::isfinite(stats.runs_p_value) && stats.runs_p_value < options.runs_test_level) {
    findings->push_back(
        {"structured_residuals",
         "The residual signs run in long stretches (runs test p = " + Short(stats.runs_p_value) +
             " < " + Short(options.runs_test_level) +
             "); the model probably misses a feature of the data: look at the residual plot."});
    return;
  }
  if (stats.num_points < 2 || !std::isfinite(stats.durbin_watson)) return;
  const boost::math::normal standard_normal;
  const double z = boost::math::quantile(standard_normal, 1 - options.durbin_watson_level / 2);
  const double half_width = z * 2 / std::sqrt(static_cast<double>(stats.num_points));
  if (std::abs(stats.durbin_watson - 2) <= half_width) return;
  const bool positive = stats.durbin_watson < 2;
  findings->push_back(
      {"structured_residuals", std::string("Neighbouring residuals are ") +
                                   (positive ? "alike" : "alternating") + " (Durbin-Watson " +
                                   Short(stats.durbin_watson) + ", outside 2 +- " +
                                   Short(half_width) + "); " +
                                   (positive ? "the model probably misses a feature of the data"
                                             : "the noise is not independent") +
                                   ": look at the residual plot."});
}

// With absolute sigma the chi-square follows the chi-square distribution with dof degrees of
// freedom when model and sigma are right; outside its central range one of them is wrong.
void AddChiSquareFindings(const FitOutcome& outcome, const VerdictOptions& options,
                          std::vector<Finding>* findings) {
  const FitStatistics& stats = outcome.statistics;
  if (stats.dof <= 0 || !outcome.IsWeighted() || outcome.sigma_mode != SigmaMode::kAbsolute ||
      !std::isfinite(stats.rss)) {
    return;
  }
  const boost::math::chi_squared distribution(stats.dof);
  const double tail = (1 - options.chi2_range_probability) / 2;
  const double low = boost::math::quantile(distribution, tail) / stats.dof;
  const double high = boost::math::quantile(distribution, 1 - tail) / stats.dof;
  const std::string range = "outside its " + Short(100 * options.chi2_range_probability) +
                            "% range " + Short(low) + " to " + Short(high) + " for " +
                            std::to_string(stats.dof) + " degrees of freedom";
  if (stats.reduced_chi2 > high) {
    findings->push_back({"chi2_inconsistent",
                         "The residuals are larger than the given sigma allow (reduced "
                         "chi-square " +
                             Short(stats.reduced_chi2) + " is too high, " + range +
                             "); the sigma are too small or the model misses something."});
  } else if (stats.reduced_chi2 < low) {
    findings->push_back({"chi2_inconsistent",
                         "The residuals are smaller than the given sigma suggest (reduced "
                         "chi-square " +
                             Short(stats.reduced_chi2) + " is too low, " + range +
                             "); the sigma are probably overestimated, so the errors are too "
                             "wide."});
  }
}

// A robust fit marks the points whose standardised residual passes the loss's cut; they
// were down-weighted (or ignored), which a person should confirm was right.
void AddOutlierFindings(const FitOutcome& outcome, const VerdictOptions& options,
                        std::vector<Finding>* findings) {
  const int count = static_cast<int>(outcome.outliers.size());
  if (count == 0 || count < options.min_outliers) return;
  constexpr int kNamedPoints = 5;
  std::vector<std::string> shown;
  for (int k = 0; k < count && k < kNamedPoints; ++k) {
    shown.push_back(std::to_string(outcome.outliers[k]));
  }
  std::string list = JoinNames(shown);
  if (count > kNamedPoints) list += " and " + std::to_string(count - kNamedPoints) + " more";
  findings->push_back(
      {"outliers", std::to_string(count) + (count == 1 ? " point lies" : " points lie") +
                       " beyond " + Short(outcome.outlier_cut) + " robust scales of the " +
                       outcome.loss + " fit (point index " + list +
                       ", from 0) and barely count; check them before trusting the result."});
}

// Why the profile interval of parameter j disagrees with its Wald interval, or "" when they
// agree or cannot be compared (no Wald interval, an end stopped or failed to refit).
std::string IntervalDisagreement(const FitOutcome& outcome, size_t j, double max_ratio) {
  const FitStatistics& stats = outcome.statistics;
  const ProfileInterval& interval = outcome.profile.intervals[j];
  if (!interval.is_profiled || j >= static_cast<size_t>(outcome.best.parameters.size()) ||
      j >= static_cast<size_t>(stats.ci_low.size())) {
    return "";
  }
  const double estimate = outcome.best.parameters[j];
  struct Side {
    const char* name;
    ProfileEnd end;
    double profile_half_width;
    double wald_half_width;
  };
  const Side sides[] = {
      {"lower", interval.lower_end, estimate - interval.lower, estimate - stats.ci_low[j]},
      {"upper", interval.upper_end, interval.upper - estimate, stats.ci_high[j] - estimate}};
  for (const Side& side : sides) {
    if (!(std::isfinite(side.wald_half_width) && side.wald_half_width > 0)) return "";
  }
  for (const Side& side : sides) {
    if (side.end == ProfileEnd::kBound || side.end == ProfileEnd::kFlat) {
      return std::string(side.name) + " end open (" + ToString(side.end) + ")";
    }
    if (side.end != ProfileEnd::kCrossed) continue;
    const double ratio = side.profile_half_width / side.wald_half_width;
    if (ratio > max_ratio || ratio < 1 / max_ratio) {
      return std::string(side.name) + " half-width " + Short(ratio) + " times the Wald one";
    }
  }
  return "";
}

// Profile and Wald intervals measure the same uncertainty when the model is nearly linear
// over the interval; a strong mismatch shows a curved or barely identified direction.
void AddIntervalFindings(const FitOutcome& outcome, const VerdictOptions& options,
                         std::vector<Finding>* findings) {
  if (!outcome.HasProfile() || !outcome.profile.is_computed) return;
  std::vector<std::string> names;
  std::string first_reason;
  for (size_t j = 0; j < outcome.parameter_names.size() && j < outcome.profile.intervals.size();
       ++j) {
    const std::string reason = IntervalDisagreement(outcome, j, options.max_interval_ratio);
    if (reason.empty()) continue;
    if (names.empty()) first_reason = outcome.parameter_names[j] + ": " + reason;
    names.push_back(outcome.parameter_names[j]);
  }
  if (names.empty()) return;
  findings->push_back(
      {"intervals_disagree",
       "The profile and Wald intervals of " + JoinNames(names) + " disagree (" + first_reason +
           "); the fit is curved or barely determined in that direction, so quote the profile "
           "interval, not the standard error."});
}

// Location parameters of the catalogue families: the x of a peak, a midpoint or an
// inflection. Expressions have no such names and are not judged.
struct Location {
  std::string label;
  double value = kNaN;
};

std::vector<Location> LocationsOf(const FitOutcome& outcome) {
  std::vector<Location> locations;
  if (!outcome.model.IsFamily()) return locations;
  const std::vector<std::string>& names = outcome.parameter_names;
  const Eigen::VectorXd& p = outcome.best.parameters;
  if (p.size() != static_cast<Eigen::Index>(names.size())) return locations;
  int displacement = -1;
  int rate = -1;
  for (size_t j = 0; j < names.size(); ++j) {
    const std::string& name = names[j];
    if (name.rfind("center", 0) == 0 || name == "log_ec50" || name == "km" || name == "kd") {
      locations.push_back({name, p[j]});
    }
    if (name == "displacement") displacement = static_cast<int>(j);
    if (name == "rate") rate = static_cast<int>(j);
  }
  if (outcome.model.family == "gompertz" && displacement >= 0 && rate >= 0 && p[rate] != 0) {
    locations.push_back({"the inflection (displacement/rate)", p[displacement] / p[rate]});
  }
  return locations;
}

void AddExtrapolationFindings(const FitOutcome& outcome, const XRange& range,
                              const VerdictOptions& options, std::vector<Finding>* findings) {
  if (!range.IsKnown()) return;
  const double margin = options.extrapolation_margin * (range.max - range.min);
  std::vector<std::string> outside;
  for (const Location& location : LocationsOf(outcome)) {
    if (!std::isfinite(location.value)) continue;
    if (location.value < range.min - margin || location.value > range.max + margin) {
      outside.push_back(location.label + " = " + Short(location.value));
    }
  }
  if (outside.empty()) return;
  findings->push_back({"extrapolated", JoinNames(outside) + " lies outside the data's x range " +
                                           Short(range.min) + " to " + Short(range.max) +
                                           "; the value is an extrapolation, so measure "
                                           "across it before relying on it."});
}

// What the multistart search says about the answer's uniqueness.
void AddAmbiguityFindings(const FitOutcome& outcome, const VerdictOptions& options,
                          std::vector<Finding>* findings) {
  if (!outcome.ambiguous_basins || outcome.basins.size() <= 1) return;
  if (outcome.best_gap_chi2 < options.equivalent_gap_chi2) {
    findings->push_back(
        {"ambiguous_basins", "Two different parameter sets give the same curve (gap " +
                                 Short(outcome.best_gap_chi2) +
                                 " in chi-square units): the model has a symmetry, such as a sign "
                                 "or an exchange of parameters; bound one parameter (a sign, an "
                                 "order) so the answer is unique."});
    return;
  }
  findings->push_back(
      {"ambiguous_basins",
       "Another optimum fits almost as well (gap " + Short(outcome.best_gap_chi2) +
           " in chi-square units, under 1); the data do not choose between them, so compare "
           "the basins before trusting one."});
}

// Starts that ran out of iterations below the best basin: the cost falls further along a
// path the solver could not finish, usually toward parameter values at infinity.
void AddRunawayFindings(const FitOutcome& outcome, std::vector<Finding>* findings) {
  if (outcome.runaway_starts <= 0 || outcome.basins.empty()) return;
  const double best = outcome.basins.front().rss;
  const double percent = best > 0 ? 100 * (best - outcome.runaway_rss) / best : kNaN;
  const std::string count = std::to_string(outcome.runaway_starts);
  std::string sentence = count + (outcome.runaway_starts == 1 ? " start was" : " starts were") +
                         " still descending when a solver limit stopped them, at an rss " +
                         Short(percent) + " % below the reported optimum";
  if (!outcome.runaway_parameters.empty()) {
    sentence += ", with " + JoinNames(outcome.runaway_parameters) +
                " beyond the search box: the cost keeps falling toward parameter values the "
                "model reaches only in a limit, so the reported optimum is not the lowest; fit "
                "a simpler model or bound those parameters.";
  } else {
    sentence +=
        ": the cost keeps falling along a path the solver could not finish (often a ridge "
        "toward a limit of the model), so the reported optimum is not the lowest; raise "
        "max_iterations, fit a simpler model or bound the parameters.";
  }
  findings->push_back({"runaway_descent", sentence});
}

void AddSingleStartFindings(const FitOutcome& outcome, std::vector<Finding>* findings) {
  if (!outcome.best_basin_single_start) return;
  findings->push_back({"best_basin_single_start",
                       "Only one start reached the best optimum; run more starts to confirm "
                       "that nothing better remains."});
}

Verdict Judge(const FitOutcome& outcome, const XRange& range, const VerdictOptions& options) {
  // Most severe first: nothing to judge, too little data, an answer that is not unique, an
  // answer the model or the noise contradicts, then cautions about single parameters.
  std::vector<Finding> findings;
  AddConvergenceFindings(outcome, &findings);
  AddSizeFindings(outcome, options, &findings);
  AddIdentifiabilityFindings(outcome, options, &findings);
  AddAmbiguityFindings(outcome, options, &findings);
  AddRunawayFindings(outcome, &findings);
  AddBoundFindings(outcome, &findings);
  AddResidualFindings(outcome, options, &findings);
  AddChiSquareFindings(outcome, options, &findings);
  AddOutlierFindings(outcome, options, &findings);
  AddCorrelationFindings(outcome, options, &findings);
  AddIntervalFindings(outcome, options, &findings);
  AddExtrapolationFindings(outcome, range, options, &findings);
  AddSingleStartFindings(outcome, &findings);
  Verdict verdict;
  for (const Finding& finding : findings) verdict.flags.push_back(finding.flag);
  if (findings.empty()) {
    verdict.summary = "Converged to a well-determined optimum; the residuals show no structure.";
  } else {
    verdict.summary = findings.front().sentence;
  }
  return verdict;
}

bool InOpenUnit(double value) { return value > 0 && value < 1; }

}  // namespace

bool VerdictOptions::Validate(std::string* error) const {
  auto fail = [error](const std::string& field, double value, const std::string& rule) {
    *error = field + " = " + Short(value) + ": " + rule;
    return false;
  };
  if (!InOpenUnit(max_abs_correlation)) {
    return fail("max_abs_correlation", max_abs_correlation, "must be in (0, 1)");
  }
  if (!(max_condition_number > 1)) {
    return fail("max_condition_number", max_condition_number, "must be > 1");
  }
  if (!InOpenUnit(runs_test_level)) {
    return fail("runs_test_level", runs_test_level, "must be in (0, 1)");
  }
  if (!InOpenUnit(durbin_watson_level)) {
    return fail("durbin_watson_level", durbin_watson_level, "must be in (0, 1)");
  }
  if (!InOpenUnit(chi2_range_probability)) {
    return fail("chi2_range_probability", chi2_range_probability, "must be in (0, 1)");
  }
  if (min_degrees_of_freedom < 1) {
    return fail("min_degrees_of_freedom", min_degrees_of_freedom, "must be >= 1");
  }
  if (!(extrapolation_margin >= 0) || !std::isfinite(extrapolation_margin)) {
    return fail("extrapolation_margin", extrapolation_margin, "must be finite and >= 0");
  }
  if (min_outliers < 1) return fail("min_outliers", min_outliers, "must be >= 1");
  if (!(max_interval_ratio > 1) || !std::isfinite(max_interval_ratio)) {
    return fail("max_interval_ratio", max_interval_ratio, "must be finite and > 1");
  }
  if (!(equivalent_gap_chi2 >= 0) || !std::isfinite(equivalent_gap_chi2)) {
    return fail("equivalent_gap_chi2", equivalent_gap_chi2, "must be finite and >= 0");
  }
  return true;
}

Verdict JudgeFit(const FitOutcome& outcome, const VerdictOptions& options) {
  return Judge(outcome, XRange{}, options);
}

Verdict JudgeFit(const FitOutcome& outcome, const Problem& problem, const VerdictOptions& options) {
  return Judge(outcome, XRangeOf(problem), options);
}

}  // namespace foothold
