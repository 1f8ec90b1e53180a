#include "engine/solve/local_fit.h"

#include <chrono>
#include <cmath>
#include <limits>
#include <sstream>

#include "engine/solve/variable_projection.h"

namespace foothold {
namespace {

constexpr const char* kProjectionPrefix = "variable projection: ";
constexpr const char* kPlainPrefix = "levenberg-marquardt: ";
// Above this cancellation ratio the projected end point is a degenerate valley (see
// CancellationRatio) and plain Levenberg–Marquardt runs from the start as well.
constexpr double kMaxCancellation = 1e6;
// A weighted basis column whose norm lies outside [kBasisRange, 1 / kBasisRange] counts as
// degenerate in the same way.
constexpr double kBasisRange = 1e-100;

// The full problem's rss at `params`, NaN when the model is not finite there.
double FullCost(const Problem& problem, const Eigen::VectorXd& params) {
  const int n = problem.data.NumPoints();
  Eigen::VectorXd values = Eigen::VectorXd::Constant(n, std::numeric_limits<double>::quiet_NaN());
  problem.model->Evaluate(problem.data.predictors, params.data(), values.data());
  Eigen::VectorXd residual = values - problem.data.response;
  if (problem.data.HasSigma()) residual = residual.cwiseQuotient(problem.data.sigma);
  if (!residual.allFinite()) return std::numeric_limits<double>::quiet_NaN();
  return residual.squaredNorm();
}

// Largest |c_l| ||W Φ_l|| / ||W f|| at `params`: how far the linear terms cancel each other.
// Separable problems have valleys at infinity where basis functions become collinear and
// their coefficients grow without bound while the fit stays finite (an exponential whose
// rate goes to 0 against the constant); this ratio grows along them.
double CancellationRatio(const Problem& problem, const ProjectionSplit& split,
                         const Eigen::VectorXd& params) {
  const int n = problem.data.NumPoints();
  Eigen::VectorXd values(n);
  Eigen::MatrixXd jacobian(n, problem.NumParameters());
  problem.model->EvaluateWithJacobian(problem.data.predictors, params.data(), values.data(),
                                      jacobian.data());
  Eigen::VectorXd weights = Eigen::VectorXd::Ones(n);
  if (problem.data.HasSigma()) weights = problem.data.sigma.cwiseInverse();
  const double fit_norm = values.cwiseProduct(weights).stableNorm();
  double largest = 0;
  for (int j : split.linear) {
    const double basis_norm = jacobian.col(j).cwiseProduct(weights).stableNorm();
    // A basis function near the ends of the double range carries no information its
    // coefficient can trust (exp(b2/(x+b3)) of 1e-189 against a coefficient of 1e189).
    if (basis_norm != 0 && (basis_norm < kBasisRange || basis_norm > 1 / kBasisRange)) {
      return std::numeric_limits<double>::infinity();
    }
    largest = std::max(largest, std::abs(params[j]) * basis_norm);
  }
  if (fit_norm == 0) return largest == 0 ? 0 : std::numeric_limits<double>::infinity();
  const double ratio = largest / fit_norm;
  return std::isfinite(ratio) ? ratio : std::numeric_limits<double>::infinity();
}

LocalFitSummary RunProjected(const Problem& problem, const Eigen::VectorXd& start,
                             const ProjectionSplit& split, const LocalFitOptions& options) {
  const auto started = std::chrono::steady_clock::now();
  ProjectedModel projected(problem, split, start);
  const Problem reduced = MakeProjectedProblem(problem, projected);
  Eigen::VectorXd theta(split.nonlinear.size());
  for (size_t k = 0; k < split.nonlinear.size(); ++k) theta[k] = start[split.nonlinear[k]];

  LocalFitSummary inner = MinimizeLevenbergMarquardt(reduced, theta, options.lm);
  LocalFitSummary summary = inner;
  summary.start = start;
  summary.initial_cost = FullCost(problem, start);
  std::ostringstream message;
  message << kProjectionPrefix << split.nonlinear.size() << " nonlinear, " << split.linear.size()
          << " linear solved by QR; " << inner.message;
  Eigen::VectorXd full;
  if (inner.termination != Termination::kNonFiniteModel &&
      projected.Expand(inner.parameters.data(), &full)) {
    summary.parameters = full;
    summary.final_cost = FullCost(problem, full);
  } else {
    summary.parameters = start;
    summary.final_cost = summary.initial_cost;
    if (inner.termination != Termination::kNonFiniteModel) {
      summary.termination = Termination::kNonFiniteModel;
      message << "; the linear solve is not finite at the end point";
    }
  }
  summary.message = message.str();
  summary.total_seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  return summary;
}

}  // namespace

bool LocalFitOptions::Validate(std::string* error) const {
  std::string lm_error;
  if (lm.Validate(&lm_error)) return true;
  if (error != nullptr) *error = "lm." + lm_error;
  return false;
}

LocalFitSummary RunLocalFit(const Problem& problem, const Eigen::VectorXd& start,
                            const LocalFitOptions& options) {
  std::string why_not = "switched off";
  if (options.use_variable_projection) {
    const ProjectionSplit split = SplitForProjection(problem);
    if (split.Applies()) {
      LocalFitSummary projected = RunProjected(problem, start, split, options);
      const double ratio = projected.termination == Termination::kNonFiniteModel
                               ? 0
                               : CancellationRatio(problem, split, projected.parameters);
      if (ratio <= kMaxCancellation) return projected;
      // A valley at infinity: plain LM from the same start, keeping the lower rss.
      // The fallback gets what is left of the deadline, not a fresh one.
      LevenbergMarquardtOptions lm = options.lm;
      lm.deadline_seconds = options.lm.deadline_seconds - projected.total_seconds;
      if (!(lm.deadline_seconds > 0)) return projected;
      LocalFitSummary plain = MinimizeLevenbergMarquardt(problem, start, lm);
      std::ostringstream message;
      const bool plain_better = !(projected.final_cost <= plain.final_cost);
      message << (plain_better ? kPlainPrefix : kProjectionPrefix)
              << "projection ended in a degenerate valley (linear terms cancel or a basis "
              << "function leaves the double range: ratio " << ratio << " > " << kMaxCancellation
              << ", rss " << projected.final_cost << "), plain LM from the start reached rss "
              << plain.final_cost << "; " << (plain_better ? plain.message : projected.message);
      LocalFitSummary kept = plain_better ? plain : projected;
      kept.message = message.str();
      kept.num_iterations = projected.num_iterations + plain.num_iterations;
      kept.num_evaluations = projected.num_evaluations + plain.num_evaluations;
      kept.num_jacobian_evaluations =
          projected.num_jacobian_evaluations + plain.num_jacobian_evaluations;
      kept.total_seconds = projected.total_seconds + plain.total_seconds;
      return kept;
    }
    why_not = split.not_applicable;
  }
  LocalFitSummary summary = MinimizeLevenbergMarquardt(problem, start, options.lm);
  summary.message =
      std::string(kPlainPrefix) + "projection not used (" + why_not + "); " + summary.message;
  return summary;
}

bool UsedVariableProjection(const LocalFitSummary& summary) {
  return summary.message.rfind(kProjectionPrefix, 0) == 0;
}

}  // namespace foothold
