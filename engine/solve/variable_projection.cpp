#include "engine/solve/variable_projection.h"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <limits>

namespace foothold {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

bool IsProjectable(const Problem& problem, int j) {
  return !problem.IsFixed(j) && std::isinf(problem.Lower(j)) && std::isinf(problem.Upper(j));
}

}  // namespace

ProjectionSplit SplitForProjection(const Problem& problem) {
  ProjectionSplit split;
  const int p = problem.NumParameters();
  std::vector<bool> is_linear(p, false);
  const std::vector<int> declared = problem.model->LinearParameters();
  for (int j : declared) {
    if (j >= 0 && j < p && IsProjectable(problem, j)) is_linear[j] = true;
  }
  int num_free_nonlinear = 0;
  for (int j = 0; j < p; ++j) {
    if (is_linear[j]) {
      split.linear.push_back(j);
    } else {
      split.nonlinear.push_back(j);
      num_free_nonlinear += problem.IsFixed(j) ? 0 : 1;
    }
  }
  if (declared.empty()) {
    split.not_applicable = "the model declares no linear parameters";
  } else if (split.linear.empty()) {
    split.not_applicable = "every linear parameter is fixed or bounded";
  } else if (num_free_nonlinear == 0) {
    split.not_applicable = "no free nonlinear parameter: the problem is linear";
  }
  return split;
}

ProjectedModel::ProjectedModel(const Problem& problem, ProjectionSplit split,
                               const Eigen::VectorXd& reference)
    : problem_(&problem), model_(problem.model), split_(std::move(split)), reference_(reference) {
  assert(split_.Applies());
  assert(reference_.size() == problem.NumParameters());
  const int n = problem.data.NumPoints();
  weights_ = problem.data.HasSigma() ? problem.data.sigma.cwiseInverse().eval()
                                     : Eigen::VectorXd::Ones(n).eval();
  const auto& all_names = model_->ParameterNames();
  for (int j : split_.nonlinear) names_.push_back(all_names[j]);
  // Linear parameters enter the first evaluation as 0, so that f(θ, 0) is φ0 exactly.
  for (int j : split_.linear) reference_[j] = 0;
  full_ = reference_;
  values_.resize(n);
  jacobian_.resize(n, problem.NumParameters());
  basis_.resize(n, static_cast<Eigen::Index>(split_.linear.size()));
}

ProjectedModel::~ProjectedModel() = default;

int ProjectedModel::NumParameters() const { return static_cast<int>(split_.nonlinear.size()); }

const std::vector<std::string>& ProjectedModel::ParameterNames() const { return names_; }

const std::vector<std::string>& ProjectedModel::PredictorNames() const {
  return model_->PredictorNames();
}

void ProjectedModel::FillFull(const double* theta) const {
  full_ = reference_;
  for (size_t k = 0; k < split_.nonlinear.size(); ++k) full_[split_.nonlinear[k]] = theta[k];
}

bool ProjectedModel::SolveLinear(const Eigen::MatrixXd& x, const double* theta) const {
  FillFull(theta);
  const int n = static_cast<int>(values_.size());
  assert(x.rows() == n);
  values_.setConstant(kNaN);
  jacobian_.setConstant(kNaN);
  model_->EvaluateWithJacobian(x, full_.data(), values_.data(), jacobian_.data());
  if (!values_.allFinite()) return false;
  for (size_t l = 0; l < split_.linear.size(); ++l) {
    basis_.col(l) = jacobian_.col(split_.linear[l]).cwiseProduct(weights_);
  }
  if (!basis_.allFinite()) return false;
  offset_ = values_.cwiseProduct(weights_);
  target_ = problem_->data.response.cwiseProduct(weights_) - offset_;
  // Rank-revealing: pivots below max(n, L) eps of the largest count as zero, and the
  // basic solution sets their coefficients to 0 (Golub & Van Loan, section 5.5).
  const double tolerance =
      std::max<double>(n, basis_.cols()) * std::numeric_limits<double>::epsilon();
  qr_.setThreshold(tolerance);
  qr_.compute(basis_);
  rank_ = static_cast<int>(qr_.rank());
  if (rank_ == 0) {
    coefficients_.setZero(basis_.cols());
  } else {
    coefficients_ = qr_.solve(target_);
  }
  return coefficients_.allFinite();
}

