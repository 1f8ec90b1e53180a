#include "engine/solve/local_fit.h"

#include <Eigen/SVD>
#include <chrono>
#include <cmath>
#include <limits>
#include <sstream>
#include <vector>

#include "engine/loss/robust_reweighting.h"
#include "engine/solve/bfgs.h"
#include "engine/solve/gauss_newton.h"
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

// Least squares by Levenberg–Marquardt, with variable projection where it applies.
LocalFitSummary RunLevenbergMarquardt(const Problem& problem, const Eigen::VectorXd& start,
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

// The free parameters' indices and bounds of a problem.
struct FreeSet {
  std::vector<int> index;
  Eigen::VectorXd lower;
  Eigen::VectorXd upper;
};
FreeSet FreeParameters(const Problem& problem) {
  FreeSet set;
  for (int j = 0; j < problem.NumParameters(); ++j) {
    if (!problem.IsFixed(j)) set.index.push_back(j);
  }
  const int m = static_cast<int>(set.index.size());
  set.lower.resize(m);
  set.upper.resize(m);
  for (int k = 0; k < m; ++k) {
    set.lower[k] = problem.Lower(set.index[k]);
    set.upper[k] = problem.Upper(set.index[k]);
  }
  return set;
}

// BFGS on f = 2 sum_i s^2 rho(e_i / s) over the free parameters (the rss for the squared loss),
// gradient 2 s J^T psi(e / s). The first inverse Hessian is the pseudo-inverse of the
// Gauss–Newton matrix 2 J^T diag(w) J at the start, so the first step is the (IRLS) Gauss–Newton
// step and BFGS corrects it with curvature it measures along the way.
LocalFitSummary RunBfgs(const Problem& problem, const Eigen::VectorXd& start,
                        const LocalFitOptions& options, LossKind loss, double scale) {
  const FreeSet free = FreeParameters(problem);
  const int n = problem.data.NumPoints();
  const int m = static_cast<int>(free.index.size());
  Eigen::VectorXd inv_sigma = Eigen::VectorXd::Ones(n);
  if (problem.data.HasSigma()) inv_sigma = problem.data.sigma.cwiseInverse();
  Eigen::VectorXd values(n);
  Eigen::MatrixXd jacobian(n, problem.NumParameters());
  Eigen::VectorXd full = start;
  Eigen::MatrixXd gauss_newton;
  auto objective = [&](const Eigen::VectorXd& theta, double* value, Eigen::VectorXd* gradient) {
    for (int k = 0; k < m; ++k) full[free.index[k]] = theta[k];
    values.setConstant(std::numeric_limits<double>::quiet_NaN());
    jacobian.setConstant(std::numeric_limits<double>::quiet_NaN());
    problem.model->EvaluateWithJacobian(problem.data.predictors, full.data(), values.data(),
                                        jacobian.data());
    const Eigen::VectorXd e = (values - problem.data.response).cwiseProduct(inv_sigma);
    if (!e.allFinite()) return false;
    Eigen::VectorXd psi(n);
    Eigen::VectorXd w(n);
    double total = 0;
    for (int i = 0; i < n; ++i) {
      const LossValue v = EvaluateLoss(loss, e[i] / scale);
      total += v.rho;
      psi[i] = v.psi;
      w[i] = v.weight;
    }
    *value = 2 * scale * scale * total;
    Eigen::MatrixXd free_jacobian(n, m);
    for (int k = 0; k < m; ++k) {
      free_jacobian.col(k) = jacobian.col(free.index[k]).cwiseProduct(inv_sigma);
    }
    if (!free_jacobian.allFinite()) return false;
    *gradient = 2 * scale * (free_jacobian.transpose() * psi);
    if (gauss_newton.size() == 0) {
      gauss_newton = 2 * free_jacobian.transpose() * w.asDiagonal() * free_jacobian;
    }
    return std::isfinite(*value);
  };
  Eigen::VectorXd theta(m);
  for (int k = 0; k < m; ++k) theta[k] = start[free.index[k]];
  double value0 = 0;
  Eigen::VectorXd gradient0;
  Eigen::MatrixXd initial_inverse;
  if (m > 0 && objective(theta, &value0, &gradient0) && gauss_newton.allFinite()) {
    const Eigen::JacobiSVD<Eigen::MatrixXd> svd(gauss_newton,
                                                Eigen::ComputeFullU | Eigen::ComputeFullV);
    const Eigen::VectorXd sv = svd.singularValues();
    Eigen::VectorXd inverse = Eigen::VectorXd::Zero(m);
    const double cut = sv.size() > 0 ? sv[0] * 1e-14 : 0;
    for (int k = 0; k < m; ++k) inverse[k] = sv[k] > cut ? 1 / sv[k] : 0;
    if (sv.size() > 0 && sv[m - 1] > cut) {
      initial_inverse = svd.matrixV() * inverse.asDiagonal() * svd.matrixU().transpose();
    }
  }
  const BfgsSummary result = MinimizeBfgs(objective, theta, free.lower, free.upper, initial_inverse,
                                          BfgsOptionsFrom(options.lm));
  LocalFitSummary summary;
  summary.termination = result.termination;
  summary.message = result.message;
  summary.start = start;
  summary.parameters = start;
  for (int k = 0; k < m; ++k) summary.parameters[free.index[k]] = result.x[k];
  summary.initial_cost = result.initial_value;
  summary.final_cost = result.final_value;
  summary.num_iterations = result.num_iterations;
  summary.num_evaluations = result.num_evaluations + 1;
  summary.num_jacobian_evaluations = result.num_evaluations + 1;
  summary.total_seconds = result.total_seconds;
  return summary;
}

// Least squares by the requested method.
LocalFitSummary RunLeastSquares(const Problem& problem, const Eigen::VectorXd& start,
                                const LocalFitOptions& options) {
  switch (options.method) {
    case LocalMethod::kGaussNewton:
      return MinimizeGaussNewton(problem, start, GaussNewtonOptionsFrom(options.lm));
    case LocalMethod::kBfgs:
      return RunBfgs(problem, start, options, LossKind::kSquared, 1.0);
    case LocalMethod::kLevenbergMarquardt:
      break;
  }
  return RunLevenbergMarquardt(problem, start, options);
}

void AddCounts(const LocalFitSummary& from, LocalFitSummary* to) {
  to->num_iterations += from.num_iterations;
  to->num_evaluations += from.num_evaluations;
  to->num_jacobian_evaluations += from.num_jacobian_evaluations;
}

bool StopsTheFit(Termination termination) {
  return termination == Termination::kNonFiniteModel || termination == Termination::kDeadline ||
         termination == Termination::kCancelled || termination == Termination::kNoFreeParameters;
}

// A robust loss: least squares from the start, then reweightings until the parameters and the
// automatic scale settle. Each reweighting solves the least-squares problem with weights
// psi(z)/z at the current scale (IRLS; for L1 the weights 1/max(|z|, kL1Floor), Schlossmacher
// 1973) or, for BFGS and a smooth loss, minimises the loss itself at the current scale. The
// biweight is not convex: its reweightings start from a converged Huber fit (the usual
// M-estimation practice of a convex start, e.g. Maronna, Martin & Yohai 2006, Sec. 4.4).
LocalFitSummary RunRobust(const Problem& problem, const Eigen::VectorXd& start,
                          const LocalFitOptions& options) {
  const auto started = std::chrono::steady_clock::now();
  auto elapsed = [&started] {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  };
  LocalFitOptions inner = options;
  inner.loss = LossKind::kSquared;
  LocalFitSummary summary = RunLeastSquares(problem, start, inner);
  const double least_squares_rss = summary.final_cost;
  if (StopsTheFit(summary.termination)) return summary;
  Eigen::VectorXd x = summary.parameters;
  const bool is_automatic = !(options.loss_scale > 0);
  LossKind stage = options.loss == LossKind::kTukey ? LossKind::kHuber : options.loss;
  double previous_scale = std::numeric_limits<double>::quiet_NaN();
  double scale = 1;
  int num_reweightings = 0;
  bool settled = false;
  std::ostringstream why;
  LocalFitSummary last = summary;
  while (num_reweightings < options.max_reweightings) {
    Eigen::VectorXd e;
    if (!StandardisedResiduals(problem, x, &e)) {
      last.termination = Termination::kNonFiniteModel;
      why << "the model is not finite after " << num_reweightings << " reweightings";
      break;
    }
    scale = RobustScale(e, options.loss_scale, problem.NumFree());
    inner.lm.deadline_seconds = options.lm.deadline_seconds - elapsed();
    if (!(inner.lm.deadline_seconds > 0)) {
      last.termination = Termination::kDeadline;
      why << "deadline " << options.lm.deadline_seconds << " s during the reweightings";
      break;
    }
    ++num_reweightings;
    if (options.method == LocalMethod::kBfgs && stage != LossKind::kL1) {
      last = RunBfgs(problem, x, inner, stage, scale);
    } else {
      Eigen::VectorXd w(e.size());
      for (int i = 0; i < e.size(); ++i) {
        w[i] = std::max(EvaluateLoss(stage, e[i] / scale).weight, kMinWeight);
      }
      last = RunLeastSquares(ReweightedProblem(problem, w), x, inner);
    }
    AddCounts(last, &summary);
    if (StopsTheFit(last.termination)) {
      why << "reweighting " << num_reweightings << " stopped: " << ToString(last.termination);
      break;
    }
    const double change = (last.parameters - x).norm() / std::max(x.norm(), 1e-300);
    const double scale_change = is_automatic && std::isfinite(previous_scale)
                                    ? std::abs(scale - previous_scale) / scale
                                    : (is_automatic ? 1.0 : 0.0);
    x = last.parameters;
    previous_scale = scale;
    if (change <= options.reweighting_tolerance && scale_change <= options.reweighting_tolerance) {
      if (stage != options.loss) {
        stage = options.loss;
        previous_scale = std::numeric_limits<double>::quiet_NaN();
        continue;
      }
      settled = true;
      why << "settled after " << num_reweightings << " reweightings (relative parameter change "
          << change << ", scale change " << scale_change << " <= " << options.reweighting_tolerance
          << ")";
      break;
    }
  }
  if (!settled && why.tellp() == 0) {
    last.termination = Termination::kIterationLimit;
    why << "reweighting limit " << options.max_reweightings << " reached";
  }
  RobustAssessment assessment;
  const bool finite = AssessRobustFit(problem, x, options.loss, options.loss_scale, &assessment);
  Eigen::VectorXd e0;
  summary.initial_cost = StandardisedResiduals(problem, start, &e0)
                             ? 2 * RobustObjective(options.loss, e0, assessment.scale)
                             : std::numeric_limits<double>::quiet_NaN();
  summary.final_cost = finite ? assessment.cost : std::numeric_limits<double>::quiet_NaN();
  summary.termination = last.termination;
  summary.start = start;
  summary.parameters = x;
  std::ostringstream message;
  message << last.message << "; " << ToString(options.loss) << " loss by "
          << (options.method == LocalMethod::kBfgs && options.loss != LossKind::kL1
                  ? "bfgs on the loss"
                  : "iteratively reweighted least squares")
          << ", scale " << assessment.scale
          << (is_automatic ? " (automatic: 1.4826 MAD of the residuals)" : " (requested)")
          << ", from the least-squares fit (rss " << least_squares_rss << "); " << why.str();
  summary.message = message.str();
  summary.total_seconds = elapsed();
  return summary;
}

}  // namespace

