#include "engine/solve/gauss_newton.h"

#include <Eigen/QR>
#include <cmath>
#include <sstream>
#include <vector>

#include "engine/solve/internal/line_search.h"

namespace foothold {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Weighted residuals and the Jacobian of the free columns at full-size parameters.
class WeightedResiduals {
 public:
  explicit WeightedResiduals(const Problem& problem) : problem_(problem) {
    for (int j = 0; j < problem.NumParameters(); ++j) {
      if (!problem.IsFixed(j)) free_.push_back(j);
    }
    const int n = problem.data.NumPoints();
    weights_ = Eigen::VectorXd::Ones(n);
    if (problem.data.HasSigma()) weights_ = problem.data.sigma.cwiseInverse();
    values_.resize(n);
    full_jacobian_.resize(n, problem.NumParameters());
  }
  const std::vector<int>& Free() const { return free_; }

  // r = w (f - y); false when not finite.
  bool Residuals(const Eigen::VectorXd& params, Eigen::VectorXd* r) {
    values_.setConstant(kNaN);
    problem_.model->Evaluate(problem_.data.predictors, params.data(), values_.data());
    *r = (values_ - problem_.data.response).cwiseProduct(weights_);
    return r->allFinite();
  }
  bool ResidualsAndJacobian(const Eigen::VectorXd& params, Eigen::VectorXd* r,
                            Eigen::MatrixXd* jacobian) {
    values_.setConstant(kNaN);
    full_jacobian_.setConstant(kNaN);
    problem_.model->EvaluateWithJacobian(problem_.data.predictors, params.data(), values_.data(),
                                         full_jacobian_.data());
    *r = (values_ - problem_.data.response).cwiseProduct(weights_);
    jacobian->resize(r->size(), free_.size());
    for (size_t k = 0; k < free_.size(); ++k) {
      jacobian->col(k) = full_jacobian_.col(free_[k]).cwiseProduct(weights_);
    }
    return r->allFinite() && jacobian->allFinite();
  }

 private:
  const Problem& problem_;
  std::vector<int> free_;
  Eigen::VectorXd weights_;
  Eigen::VectorXd values_;
  Eigen::MatrixXd full_jacobian_;
};

// Largest |J_j^T r| / (||J_j|| ||r||), the scale-free gradient test of Moré (1978).
double GradientCosine(const Eigen::MatrixXd& jacobian, const Eigen::VectorXd& r) {
  const double r_norm = r.norm();
  if (r_norm == 0) return 0;
  double largest = 0;
  for (int k = 0; k < jacobian.cols(); ++k) {
    const double column = jacobian.col(k).norm();
    if (column > 0)
      largest = std::max(largest, std::abs(jacobian.col(k).dot(r)) / (column * r_norm));
  }
  return largest;
}

}  // namespace

bool GaussNewtonOptions::Validate(std::string* error) const {
  std::ostringstream out;
  auto line_search_rule_broken = [&] {
    if (!(armijo_c1 > 0 && armijo_c1 < 1)) {
      out << "armijo_c1 = " << armijo_c1 << ": must be in (0, 1)";
    } else if (max_backtracks < 1) {
      out << "max_backtracks = " << max_backtracks << ": must be >= 1";
    } else {
      return false;
    }
    return true;
  };
  if (!internal::SharedRuleBroken(*this, &out) && !line_search_rule_broken() &&
      !internal::DeadlineRuleBroken(deadline_seconds, &out)) {
    return true;
  }
  if (error != nullptr) *error = out.str();
  return false;
}

GaussNewtonOptions GaussNewtonOptionsFrom(const LevenbergMarquardtOptions& lm) {
  GaussNewtonOptions options;
  options.max_iterations = lm.max_iterations;
  options.max_evaluations = lm.max_evaluations;
  internal::CopySharedFields(lm, &options);
  return options;
}