void ProjectedModel::Evaluate(const Eigen::MatrixXd& x, const double* theta, double* values) const {
  const int n = static_cast<int>(values_.size());
  Eigen::Map<Eigen::VectorXd> out(values, n);
  if (!SolveLinear(x, theta)) {
    out.setConstant(kNaN);
    return;
  }
  out = basis_ * coefficients_ + offset_;
}

void ProjectedModel::EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* theta,
                                          double* values, double* jacobian) const {
  const int n = static_cast<int>(values_.size());
  const int m = NumParameters();
  Eigen::Map<Eigen::VectorXd> out(values, n);
  Eigen::Map<Eigen::MatrixXd> out_jacobian(jacobian, n, m);
  if (!SolveLinear(x, theta)) {
    out.setConstant(kNaN);
    out_jacobian.setConstant(kNaN);
    return;
  }
  // ∂f/∂θ depends on c: evaluate again at (θ, c(θ)).
  for (size_t l = 0; l < split_.linear.size(); ++l) full_[split_.linear[l]] = coefficients_[l];
  values_.setConstant(kNaN);
  jacobian_.setConstant(kNaN);
  model_->EvaluateWithJacobian(x, full_.data(), values_.data(), jacobian_.data());
  out = values_.cwiseProduct(weights_);
  reduced_.resize(n, m);
  for (int k = 0; k < m; ++k) {
    reduced_.col(k) = jacobian_.col(split_.nonlinear[k]).cwiseProduct(weights_);
  }
  if (!reduced_.allFinite()) {
    out_jacobian.setConstant(kNaN);
    return;
  }
  // (I − P) J = Q (Q^T J with its first `rank` rows zeroed): Kaufman 1975, eq. 2.6.
  reduced_.applyOnTheLeft(qr_.householderQ().transpose());
  reduced_.topRows(rank_).setZero();
  reduced_.applyOnTheLeft(qr_.householderQ());
  out_jacobian = reduced_;
}

bool ProjectedModel::Expand(const double* theta, Eigen::VectorXd* full) const {
  if (!SolveLinear(problem_->data.predictors, theta)) return false;
  *full = full_;
  for (size_t l = 0; l < split_.linear.size(); ++l) (*full)[split_.linear[l]] = coefficients_[l];
  return true;
}

std::unique_ptr<Model> ProjectedModel::Clone() const {
  auto clone = std::make_unique<ProjectedModel>(*problem_, split_, reference_);
  clone->owned_model_ = model_->Clone();
  clone->model_ = clone->owned_model_.get();
  return clone;
}

Problem MakeProjectedProblem(const Problem& problem, const ProjectedModel& model) {
  const ProjectionSplit& split = model.Split();
  const int m = static_cast<int>(split.nonlinear.size());
  Problem reduced;
  reduced.model = &model;
  reduced.data.predictor_names = problem.data.predictor_names;
  reduced.data.predictors = problem.data.predictors;
  reduced.data.response = problem.data.HasSigma()
                              ? problem.data.response.cwiseQuotient(problem.data.sigma).eval()
                              : problem.data.response;
  reduced.lower.resize(m);
  reduced.upper.resize(m);
  reduced.is_fixed.assign(m, false);
  for (int k = 0; k < m; ++k) {
    const int j = split.nonlinear[k];
    reduced.lower[k] = problem.Lower(j);
    reduced.upper[k] = problem.Upper(j);
    reduced.is_fixed[k] = problem.IsFixed(j);
  }
  reduced.sigma_mode = problem.sigma_mode;
  return reduced;
}

}  // namespace foothold