const char* ToString(LocalMethod method) {
  switch (method) {
    case LocalMethod::kLevenbergMarquardt:
      return "lm";
    case LocalMethod::kGaussNewton:
      return "gauss_newton";
    case LocalMethod::kBfgs:
      return "bfgs";
  }
  return "lm";
}

bool LocalMethodFromString(const std::string& text, LocalMethod* method) {
  for (LocalMethod m :
       {LocalMethod::kLevenbergMarquardt, LocalMethod::kGaussNewton, LocalMethod::kBfgs}) {
    if (text == ToString(m)) {
      *method = m;
      return true;
    }
  }
  return false;
}

bool LocalFitOptions::Validate(std::string* error) const {
  std::string lm_error;
  std::ostringstream out;
  if (!lm.Validate(&lm_error)) {
    out << "lm." << lm_error;
  } else if (!std::isfinite(loss_scale)) {
    out << "loss_scale = " << loss_scale << ": must be finite (<= 0 means automatic)";
  } else if (max_reweightings < 1) {
    out << "max_reweightings = " << max_reweightings << ": must be >= 1";
  } else if (!(reweighting_tolerance > 0)) {
    out << "reweighting_tolerance = " << reweighting_tolerance << ": must be > 0";
  } else {
    return true;
  }
  if (error != nullptr) *error = out.str();
  return false;
}

LocalFitSummary RunLocalFit(const Problem& problem, const Eigen::VectorXd& start,
                            const LocalFitOptions& options) {
  if (options.loss != LossKind::kSquared) return RunRobust(problem, start, options);
  return RunLeastSquares(problem, start, options);
}

bool UsedVariableProjection(const LocalFitSummary& summary) {
  return summary.message.rfind(kProjectionPrefix, 0) == 0;
}

}  // namespace foothold