LocalFitSummary MinimizeGaussNewton(const Problem& problem, const Eigen::VectorXd& start,
                                    const GaussNewtonOptions& options) {
  const internal::Stopwatch stopwatch;
  LocalFitSummary summary;
  summary.start = start;
  summary.parameters = start;
  WeightedResiduals eval(problem);
  const std::vector<int>& free = eval.Free();
  Eigen::VectorXd x = start;
  Eigen::VectorXd r;
  Eigen::MatrixXd jacobian;
  std::ostringstream message;
  message << "gauss-newton: ";

  const bool finite = eval.ResidualsAndJacobian(x, &r, &jacobian);
  ++summary.num_evaluations;
  ++summary.num_jacobian_evaluations;
  double cost = finite ? r.squaredNorm() : kNaN;
  summary.initial_cost = summary.final_cost = cost;
  if (!finite) {
    summary.termination = Termination::kNonFiniteModel;
    summary.message = message.str() + "the model is not finite at the start";
    return summary;
  }
  if (free.empty()) {
    summary.termination = Termination::kNoFreeParameters;
    summary.message = message.str() + "every parameter is fixed";
    return summary;
  }

  // The step moves the free parameters only, inside their part of the box.
  const int num_free = static_cast<int>(free.size());
  Eigen::VectorXd free_lower(num_free);
  Eigen::VectorXd free_upper(num_free);
  for (int j = 0; j < num_free; ++j) {
    free_lower[j] = problem.Lower(free[j]);
    free_upper[j] = problem.Upper(free[j]);
  }
  internal::IterationLimits limits;
  limits.max_iterations = options.max_iterations;
  limits.deadline_seconds = options.deadline_seconds;
  limits.callback = &options.callback;

  Eigen::VectorXd trial_r;
  while (true) {
    if (cost == 0) {
      summary.termination = Termination::kCostConverged;
      message << "zero cost";
      break;
    }
    const double cosine = GradientCosine(jacobian, r);
    if (cosine <= options.gradient_tolerance) {
      summary.termination = Termination::kGradientConverged;
      message << "gradient cosine " << cosine << " <= " << options.gradient_tolerance;
      break;
    }
    if (internal::IterationLimitReached(limits, summary.num_iterations, summary.num_evaluations,
                                        cost, stopwatch.ElapsedSeconds(), &summary.termination,
                                        &message)) {
      break;
    }
    ++summary.num_iterations;

    // The Gauss–Newton direction: least-squares solution of J d = -r (basic solution when J is
    // rank deficient, by the pivoted QR's rank threshold).
    const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(jacobian);
    const Eigen::VectorXd direction = qr.solve(-r);
    const Eigen::VectorXd gradient = 2 * jacobian.transpose() * r;  // of the rss

    double alpha = 1;
    bool accepted = false;
    bool step_small = false;
    bool out_of_evaluations = false;
    Eigen::VectorXd trial_x = x;
    const Eigen::VectorXd free_x = x(free);
    double trial_cost = kNaN;
    double step_norm = 0;
    for (int k = 0; k < options.max_backtracks; ++k, alpha *= 0.5) {
      if (summary.num_evaluations >= options.max_evaluations) {
        out_of_evaluations = true;
        break;
      }
      const Eigen::VectorXd moved =
          internal::ProjectOntoBox(free_x + alpha * direction, free_lower, free_upper);
      trial_x(free) = moved;
      const Eigen::VectorXd delta = moved - free_x;
      step_norm = delta.norm();
      if (internal::IsStepBelowTolerance(step_norm, x.norm(), options.step_tolerance)) {
        step_small = true;
        break;
      }
      ++summary.num_evaluations;
      if (!eval.Residuals(trial_x, &trial_r)) continue;
      trial_cost = trial_r.squaredNorm();
      // Armijo on the projected path: f(x + s) <= f(x) + c1 g^T s.
      if (trial_cost <= cost + options.armijo_c1 * gradient.dot(delta)) {
        accepted = true;
        break;
      }
    }
    if (out_of_evaluations) {
      summary.termination = Termination::kEvaluationLimit;
      message << "evaluation limit " << options.max_evaluations;
      break;
    }
    if (!accepted) {
      summary.termination = Termination::kStepConverged;
      message << "line search shortened the step to " << step_norm << " without an Armijo decrease"
              << (step_small ? " (below the step tolerance)" : "") << "; gradient cosine "
              << cosine;
      break;
    }
    const double reduction = (cost - trial_cost) / cost;
    x = trial_x;
    ++summary.num_jacobian_evaluations;
    if (!eval.ResidualsAndJacobian(x, &r, &jacobian)) {
      // Values were finite at this point a moment ago; a non-finite Jacobian ends the fit here.
      summary.termination = Termination::kNonFiniteModel;
      message << "the Jacobian is not finite at iteration " << summary.num_iterations;
      cost = trial_cost;
      break;
    }
    cost = r.squaredNorm();
    if (reduction <= options.cost_tolerance) {
      summary.termination = Termination::kCostConverged;
      message << "relative cost change " << reduction << " <= " << options.cost_tolerance;
      break;
    }
    if (internal::IsStepBelowTolerance(step_norm, x.norm(), options.step_tolerance)) {
      summary.termination = Termination::kStepConverged;
      internal::WriteRelativeStep(step_norm, x.norm(), options.step_tolerance, &message);
      break;
    }
  }
  summary.parameters = x;
  summary.final_cost = cost;
  summary.message = message.str();
  summary.total_seconds = stopwatch.ElapsedSeconds();
  return summary;
}

}  // namespace foothold
