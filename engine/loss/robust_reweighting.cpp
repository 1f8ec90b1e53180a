#include "engine/loss/robust_reweighting.h"

#include <cassert>
#include <cmath>
#include <limits>

namespace foothold {

bool StandardisedResiduals(const Problem& problem, const Eigen::VectorXd& params,
                           Eigen::VectorXd* residuals) {
  const int n = problem.data.NumPoints();
  Eigen::VectorXd values = Eigen::VectorXd::Constant(n, std::numeric_limits<double>::quiet_NaN());
  problem.model->Evaluate(problem.data.predictors, params.data(), values.data());
  *residuals = values - problem.data.response;
  if (problem.data.HasSigma()) *residuals = residuals->cwiseQuotient(problem.data.sigma);
  return residuals->allFinite();
}

double RobustScale(const Eigen::VectorXd& residuals, double requested, int num_free) {
  if (requested > 0) return requested;
  const double n = static_cast<double>(residuals.size());
  const double correction = n > num_free ? std::sqrt(n / (n - num_free)) : 1.0;
  const double mad = MadScale(residuals) * correction;
  if (mad > 0 && std::isfinite(mad)) return mad;
  const double rms =
      residuals.size() > 0 ? residuals.norm() / std::sqrt(double(residuals.size())) : 0;
  return rms > 0 && std::isfinite(rms) ? rms : 1.0;
}

bool AssessRobustFit(const Problem& problem, const Eigen::VectorXd& params, LossKind loss,
                     double requested_scale, RobustAssessment* assessment) {
  Eigen::VectorXd e;
  if (!StandardisedResiduals(problem, params, &e)) return false;
  RobustAssessment& a = *assessment;
  a.loss = loss;
  a.is_scale_automatic = !(requested_scale > 0);
  a.scale = RobustScale(e, requested_scale, problem.NumFree());
  a.outlier_cut = OutlierCut(loss);
  a.outliers = FlagOutliers(loss, e, a.scale);
  a.weights.resize(e.size());
  for (int i = 0; i < e.size(); ++i) {
    a.weights[i] = std::max(EvaluateLoss(loss, e[i] / a.scale).weight, kMinWeight);
  }
  a.cost = 2 * RobustObjective(loss, e, a.scale);
  return true;
}

Problem ReweightedProblem(const Problem& problem, const Eigen::VectorXd& weights) {
  assert(weights.size() == problem.data.NumPoints());
  Problem reweighted = problem;
  Eigen::VectorXd sigma =
      problem.data.HasSigma() ? problem.data.sigma : Eigen::VectorXd::Ones(weights.size());
  reweighted.data.sigma = sigma.cwiseQuotient(weights.cwiseSqrt());
  reweighted.sigma_mode = SigmaMode::kRelative;
  return reweighted;
}

FitStatistics ComputeRobustStatistics(const Problem& problem, const Eigen::VectorXd& params,
                                      const RobustAssessment& assessment) {
  FitStatistics statistics = ComputeFitStatistics(problem, params);
  Eigen::VectorXd e;
  if (!statistics.is_finite || !StandardisedResiduals(problem, params, &e)) return statistics;
  const double n = static_cast<double>(e.size());
  const double p = problem.NumFree();
  const double s = assessment.scale;
  double factor = std::numeric_limits<double>::quiet_NaN();
  if (assessment.loss == LossKind::kL1) {
    factor = 0.5 * M_PI * s * s;
  } else if (n > p) {
    double sum_psi2 = 0, sum_dpsi = 0, sum_dpsi2 = 0;
    for (int i = 0; i < e.size(); ++i) {
      const LossValue v = EvaluateLoss(assessment.loss, e[i] / s);
      sum_psi2 += v.psi * v.psi;
      sum_dpsi += v.dpsi;
      sum_dpsi2 += v.dpsi * v.dpsi;
    }
    const double mean = sum_dpsi / n;
    if (mean > 0) {
      const double variance = std::max(sum_dpsi2 / n - mean * mean, 0.0);
      const double k = 1 + (p / n) * variance / (mean * mean);
      factor = k * k * s * s * (sum_psi2 / (n - p)) / (mean * mean);
    }
  }
  if (!(factor > 0) || !std::isfinite(factor)) {
    statistics.has_standard_errors = false;
    statistics.standard_errors.setConstant(std::numeric_limits<double>::quiet_NaN());
    statistics.message += (statistics.message.empty() ? "" : "; ");
    statistics.message += "robust covariance undefined: sum of psi'(z) <= 0 or too few points";
    return statistics;
  }
  // (J^T W J)^{-1} times factor: the same problem with every sigma multiplied by sqrt(factor),
  // its sigma taken as absolute.
  Problem scaled = problem;
  const Eigen::VectorXd sigma =
      problem.data.HasSigma() ? problem.data.sigma : Eigen::VectorXd::Ones(e.size());
  scaled.data.sigma = sigma * std::sqrt(factor);
  scaled.sigma_mode = SigmaMode::kAbsolute;
  const FitStatistics covariance = ComputeFitStatistics(scaled, params);
  statistics.has_standard_errors = covariance.has_standard_errors;
  statistics.covariance_scale = factor;
  statistics.covariance = covariance.covariance;
  statistics.correlation = covariance.correlation;
  statistics.standard_errors = covariance.standard_errors;
  statistics.ci_low = covariance.ci_low;
  statistics.ci_high = covariance.ci_high;
  statistics.t_quantile = covariance.t_quantile;
  return statistics;
}

}  // namespace foothold
