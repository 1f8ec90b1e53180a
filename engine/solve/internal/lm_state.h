#pragma once
// The working state of one Levenberg–Marquardt run: buffers sized once, so the iteration
// loop itself does not allocate (apart from Eigen's QR when the working set changes size).

#include <Eigen/Core>
#include <Eigen/QR>
#include <vector>

#include "engine/solve/internal/damped_solve.h"
#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"

namespace foothold {
namespace internal {

struct TrialStep {
  double fnorm = 0;             // ||f(x + s)||, +inf when the model is not finite there
  double actual = 0;            // 1 - (fnorm_trial / fnorm)^2, or -1 for a large increase
  double predicted = 0;         // predicted relative reduction of ||f||^2
  double directional = 0;       // directional derivative, relative, as in MINPACK
  double scaled_step_norm = 0;  // ||D s||
};

class LmState {
 public:
  LmState(const Problem& problem, const Eigen::VectorXd& start);

  // Weighted residual (f(x) - y) / sigma into `out`; false when not finite.
  bool EvaluateResidual(const Eigen::VectorXd& params, Eigen::VectorXd* out);
  // Weighted Jacobian at x; false when not finite.
  bool EvaluateJacobian();
  // Chooses the working columns; false when none is left.
  bool SelectWorkingSet();
  // Pivoted QR of the working columns and Q^T f.
  void Factorize();
  void InitialiseScaling();
  void UpdateScaling();
  double ScaledParameterNorm() const;
  // max_j |J_j^T f| / (||J_j|| ||f||) over the working columns (MINPACK's gnorm).
  double ScaledGradientNorm() const;
  // Solves the subproblem for `radius`, projects onto the bounds and evaluates the trial.
  TrialStep ComputeTrialStep(double radius, double* lambda, const LevenbergMarquardtOptions& options);
  void Accept();

  Eigen::VectorXd x;      // p, current point
  Eigen::VectorXd f;      // n, weighted residual at x
  double fnorm = 0;
  std::vector<int> free;  // indices of the free parameters
  int num_evaluations = 0;
  int num_jacobian_evaluations = 0;

 private:
  // Predicted and directional reductions for a step `s` (working order) computed with J.
  void PredictWithJacobian(const Eigen::VectorXd& step, TrialStep* trial);
  // Moves the working-order step into x_trial_ within the bounds; true when it was clipped.
  bool ProjectStep(const Eigen::VectorXd& step, Eigen::VectorXd* applied);
  void AddGeodesicAcceleration(double lambda, const LevenbergMarquardtOptions& options,
                               Eigen::VectorXd* step);

  const Problem& problem_;
  Eigen::VectorXd weights_;   // n, 1/sigma (or 1)
  Eigen::VectorXd values_;    // n, model values scratch
  Eigen::MatrixXd jacobian_;  // n x p, weighted
  Eigen::VectorXd gradient_;  // p, J^T f for free columns
  Eigen::VectorXd column_norms_;  // p
  Eigen::VectorXd diag_;          // p, scaling D (free entries used)
  std::vector<int> working_;      // working columns (subset of free)
  Eigen::MatrixXd working_jacobian_;
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr_;
  DampedSystem system_;
  Eigen::VectorXd working_diag_;
  Eigen::VectorXd solution_;   // m
  Eigen::VectorXd step_;       // m, applied step
  Eigen::VectorXd x_trial_;    // p
  Eigen::VectorXd f_trial_;    // n
  Eigen::VectorXd jacobian_step_;  // n
  double trial_fnorm_ = 0;
};

}  // namespace internal
}  // namespace foothold
