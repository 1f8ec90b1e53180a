#include "engine/stats/fit_statistics.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <limits>
#include <sstream>
#include <string>

#include "engine/stats/internal/covariance.h"
#include "engine/stats/internal/distributions.h"
#include "engine/stats/internal/residual_tests.h"

namespace foothold {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kMachineEpsilon = std::numeric_limits<double>::epsilon();

// A size mismatch between layers is a programming error, not user input.
void CheckInvariant(bool condition, const char* what) {
  if (condition) return;
  std::fprintf(stderr, "foothold: broken invariant in ComputeFitStatistics: %s\n", what);
  std::abort();
}

void AppendNote(const std::string& note, std::string* message) {
  if (!message->empty()) *message += "; ";
  *message += note;
}

bool Fail(const std::ostringstream& text, std::string* error) {
  if (error != nullptr) *error = text.str();
  return false;
}

bool IsNear(double value, double bound, double tolerance) {
  if (!std::isfinite(bound)) return false;
  if (bound == 0) return std::abs(value) <= tolerance;
  return std::abs(value - bound) <= tolerance * std::abs(bound);
}

// Names the first non-finite value or free Jacobian entry, or returns an empty string.
std::string FindNonFinite(const Problem& problem, const Eigen::VectorXd& values,
                          const Eigen::MatrixXd& jacobian) {
  std::ostringstream text;
  for (Eigen::Index i = 0; i < values.size(); ++i) {
    if (!std::isfinite(values[i])) {
      text << "model value at row " << i << " is " << values[i];
      return text.str();
    }
  }
  const std::vector<std::string>& names = problem.model->ParameterNames();
  for (int j = 0; j < problem.NumParameters(); ++j) {
    if (problem.IsFixed(j)) continue;
    for (Eigen::Index i = 0; i < jacobian.rows(); ++i) {
      if (!std::isfinite(jacobian(i, j))) {
        text << "Jacobian at row " << i << " for parameter '" << names[j] << "' is "
             << jacobian(i, j);
        return text.str();
      }
    }
  }
  return "";
}

// Everything derived from the model output becomes NaN; counts and bounds stay.
void MarkUndefined(const Eigen::VectorXd& params, FitStatistics* stats) {
  const Eigen::Index p = params.size();
  stats->is_finite = false;
  stats->has_standard_errors = false;
  for (double* field :
       {&stats->rss, &stats->reduced_chi2, &stats->r2, &stats->rmse, &stats->aic, &stats->aicc,
        &stats->bic, &stats->durbin_watson, &stats->runs_z, &stats->runs_p_value,
        &stats->condition_number, &stats->identifiable_condition_number, &stats->covariance_scale,
        &stats->t_quantile}) {
    *field = kNaN;
  }
  stats->covariance = Eigen::MatrixXd::Constant(p, p, kNaN);
  stats->correlation = Eigen::MatrixXd::Constant(p, p, kNaN);
  stats->standard_errors = Eigen::VectorXd::Constant(p, kNaN);
  stats->ci_low = Eigen::VectorXd::Constant(p, kNaN);
  stats->ci_high = Eigen::VectorXd::Constant(p, kNaN);
}

// rss, reduced chi-square, R^2 about the weighted mean, RMSE, AIC, AICc, BIC.
void ComputeGoodnessOfFit(const Problem& problem, const Eigen::VectorXd& weighted_residuals,
                          const Eigen::VectorXd& inverse_sigma, FitStatistics* stats) {
  const int n = stats->num_points;
  const Eigen::VectorXd& y = problem.data.response;
  stats->rss = weighted_residuals.squaredNorm();
  stats->reduced_chi2 = stats->dof > 0 ? stats->rss / stats->dof : kNaN;
  stats->rmse = n > 0 ? std::sqrt(stats->rss / n) : kNaN;

  // Tested on the data, not on the total sum of squares, which rounding keeps from being 0.
  const bool is_constant = n == 0 || y.maxCoeff() == y.minCoeff();
  if (is_constant) {
    stats->r2 = kNaN;
    AppendNote("the response is constant: r2 is undefined", &stats->message);
  } else {
    const Eigen::ArrayXd weights = inverse_sigma.array().square();
    const double weighted_mean = (weights * y.array()).sum() / weights.sum();
    const double total = (weights * (y.array() - weighted_mean).square()).sum();
    stats->r2 = 1 - stats->rss / total;
  }

  // Gaussian log-likelihood with the variance estimated: -2 ln L = n ln(rss/n) + const;
  // the constant is dropped, and k counts the variance as a parameter.
  const double k = stats->num_free + 1;
  if (n > 0 && stats->rss > 0) {
    const double log_term = n * std::log(stats->rss / n);
    stats->aic = log_term + 2 * k;
    stats->bic = log_term + k * std::log(static_cast<double>(n));
    stats->aicc = n - k - 1 > 0 ? stats->aic + 2 * k * (k + 1) / (n - k - 1) : kNaN;
  } else {
    stats->aic = stats->aicc = stats->bic = kNaN;
    AppendNote("rss = 0: the likelihood is unbounded, aic, aicc and bic are undefined",
               &stats->message);
  }
}

void ComputeResidualDiagnostics(const Problem& problem, const Eigen::VectorXd& weighted_residuals,
                                FitStatistics* stats) {
  const std::vector<int> order = internal::OrderByFirstPredictor(problem.data.predictors);
  stats->durbin_watson = internal::DurbinWatson(weighted_residuals, order);
  const internal::RunsTest runs = internal::WaldWolfowitzRuns(weighted_residuals, order);
  stats->num_runs = runs.num_runs;
  stats->runs_z = runs.z;
  stats->runs_p_value = runs.p_value;
}

// The interval quantile. With absolute sigma the variance is known, so (b - beta) / se is
// asymptotically standard normal; with the variance estimated from rss it is Student-t
// with dof degrees of freedom (exact for linear models with Gaussian errors).
double IntervalQuantile(bool is_absolute, int dof, double confidence_level) {
  const double upper_tail = 1 - (1 - confidence_level) / 2;
  if (is_absolute) {
    return boost::math::quantile(internal::NormalDistribution(), upper_tail);
  }
  if (dof <= 0) return kNaN;
  return boost::math::quantile(internal::StudentsTDistribution(dof), upper_tail);
}

std::string DescribeUnidentifiable(const Problem& problem, const FitStatistics& stats) {
  std::ostringstream text;
  text << "rank " << stats.rank << " of " << stats.num_free << " free parameters:";
  for (size_t k = 0; k < stats.unidentifiable.size(); ++k) {
    text << (k == 0 ? " " : ", ") << problem.model->ParameterNames()[stats.unidentifiable[k]];
  }
  text << (stats.unidentifiable.size() == 1 ? " is" : " are") << " not identifiable";
  return text.str();
}

// Writes covariance, correlation, standard errors and intervals over all p parameters.
// Fixed parameters keep zero rows, zero standard errors and the interval [v, v].
void FillParameterUncertainty(const internal::SvdCovariance& svd,
                              const std::vector<int>& free_index, const Eigen::VectorXd& params,
                              FitStatistics* stats) {
  const Eigen::Index p = params.size();
  const int m = static_cast<int>(free_index.size());
  stats->covariance = Eigen::MatrixXd::Zero(p, p);
  stats->correlation = Eigen::MatrixXd::Zero(p, p);
  stats->standard_errors = Eigen::VectorXd::Zero(p);
  stats->ci_low = params;
  stats->ci_high = params;
  for (int c = 0; c < m; ++c) {
    if (svd.is_unidentifiable[c]) stats->unidentifiable.push_back(free_index[c]);
  }
  for (int c = 0; c < m; ++c) {
    const int a = free_index[c];
    for (int d = 0; d < m; ++d) {
      const int b = free_index[d];
      const bool is_defined = !svd.is_unidentifiable[c] && !svd.is_unidentifiable[d];
      const double unscaled = svd.covariance(c, d);
      stats->covariance(a, b) = is_defined ? stats->covariance_scale * unscaled : kNaN;
      if (!is_defined) {
        stats->correlation(a, b) = kNaN;
      } else if (c == d) {
        stats->correlation(a, b) = 1;
      } else {
        // Clamped: rounding can push a near-perfect correlation just past +-1.
        const double r = unscaled / std::sqrt(svd.covariance(c, c) * svd.covariance(d, d));
        stats->correlation(a, b) = std::clamp(r, -1.0, 1.0);
      }
    }
    const double se = std::sqrt(stats->covariance(a, a));
    stats->standard_errors[a] = se;
    stats->ci_low[a] = params[a] - stats->t_quantile * se;
    stats->ci_high[a] = params[a] + stats->t_quantile * se;
  }
}

// Rank, conditioning, covariance scale and interval quantile from the SVD of the weighted
// Jacobian of the free parameters; then the per-parameter quantities.
void ComputeUncertainty(const Problem& problem, const Eigen::VectorXd& params,
                        const Eigen::MatrixXd& jacobian, const Eigen::VectorXd& inverse_sigma,
                        const StatisticsOptions& options, FitStatistics* stats) {
  const int p = problem.NumParameters();
  std::vector<int> free_index;
  for (int j = 0; j < p; ++j) {
    if (!problem.IsFixed(j)) free_index.push_back(j);
  }
  const int m = static_cast<int>(free_index.size());
  Eigen::MatrixXd weighted_jacobian(jacobian.rows(), m);
  for (int c = 0; c < m; ++c) {
    weighted_jacobian.col(c) = jacobian.col(free_index[c]).cwiseProduct(inverse_sigma);
  }
  const internal::SvdCovariance svd =
      internal::ComputeSvdCovariance(weighted_jacobian, options.rank_tolerance);
  stats->rank = svd.rank;
  stats->is_rank_deficient = svd.rank < m;
  stats->condition_number = svd.condition_number;
  stats->identifiable_condition_number = svd.identifiable_condition_number;

  const bool is_absolute = problem.data.HasSigma() && problem.sigma_mode == SigmaMode::kAbsolute;
  stats->covariance_scale = is_absolute ? 1.0 : (stats->dof > 0 ? stats->rss / stats->dof : kNaN);
  stats->has_standard_errors = std::isfinite(stats->covariance_scale);
  if (!stats->has_standard_errors) {
    AppendNote("dof = " + std::to_string(stats->dof) +
                   " and no absolute sigma: the residual variance cannot be estimated",
               &stats->message);
  }
  stats->t_quantile = IntervalQuantile(is_absolute, stats->dof, options.confidence_level);

  FillParameterUncertainty(svd, free_index, params, stats);
  if (stats->is_rank_deficient) {
    AppendNote(DescribeUnidentifiable(problem, *stats), &stats->message);
  }
}

}  // namespace

