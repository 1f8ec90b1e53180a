#pragma once
// Weighted linear least squares: the solver behind the linearisations, the amplitudes of
// the matrix pencil and the sinusoid of the periodogram.

#include <Eigen/Core>
#include <string>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

struct LinearFit {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  Eigen::VectorXd coefficients;  // minimises sum_i w_i (y_i - (A c)_i)^2
  // (A^T W A)^-1: the covariance when w_i = 1 / sigma_i^2 are true inverse variances;
  // multiply by rss / dof when the weights are only relative.
  Eigen::MatrixXd covariance;
  double rss = 0.0;  // weighted residual sum of squares
  int dof = 0;       // rows with positive weight minus columns
  int rank = 0;      // numerical rank found by the pivoted QR

  bool IsOk() const { return status == SignalStatus::kOk; }
};

// design is n x p, y has n values, weights is empty (all 1) or n finite values >= 0 (rows
// of weight 0 are ignored). Solved by Householder QR with column pivoting on the
// row-scaled system sqrt(W) A c = sqrt(W) y, never the normal equations. A rank below p
// gives kRankDeficient and no coefficients.
LinearFit SolveWeightedLeastSquares(const Eigen::MatrixXd& design, const Eigen::VectorXd& y,
                                    const Eigen::VectorXd& weights = Eigen::VectorXd());

struct LineFit {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  double intercept = 0.0;  // y = intercept + slope * x
  double slope = 0.0;
  // Standard errors scaled by the residual variance rss / dof (0 when dof = 0).
  double intercept_stderr = 0.0;
  double slope_stderr = 0.0;
  double rss = 0.0;
  int num_points = 0;  // rows with positive weight

  bool IsOk() const { return status == SignalStatus::kOk; }
};

// The straight line through (x, y) with optional weights; x in any order. At least two
// distinct x with positive weight, else kAllXEqual / kTooFewPoints.
LineFit FitLine(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                const Eigen::VectorXd& weights = Eigen::VectorXd());

}  // namespace signal
}  // namespace foothold
