#pragma once
// The working state of one Levenberg–Marquardt run: buffers sized once, so the iteration
// loop itself does not allocate.
//
// Per Jacobian the state weights the free columns, packs them to the front of the Jacobian
// buffer and takes the gradient J^T f and the column norms column by column. The working
// columns are then factored in place by Eigen's column-pivoted Householder QR (no copy of
// J), and the subproblem sees only R, the pivot and Q^T f, so a rejected trial step costs
// O(m^2). For a tall Jacobian (kRowBlockMinRows rows or more, no geodesic acceleration)
// the working columns are reduced instead block by block of kRowBlockRows rows: each block
// stacked under the triangle [R | Q^T f] of the rows before it and triangularised by
// Householder reflections there, in cache, one pass over J in all; the column pivoting is
// then applied to the m x m triangle (same pivots as pivoting J in exact arithmetic, since
// R has J's column norms). Q itself is not kept on that path.
//
// Trial points are evaluated with the Jacobian while steps are being accepted: an accepted
// trial then brings its Jacobian along and the next iteration does not call the model
// again. After a rejection trials are values only until the next Jacobian.

#include <Eigen/Core>
#include <Eigen/QR>
#include <optional>
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

  // Residual and Jacobian at the start point x: f, fnorm; false when f is not finite.
  bool EvaluateStart();
  // Weighted residual (f(x) - y) / sigma into `out` and its norm; false when not finite.
  bool EvaluateResidual(const Eigen::VectorXd& params, Eigen::VectorXd* out, double* norm);
  // Weighted Jacobian at x (from the accepted trial when it brought one), its Gram matrix,
  // column norms and gradient; false when not finite.
  bool EvaluateJacobian();
  // Chooses the working columns; false when none is left.
  bool SelectWorkingSet();
  // R, pivot and Q^T f of the working columns.
  void Factorize();
  // Keeps the full Q (the plain pivoted QR of J) for every factorisation: geodesic
  // acceleration applies Q^T to another residual.
  void KeepFullQ() { allow_row_blocks_ = false; }
  // R, pivot and Q^T f of the last Factorize (the subproblem's input).
  const DampedSystem& Factor() const { return system_; }
  void InitialiseScaling();
  void UpdateScaling();
  double ScaledParameterNorm() const;
  // max_j |J_j^T f| / (||J_j|| ||f||) over the working columns (MINPACK's gnorm).
  double ScaledGradientNorm() const;
  // Solves the subproblem for `radius`, projects onto the bounds and evaluates the trial.
  TrialStep ComputeTrialStep(double radius, double* lambda,
                             const LevenbergMarquardtOptions& options);
  // Whether the weighted Jacobian of the free columns is finite at the last trial point;
  // evaluates it there when the trial brought values only (it is then kept for the next
  // iteration, so an accepted step costs no extra Jacobian).
  bool TrialJacobianIsFinite();
  // Turns the last trial into a failed one (fnorm = inf, actual = -1): a point that the
  // iteration cannot continue from, as a non-finite Jacobian makes it.
  void MarkTrialFailed(TrialStep* trial);
  void Accept();

  Eigen::VectorXd x;  // p, current point
  Eigen::VectorXd f;  // n, weighted residual at x
  double fnorm = 0;
  std::vector<int> free;  // indices of the free parameters
  int num_evaluations = 0;
  int num_jacobian_evaluations = 0;

 private:
  // Model values into values_ (and the Jacobian into `jacobian` when not null), NaN-filled
  // first; the weighted residual into `out`; false when the residual is not finite.
  bool EvaluateModel(const Eigen::VectorXd& params, Eigen::VectorXd* out, double* norm,
                     Eigen::MatrixXd* jacobian);
  // Predicted and directional reductions for a step `s` (working order) from R and Q^T f:
  // with J P = Q R, J s = Q R P^T s.
  void PredictFromFactor(const Eigen::VectorXd& step, TrialStep* trial);
  // R P^T s into `out` (size m).
  void MultiplyByFactor(const Eigen::VectorXd& step, Eigen::VectorXd* out) const;
  // v <- Q^T v with the reflectors of the last factorisation; v has as many rows as the
  // factored matrix (n, or m for the triangle of the row-block path).
  void ApplyReflectors(Eigen::VectorXd* v);
  // The first m entries of Q^T (a - b), without a temporary.
  void ApplyQTransposeToDifference(const Eigen::VectorXd& a, const Eigen::VectorXd& b,
                                   Eigen::VectorXd* out);
  // Moves the working-order step into x_trial_ within the bounds; true when it was clipped.
  bool ProjectStep(const Eigen::VectorXd& step, Eigen::VectorXd* applied);
  void AddGeodesicAcceleration(double lambda, const LevenbergMarquardtOptions& options,
                               Eigen::VectorXd* step);
  void FactorizeQr();
  // The row-block reduction of the packed working columns and f into the m x m triangle
  // and its Q^T f (top m entries of the last column of row_stack_).
  void ReduceRowBlocks();

  const Problem& problem_;
  bool has_weights_ = false;
  Eigen::VectorXd weights_;         // n, 1/sigma (or empty)
  Eigen::VectorXd values_;          // n, model values scratch
  Eigen::MatrixXd jacobian_;        // n x p, weighted; free columns packed to the front
  Eigen::MatrixXd trial_jacobian_;  // n x p, the model's Jacobian at x_trial_
  bool jacobian_ready_ = false;     // jacobian_ holds the model's Jacobian at x (unweighted)
  bool trial_has_jacobian_ = false;
  bool speculate_ = true;         // evaluate the next trial with its Jacobian
  Eigen::VectorXd gradient_;      // p, J^T f for free columns
  Eigen::VectorXd column_norms_;  // p
  Eigen::VectorXd diag_;          // p, scaling D (free entries used)
  std::vector<int> working_;      // working columns (subset of free)
  std::vector<int> working_pos_;  // their packed positions in jacobian_
  // In-place pivoted QR of jacobian_'s leading working columns (rebuilt per Jacobian).
  std::optional<Eigen::ColPivHouseholderQR<Eigen::Ref<Eigen::MatrixXd>>> qr_;
  DampedSystem system_;
  Eigen::VectorXd working_diag_;
  Eigen::VectorXd solution_;     // m
  Eigen::VectorXd step_;         // m, applied step
  Eigen::VectorXd factor_step_;  // m
  Eigen::VectorXd x_trial_;      // p
  Eigen::VectorXd f_trial_;      // n
  Eigen::VectorXd scratch_n_;    // n
  // Geodesic acceleration scratch, sized with the working set: no allocation per trial.
  Eigen::VectorXd probe_;            // p, x + h v
  Eigen::VectorXd f_probe_;          // n, residual at the probe
  Eigen::VectorXd qt_second_;        // m, Q^T of the second directional derivative
  Eigen::VectorXd geodesic_scaled_;  // m, sqrt(lambda) D
  Eigen::VectorXd acceleration_;     // m
  double reflector_work_ = 0;        // Eigen's workspace for one reflector on one column
  bool allow_row_blocks_ = true;
  // Row-block path: the triangle [R | Q^T f] stacked over one block of [J | f] rows,
  // (m + kRowBlockRows) x (m + 1); the triangle alone, factored with pivoting; workspace.
  Eigen::MatrixXd row_stack_;
  Eigen::MatrixXd row_triangle_;
  Eigen::VectorXd row_work_;
  double trial_fnorm_ = 0;
};

}  // namespace internal
}  // namespace foothold
