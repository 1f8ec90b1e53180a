#pragma once
// Variable projection for separable least squares (Golub & Pereyra 1973; Kaufman 1975).
//
// f(x; θ, c) = φ0(x; θ) + Φ(x; θ) c is affine in the linear parameters c. For given
// nonlinear parameters θ, c(θ) solves the weighted linear problem min ||W(Φ c + φ0 − y)||
// by column-pivoted QR, and the reduced residual r(θ) = W(Φ c(θ) + φ0 − y) depends on θ
// alone. ProjectedModel exposes r as an ordinary Model over θ, so the existing
// Levenberg–Marquardt solver drives it with its bounds, fixed flags and terminations.
//
// A linear parameter is projected only when it is free and unbounded; one that is fixed or
// has a finite bound stays with the nonlinear parameters (the solver then honours it).

#include <Eigen/Core>
#include <Eigen/QR>
#include <memory>
#include <string>
#include <vector>

#include "engine/model/model.h"
#include "engine/solve/problem.h"

namespace foothold {

// Which parameters of a problem the projection solves linearly and which the solver sees.
struct ProjectionSplit {
  std::vector<int> linear;     // projected: declared linear, free, both bounds infinite
  std::vector<int> nonlinear;  // everything else, in the model's order
  // Why the projection does not apply ("the model declares no linear parameters"), or
  // empty when it does: at least one projected and at least one free nonlinear parameter.
  std::string not_applicable;

  bool Applies() const { return not_applicable.empty(); }
};

// Splits the parameters of `problem` (valid, model set).
ProjectionSplit SplitForProjection(const Problem& problem);

// The reduced problem as a Model over the nonlinear parameters. Its values are the
// weighted fit W f(θ, c(θ)), so it must be paired with the whitened data of
// MakeProjectedProblem (response W y, no sigma). Its Jacobian is Kaufman's approximation
// (I − P) W ∂f/∂θ at (θ, c(θ)), P the orthogonal projector onto the range of WΦ; the
// dropped term vanishes with the residual (Kaufman 1975, eq. 2.6).
class ProjectedModel final : public Model {
 public:
  // `problem` must outlive the model; `split.Applies()` must hold. `reference` (size p)
  // gives the values of fixed parameters and of nothing else that is solved.
  ProjectedModel(const Problem& problem, ProjectionSplit split, const Eigen::VectorXd& reference);
  ~ProjectedModel() override;

  int NumParameters() const override;
  const std::vector<std::string>& ParameterNames() const override;
  const std::vector<std::string>& PredictorNames() const override;
  void Evaluate(const Eigen::MatrixXd& x, const double* theta, double* values) const override;
  void EvaluateWithJacobian(const Eigen::MatrixXd& x, const double* theta, double* values,
                            double* jacobian) const override;
  std::unique_ptr<Model> Clone() const override;

  // The full parameter vector (size p) at θ with the linear ones at c(θ). False when the
  // model is not finite there.
  bool Expand(const double* theta, Eigen::VectorXd* full) const;
  // Numerical rank of WΦ at the last solve (columns the pivoted QR kept).
  int LastRank() const { return rank_; }
  const ProjectionSplit& Split() const { return split_; }

 private:
  // Evaluates Φ and φ0 at θ and solves for c; false when something is not finite.
  bool SolveLinear(const Eigen::MatrixXd& x, const double* theta) const;
  void FillFull(const double* theta) const;

  const Problem* problem_;
  std::unique_ptr<Model> owned_model_;  // set in clones, so a clone shares no scratch
  const Model* model_;
  ProjectionSplit split_;
  Eigen::VectorXd reference_;
  Eigen::VectorXd weights_;
  std::vector<std::string> names_;

  // Scratch for one thread at a time.
  mutable Eigen::VectorXd full_;
  mutable Eigen::VectorXd values_;
  mutable Eigen::MatrixXd jacobian_;
  mutable Eigen::MatrixXd basis_;   // W Φ
  mutable Eigen::VectorXd target_;  // W (y − φ0)
  mutable Eigen::VectorXd offset_;  // W φ0
  mutable Eigen::VectorXd coefficients_;
  mutable Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr_;
  mutable Eigen::MatrixXd reduced_;
  mutable int rank_ = 0;
};

// The problem Levenberg–Marquardt runs over θ: the whitened data (response W y, no sigma),
// the bounds and fixed flags of the nonlinear parameters. `model` must outlive it.
Problem MakeProjectedProblem(const Problem& problem, const ProjectedModel& model);

}  // namespace foothold