bool StatisticsOptions::Validate(std::string* error) const {
  std::ostringstream text;
  text.precision(12);
  if (!(confidence_level > 0 && confidence_level < 1)) {
    text << "confidence_level = " << confidence_level << ": must be in (0, 1)";
    return Fail(text, error);
  }
  if (!(rank_tolerance >= kMachineEpsilon && rank_tolerance < 1)) {
    text << "rank_tolerance = " << rank_tolerance << ": must be in [" << kMachineEpsilon << ", 1)";
    return Fail(text, error);
  }
  if (!(at_bound_tolerance >= 0 && std::isfinite(at_bound_tolerance))) {
    text << "at_bound_tolerance = " << at_bound_tolerance << ": must be finite and >= 0";
    return Fail(text, error);
  }
  return true;
}

FitStatistics ComputeFitStatistics(const Problem& problem, const Eigen::VectorXd& params,
                                   const StatisticsOptions& options) {
  CheckInvariant(problem.model != nullptr, "problem.model is null");
  CheckInvariant(params.size() == problem.NumParameters(), "params size != NumParameters()");
  CheckInvariant(options.Validate(nullptr), "options fail StatisticsOptions::Validate");
  const Dataset& data = problem.data;
  const int n = data.NumPoints();
  const int p = problem.NumParameters();
  CheckInvariant(data.predictors.rows() == n, "predictor rows != response size");
  CheckInvariant(!data.HasSigma() || data.sigma.size() == n, "sigma size != response size");
  CheckInvariant(problem.is_fixed.empty() || static_cast<int>(problem.is_fixed.size()) == p,
                 "is_fixed size != NumParameters()");

  FitStatistics stats;
  stats.num_points = n;
  stats.num_free = problem.NumFree();
  stats.dof = n - stats.num_free;
  stats.at_bound.assign(static_cast<size_t>(p), false);
  for (int j = 0; j < p; ++j) {
    stats.at_bound[j] =
        !problem.IsFixed(j) && (IsNear(params[j], problem.Lower(j), options.at_bound_tolerance) ||
                                IsNear(params[j], problem.Upper(j), options.at_bound_tolerance));
  }

  // NaN first, so that entries the model forgets to write are caught as non-finite.
  Eigen::VectorXd values = Eigen::VectorXd::Constant(n, kNaN);
  Eigen::MatrixXd jacobian = Eigen::MatrixXd::Constant(n, p, kNaN);
  problem.model->EvaluateWithJacobian(data.predictors, params.data(), values.data(),
                                      jacobian.data());
  stats.residuals = data.response - values;
  const std::string non_finite = FindNonFinite(problem, values, jacobian);
  if (!non_finite.empty()) {
    MarkUndefined(params, &stats);
    stats.message = non_finite;
    return stats;
  }

  const Eigen::VectorXd inverse_sigma =
      data.HasSigma() ? Eigen::VectorXd(data.sigma.cwiseInverse()) : Eigen::VectorXd::Ones(n);
  const Eigen::VectorXd weighted_residuals = (values - data.response).cwiseProduct(inverse_sigma);
  ComputeGoodnessOfFit(problem, weighted_residuals, inverse_sigma, &stats);
  ComputeResidualDiagnostics(problem, weighted_residuals, &stats);
  ComputeUncertainty(problem, params, jacobian, inverse_sigma, options, &stats);
  return stats;
}

}  // namespace foothold
