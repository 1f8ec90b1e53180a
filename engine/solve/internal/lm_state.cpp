#include "engine/solve/internal/lm_state.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace foothold {
namespace internal {

LmState::LmState(const Problem& problem, const Eigen::VectorXd& start)
    : x(start), problem_(problem) {
  const int n = problem.data.NumPoints();
  const int p = problem.NumParameters();
  f.resize(n);
  weights_ = problem.data.HasSigma() ? problem.data.sigma.cwiseInverse().eval()
                                     : Eigen::VectorXd::Ones(n).eval();
  values_.resize(n);
  jacobian_.resize(n, p);
  gradient_.setZero(p);
  column_norms_.setZero(p);
  diag_.setOnes(p);
  for (int j = 0; j < p; ++j) {
    if (!problem.IsFixed(j)) free.push_back(j);
  }
  working_.reserve(free.size());
  x_trial_ = x;
  f_trial_.resize(n);
  jacobian_step_.resize(n);
}

bool LmState::EvaluateResidual(const Eigen::VectorXd& params, Eigen::VectorXd* out) {
  ++num_evaluations;
  values_.setConstant(std::numeric_limits<double>::quiet_NaN());
  problem_.model->Evaluate(problem_.data.predictors, params.data(), values_.data());
  *out = (values_ - problem_.data.response).cwiseProduct(weights_);
  return out->allFinite();
}

bool LmState::EvaluateJacobian() {
  ++num_jacobian_evaluations;
  jacobian_.setConstant(std::numeric_limits<double>::quiet_NaN());
  problem_.model->EvaluateWithJacobian(problem_.data.predictors, x.data(), values_.data(),
                                       jacobian_.data());
  for (int j : free) {
    jacobian_.col(j).array() *= weights_.array();
    if (!jacobian_.col(j).allFinite()) return false;
    gradient_[j] = jacobian_.col(j).dot(f);
    column_norms_[j] = jacobian_.col(j).norm();
  }
  return true;
}

bool LmState::SelectWorkingSet() {
  working_.clear();
  for (int j : free) {
    // Moving along -gradient would leave the box: hold the parameter at its bound.
    const bool held_low = x[j] <= problem_.Lower(j) && gradient_[j] > 0;
    const bool held_high = x[j] >= problem_.Upper(j) && gradient_[j] < 0;
    if (!held_low && !held_high) working_.push_back(j);
  }
  return !working_.empty();
}

void LmState::Factorize() {
  const int n = static_cast<int>(f.size());
  const int m = static_cast<int>(working_.size());
  working_jacobian_.resize(n, m);
  for (int k = 0; k < m; ++k) working_jacobian_.col(k) = jacobian_.col(working_[k]);
  qr_.compute(working_jacobian_);
  system_.Resize(m);
  system_.r = qr_.matrixQR().topLeftCorner(m, m).triangularView<Eigen::Upper>();
  system_.pivot = qr_.colsPermutation().indices();
  f_trial_ = qr_.householderQ().transpose() * f;
  system_.qtf = f_trial_.head(m);
  working_diag_.resize(m);
  solution_.resize(m);
  step_.resize(m);
}

void LmState::InitialiseScaling() {
  for (int j : free) diag_[j] = column_norms_[j] == 0 ? 1.0 : column_norms_[j];
}

void LmState::UpdateScaling() {
  for (int j : free) diag_[j] = std::max(diag_[j], column_norms_[j]);
}

double LmState::ScaledParameterNorm() const {
  double sum = 0;
  for (int j : free) sum += diag_[j] * x[j] * diag_[j] * x[j];
  return std::sqrt(sum);
}

double LmState::ScaledGradientNorm() const {
  double gnorm = 0;
  if (fnorm == 0) return 0;
  for (int j : working_) {
    if (column_norms_[j] != 0) {
      gnorm = std::max(gnorm, std::abs(gradient_[j]) / (column_norms_[j] * fnorm));
    }
  }
  return gnorm;
}

bool LmState::ProjectStep(const Eigen::VectorXd& step, Eigen::VectorXd* applied) {
  bool clipped = false;
  x_trial_ = x;
  for (size_t k = 0; k < working_.size(); ++k) {
    const int j = working_[k];
    const double target = x[j] + step[k];
    const double inside = std::min(std::max(target, problem_.Lower(j)), problem_.Upper(j));
    clipped = clipped || inside != target;
    x_trial_[j] = inside;
    (*applied)[k] = inside - x[j];
  }
  return clipped;
}

void LmState::PredictWithJacobian(const Eigen::VectorXd& step, TrialStep* trial) {
  jacobian_step_.setZero();
  for (size_t k = 0; k < working_.size(); ++k) {
    jacobian_step_.noalias() += step[k] * jacobian_.col(working_[k]);
  }
  const double f_dot_js = f.dot(jacobian_step_);
  const double fnorm2 = fnorm * fnorm;
  trial->predicted = -(2 * f_dot_js + jacobian_step_.squaredNorm()) / fnorm2;
  trial->directional = f_dot_js / fnorm2;
}

void LmState::AddGeodesicAcceleration(double lambda, const LevenbergMarquardtOptions& options,
                                      Eigen::VectorXd* step) {
  // Transtrum & Sethna (2011): second directional derivative by a finite difference along
  // the velocity, then the acceleration from the same damped system.
  constexpr double kProbe = 0.1;
  const int m = static_cast<int>(working_.size());
  Eigen::VectorXd probe = x;
  for (int k = 0; k < m; ++k) probe[working_[k]] += kProbe * (*step)[k];
  Eigen::VectorXd f_probe(f.size());
  if (!EvaluateResidual(probe, &f_probe)) return;
  jacobian_step_.setZero();
  for (int k = 0; k < m; ++k) jacobian_step_.noalias() += (*step)[k] * jacobian_.col(working_[k]);
  Eigen::VectorXd second = (2.0 / kProbe) * ((f_probe - f) / kProbe - jacobian_step_);
  Eigen::VectorXd qt_second = qr_.householderQ().transpose() * second;
  Eigen::VectorXd scaled = std::sqrt(lambda) * working_diag_;
  Eigen::VectorXd acceleration(m);
  DampedQrSolve(&system_, scaled, qt_second.head(m), &acceleration);
  acceleration = -acceleration;
  const double velocity_norm = working_diag_.cwiseProduct(*step).norm();
  const double acceleration_norm = working_diag_.cwiseProduct(acceleration).norm();
  if (velocity_norm > 0 && 2 * acceleration_norm <= options.geodesic_max_ratio * velocity_norm) {
    *step += 0.5 * acceleration;
  }
}

TrialStep LmState::ComputeTrialStep(double radius, double* lambda,
                                    const LevenbergMarquardtOptions& options) {
  const int m = static_cast<int>(working_.size());
  for (int k = 0; k < m; ++k) working_diag_[k] = diag_[working_[k]];
  FindDampedStep(&system_, working_diag_, radius, lambda, &solution_);
  Eigen::VectorXd& velocity = solution_;
  velocity = -velocity;
  const bool accelerated = options.use_geodesic_acceleration;
  if (accelerated) AddGeodesicAcceleration(*lambda, options, &velocity);

  TrialStep trial;
  const bool clipped = ProjectStep(velocity, &step_);
  trial.scaled_step_norm = working_diag_.cwiseProduct(step_).norm();
  if (clipped || accelerated) {
    PredictWithJacobian(step_, &trial);
  } else {
    // Predicted reduction from R: ||R P^T s||^2 and the damping term (MINPACK lmder).
    double rs2 = 0;
    for (int i = 0; i < m; ++i) {
      double sum = 0;
      for (int j = i; j < m; ++j) sum += system_.r(i, j) * step_[system_.pivot[j]];
      rs2 += sum * sum;
    }
    const double temp1 = std::sqrt(rs2) / fnorm;
    const double temp2 = std::sqrt(*lambda) * trial.scaled_step_norm / fnorm;
    trial.predicted = temp1 * temp1 + temp2 * temp2 / 0.5;
    trial.directional = -(temp1 * temp1 + temp2 * temp2);
  }

  trial.fnorm = EvaluateResidual(x_trial_, &f_trial_) ? f_trial_.norm()
                                                       : std::numeric_limits<double>::infinity();
  trial.actual = 0.1 * trial.fnorm < fnorm ? 1 - (trial.fnorm / fnorm) * (trial.fnorm / fnorm) : -1;
  trial_fnorm_ = trial.fnorm;
  return trial;
}

void LmState::Accept() {
  x.swap(x_trial_);
  f.swap(f_trial_);
  fnorm = trial_fnorm_;
  x_trial_ = x;
}

}  // namespace internal
}  // namespace foothold
