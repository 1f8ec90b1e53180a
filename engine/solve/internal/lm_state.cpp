#include "engine/solve/internal/lm_state.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>

namespace foothold {
namespace internal {
namespace {

// Row blocks of the tall path: 256 rows of a few columns stay in L1/L2 while reduced. From
// 1024 rows on the path was measured faster (docs/benchmarks.md: P2, 2000 x 10, and P4,
// 100000 x 3); shorter Jacobians stay in cache anyway and keep the plain QR, so the NIST
// StRD problems (at most 250 rows) keep their digits.
constexpr Eigen::Index kRowBlockRows = 256;
constexpr Eigen::Index kRowBlockMinRows = 4 * kRowBlockRows;

}  // namespace

LmState::LmState(const Problem& problem, const Eigen::VectorXd& start)
    : x(start), problem_(problem) {
  const int n = problem.data.NumPoints();
  const int p = problem.NumParameters();
  f.resize(n);
  has_weights_ = problem.data.HasSigma();
  if (has_weights_) weights_ = problem.data.sigma.cwiseInverse();
  values_.resize(n);
  jacobian_.resize(n, p);
  trial_jacobian_.resize(n, p);
  gradient_.setZero(p);
  column_norms_.setZero(p);
  diag_.setOnes(p);
  for (int j = 0; j < p; ++j) {
    if (!problem.IsFixed(j)) free.push_back(j);
  }
  const int k = static_cast<int>(free.size());
  working_.reserve(k);
  working_pos_.reserve(k);
  system_.Resize(k);
  working_diag_.resize(k);
  solution_.resize(k);
  step_.resize(k);
  factor_step_.resize(k);
  x_trial_ = x;
  f_trial_.resize(n);
  scratch_n_.resize(n);
  probe_ = x;
  f_probe_.resize(n);
  qt_second_.resize(k);
  geodesic_scaled_.resize(k);
  acceleration_.resize(k);
}

bool LmState::EvaluateModel(const Eigen::VectorXd& params, Eigen::VectorXd* out, double* norm,
                            Eigen::MatrixXd* jacobian) {
  ++num_evaluations;
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  values_.setConstant(kNaN);
  if (jacobian) {
    ++num_jacobian_evaluations;
    jacobian->setConstant(kNaN);
    problem_.model->EvaluateWithJacobian(problem_.data.predictors, params.data(), values_.data(),
                                         jacobian->data());
  } else {
    problem_.model->Evaluate(problem_.data.predictors, params.data(), values_.data());
  }
  if (has_weights_) {
    out->noalias() = (values_ - problem_.data.response).cwiseProduct(weights_);
  } else {
    out->noalias() = values_ - problem_.data.response;
  }
  // A NaN or inf anywhere makes the (vectorised) sum of squares non-finite.
  const double sum = out->squaredNorm();
  if (std::isfinite(sum)) {
    *norm = std::sqrt(sum);
    return true;
  }
  // Finite residuals whose squares overflow still count as finite.
  if (!out->allFinite()) return false;
  *norm = out->stableNorm();
  return true;
}

bool LmState::EvaluateStart() {
  jacobian_ready_ = false;
  if (!EvaluateModel(x, &f, &fnorm, &trial_jacobian_)) return false;
  jacobian_.swap(trial_jacobian_);
  jacobian_ready_ = true;
  return true;
}

bool LmState::EvaluateResidual(const Eigen::VectorXd& params, Eigen::VectorXd* out, double* norm) {
  return EvaluateModel(params, out, norm, nullptr);
}

bool LmState::EvaluateJacobian() {
  if (!jacobian_ready_) {
    ++num_jacobian_evaluations;
    jacobian_.setConstant(std::numeric_limits<double>::quiet_NaN());
    problem_.model->EvaluateWithJacobian(problem_.data.predictors, x.data(), values_.data(),
                                         jacobian_.data());
  }
  jacobian_ready_ = false;
  speculate_ = true;
  // Pack the free columns to the front (in place, left to right) and weight them.
  const int k = static_cast<int>(free.size());
  for (int c = 0; c < k; ++c) {
    if (free[c] != c) jacobian_.col(c) = jacobian_.col(free[c]);
    if (has_weights_) jacobian_.col(c).array() *= weights_.array();
  }
  const auto packed = jacobian_.leftCols(k);
  for (int c = 0; c < k; ++c) {
    // A NaN or inf entry makes the norm non-finite; only then is the column scanned (finite
    // entries whose squares overflow still count as finite).
    gradient_[free[c]] = packed.col(c).dot(f);
    column_norms_[free[c]] = packed.col(c).norm();
    if (!std::isfinite(column_norms_[free[c]]) && !packed.col(c).allFinite()) return false;
  }
  return true;
}

bool LmState::SelectWorkingSet() {
  working_.clear();
  working_pos_.clear();
  for (size_t c = 0; c < free.size(); ++c) {
    const int j = free[c];
    // Moving along -gradient would leave the box: hold the parameter at its bound.
    const bool held_low = x[j] <= problem_.Lower(j) && gradient_[j] > 0;
    const bool held_high = x[j] >= problem_.Upper(j) && gradient_[j] < 0;
    if (!held_low && !held_high) {
      working_.push_back(j);
      working_pos_.push_back(static_cast<int>(c));
    }
  }
  return !working_.empty();
}

void LmState::FactorizeQr() {
  const int m = static_cast<int>(working_.size());
  // Pack the working columns to the front (they are in increasing packed order, so moving
  // left in place is safe) and factor them where they lie: no copy of J.
  for (int k = 0; k < m; ++k) {
    if (working_pos_[k] != k) jacobian_.col(k) = jacobian_.col(working_pos_[k]);
    working_pos_[k] = k;
  }
  if (allow_row_blocks_ && jacobian_.rows() >= kRowBlockMinRows) {
    // The triangle's Q^T f, then the pivoted QR of the triangle and its reflectors on it.
    ReduceRowBlocks();
    Eigen::Ref<Eigen::MatrixXd> triangle = row_triangle_;
    qr_.emplace(triangle);
    system_.r = qr_->matrixQR().triangularView<Eigen::Upper>();
    system_.pivot = qr_->colsPermutation().indices();
    system_.qtf = row_stack_.col(m).head(m);
    ApplyReflectors(&system_.qtf);
    return;
  }
  Eigen::Ref<Eigen::MatrixXd> block = jacobian_.leftCols(m);
  qr_.emplace(block);
  system_.r = qr_->matrixQR().topLeftCorner(m, m).triangularView<Eigen::Upper>();
  system_.pivot = qr_->colsPermutation().indices();
  scratch_n_ = f;
  ApplyReflectors(&scratch_n_);
  system_.qtf = scratch_n_.head(m);
}

void LmState::ReduceRowBlocks() {
  const Eigen::Index m = static_cast<Eigen::Index>(working_.size());
  const Eigen::Index n = jacobian_.rows();
  row_stack_.resize(m + kRowBlockRows, m + 1);
  row_triangle_.resize(m, m);
  row_work_.resize(m + 1);
  // Rows [0, held) of the stack hold the triangle of the blocks so far (none at first).
  Eigen::Index held = 0;
  for (Eigen::Index begin = 0; begin < n; begin += kRowBlockRows) {
    const Eigen::Index rows = std::min(kRowBlockRows, n - begin);
    row_stack_.block(held, 0, rows, m) = jacobian_.block(begin, 0, rows, m);
    row_stack_.block(held, m, rows, 1) = f.segment(begin, rows);
    const Eigen::Index total = held + rows;
    // Householder QR of the stacked columns, in place; the last column only takes the
    // reflectors (it becomes Q^T f).
    for (Eigen::Index k = 0; k < m && k < total; ++k) {
      auto column = row_stack_.col(k).segment(k, total - k);
      double tau = 0, beta = 0;
      column.makeHouseholderInPlace(tau, beta);
      row_stack_.block(k, k + 1, total - k, m - k)
          .applyHouseholderOnTheLeft(column.tail(total - k - 1), tau, row_work_.data());
      row_stack_(k, k) = beta;
      // The triangle carries zeros below its diagonal; the block's rows are overwritten.
      column.segment(1, std::min(m, total) - k - 1).setZero();
    }
    held = std::min(m, total);
  }
  row_triangle_.setZero();
  row_triangle_.topRows(held) = row_stack_.block(0, 0, held, m).triangularView<Eigen::Upper>();
}

void LmState::ApplyReflectors(Eigen::VectorXd* v) {
  // Q^T v = H_{m-1} ... H_0 v, reflector by reflector exactly as Eigen's sequence product
  // does for one column (the same rounding), without its copy and workspace allocation.
  const Eigen::Index n = v->size();
  const auto& factored = qr_->matrixQR();
  for (Eigen::Index k = 0; k < static_cast<Eigen::Index>(working_.size()); ++k) {
    v->bottomRows(n - k).applyHouseholderOnTheLeft(factored.col(k).tail(n - k - 1),
                                                   qr_->hCoeffs()[k], &reflector_work_);
  }
}

void LmState::Factorize() {
  const int m = static_cast<int>(working_.size());
  system_.Resize(m);
  working_diag_.resize(m);
  solution_.resize(m);
  step_.resize(m);
  factor_step_.resize(m);
  qt_second_.resize(m);
  geodesic_scaled_.resize(m);
  acceleration_.resize(m);
  FactorizeQr();
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

void LmState::MultiplyByFactor(const Eigen::VectorXd& step, Eigen::VectorXd* out) const {
  const int m = static_cast<int>(working_.size());
  for (int i = 0; i < m; ++i) {
    double sum = 0;
    for (int j = i; j < m; ++j) sum += system_.r(i, j) * step[system_.pivot[j]];
    (*out)[i] = sum;
  }
}

void LmState::PredictFromFactor(const Eigen::VectorXd& step, TrialStep* trial) {
  // f^T J s = (Q^T f)^T R P^T s, because f's part outside range(Q) is orthogonal to J s.
  MultiplyByFactor(step, &factor_step_);
  const double f_dot_js = system_.qtf.dot(factor_step_);
  const double fnorm2 = fnorm * fnorm;
  trial->predicted = -(2 * f_dot_js + factor_step_.squaredNorm()) / fnorm2;
  trial->directional = f_dot_js / fnorm2;
}

void LmState::ApplyQTransposeToDifference(const Eigen::VectorXd& a, const Eigen::VectorXd& b,
                                          Eigen::VectorXd* out) {
  scratch_n_ = a - b;
  ApplyReflectors(&scratch_n_);
  *out = scratch_n_.head(static_cast<int>(working_.size()));
}

void LmState::AddGeodesicAcceleration(double lambda, const LevenbergMarquardtOptions& options,
                                      Eigen::VectorXd* step) {
  // Transtrum & Sethna (2011): second directional derivative by a finite difference along
  // the velocity, then the acceleration from the same damped system. Every buffer is a
  // member sized with the working set, so a trial allocates nothing.
  constexpr double kProbe = 0.1;
  const int m = static_cast<int>(working_.size());
  probe_ = x;
  for (int k = 0; k < m; ++k) probe_[working_[k]] += kProbe * (*step)[k];
  double probe_norm = 0;
  if (!EvaluateResidual(probe_, &f_probe_, &probe_norm)) return;
  // Q^T second = (2/h) (Q^T (f_probe - f) / h - R P^T v), as J v = Q R P^T v.
  ApplyQTransposeToDifference(f_probe_, f, &qt_second_);
  MultiplyByFactor(*step, &factor_step_);
  qt_second_ = (2.0 / kProbe) * (qt_second_ / kProbe - factor_step_);
  geodesic_scaled_ = std::sqrt(lambda) * working_diag_;
  DampedQrSolve(&system_, geodesic_scaled_, qt_second_, &acceleration_);
  acceleration_ = -acceleration_;
  const double velocity_norm = working_diag_.cwiseProduct(*step).norm();
  const double acceleration_norm = working_diag_.cwiseProduct(acceleration_).norm();
  if (velocity_norm > 0 && 2 * acceleration_norm <= options.geodesic_max_ratio * velocity_norm) {
    *step += 0.5 * acceleration_;
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
    PredictFromFactor(step_, &trial);
  } else {
    // Predicted reduction from R: ||R P^T s||^2 and the damping term (MINPACK lmder).
    MultiplyByFactor(step_, &factor_step_);
    double rs2 = 0;
    for (int i = 0; i < m; ++i) rs2 += factor_step_[i] * factor_step_[i];
    const double temp1 = std::sqrt(rs2) / fnorm;
    const double temp2 = std::sqrt(*lambda) * trial.scaled_step_norm / fnorm;
    trial.predicted = temp1 * temp1 + temp2 * temp2 / 0.5;
    trial.directional = -(temp1 * temp1 + temp2 * temp2);
  }

  trial_has_jacobian_ = speculate_;
  double norm = 0;
  const bool finite =
      EvaluateModel(x_trial_, &f_trial_, &norm, speculate_ ? &trial_jacobian_ : nullptr);
  trial.fnorm = finite ? norm : std::numeric_limits<double>::infinity();
  trial.actual = 0.1 * trial.fnorm < fnorm ? 1 - (trial.fnorm / fnorm) * (trial.fnorm / fnorm) : -1;
  trial_fnorm_ = trial.fnorm;
  // A rejected trial's Jacobian was wasted: values only until the next Jacobian.
  speculate_ = false;
  return trial;
}

bool LmState::TrialJacobianIsFinite() {
  if (!trial_has_jacobian_) {
    ++num_jacobian_evaluations;
    trial_jacobian_.setConstant(std::numeric_limits<double>::quiet_NaN());
    problem_.model->EvaluateWithJacobian(problem_.data.predictors, x_trial_.data(), values_.data(),
                                         trial_jacobian_.data());
    trial_has_jacobian_ = true;
  }
  // The same test EvaluateJacobian applies after weighting, column by column.
  for (int j : free) {
    const auto column = trial_jacobian_.col(j);
    const bool finite =
        has_weights_ ? column.cwiseProduct(weights_).allFinite() : column.allFinite();
    if (!finite) return false;
  }
  return true;
}

void LmState::MarkTrialFailed(TrialStep* trial) {
  trial->fnorm = std::numeric_limits<double>::infinity();
  trial->actual = -1;
  trial_fnorm_ = trial->fnorm;
}

void LmState::Accept() {
  x.swap(x_trial_);
  f.swap(f_trial_);
  fnorm = trial_fnorm_;
  x_trial_ = x;
  if (trial_has_jacobian_) {
    jacobian_.swap(trial_jacobian_);
    jacobian_ready_ = true;
  }
}

}  // namespace internal
}  // namespace foothold
