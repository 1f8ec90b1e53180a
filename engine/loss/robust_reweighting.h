#pragma once
// What a robust fit needs besides the loss itself: the standardised residuals of a problem,
// the scale in use, the IRLS weights and outlier flags at an end point, and the reweighted
// problem whose least-squares fit is one IRLS step (and whose covariance the fit reports).

#include <Eigen/Core>
#include <string>
#include <vector>

#include "engine/loss/robust_loss.h"
#include "engine/solve/problem.h"
#include "engine/stats/fit_statistics.h"

namespace foothold {

// e_i = (f(x_i; params) - y_i) / sigma_i (sigma = 1 without sigma). False when not finite.
bool StandardisedResiduals(const Problem& problem, const Eigen::VectorXd& params,
                           Eigen::VectorXd* residuals);

// The scale a robust fit uses: `requested` when > 0, else 1.4826 MAD of the residuals (see
// MadScale) times sqrt(n / (n - num_free)), the small-sample correction for the residuals
// being fitted (as rss / (n - p) for the variance); a MAD of 0 (more than half the points
// fitted exactly) falls back to the rms, and an rms of 0 to 1 (every residual is 0, so the
// scale cannot matter).
double RobustScale(const Eigen::VectorXd& residuals, double requested, int num_free);

struct RobustAssessment {
  LossKind loss = LossKind::kSquared;
  double scale = 1;                // s in z = e / s
  bool is_scale_automatic = true;  // from the residuals (loss_scale <= 0)
  double outlier_cut = 3;          // |z| beyond this is flagged
  std::vector<int> outliers;       // indices of flagged points, ascending
  Eigen::VectorXd weights;         // IRLS weights psi(z)/z, floored at kMinWeight
  double cost = 0;                 // 2 sum s^2 rho(z): the rss for the squared loss
};
// Weights below this are raised to it, so that a point the biweight rejects keeps a finite
// sigma in the reweighted problem (its influence is ~1e-12 of a clean point's).
constexpr double kMinWeight = 1e-12;

// The loss, scale, weights and flags at `params`. False when the model is not finite there.
bool AssessRobustFit(const Problem& problem, const Eigen::VectorXd& params, LossKind loss,
                     double requested_scale, RobustAssessment* assessment);

// The same problem with sigma_i / sqrt(w_i): its weighted least-squares normal equations are
// those of the robust loss at fixed weights (one IRLS step), and its covariance, rescaled by
// the weighted residual variance (relative sigma), is the IRLS covariance.
Problem ReweightedProblem(const Problem& problem, const Eigen::VectorXd& weights);

// Statistics of a robust fit at `params`: the goodness-of-fit figures (rss, R², AIC, runs,
// residuals) of the plain standardised residuals, and the covariance, standard errors and
// normal-quantile intervals of the M-estimator's asymptotic covariance
//   C = K^2 s^2 [sum psi(z)^2 / (n - p)] / [sum psi'(z) / n]^2 (J^T W J)^{-1},
//   K = 1 + (p / n) var(psi') / mean(psi')^2
// (Huber 1981, Sec. 7.6, the sandwich with Huber's small-sample correction; from memory). For L1,
// psi' is zero almost everywhere and the covariance is the least-absolute-deviations asymptotic
// (pi / 2) s^2 (J^T W J)^{-1}, i.e. 1 / (4 f(0)^2) with the normal density f(0) = 1 / (s sqrt(2
// pi)) (Koenker & Bassett 1978). Where sum psi' <= 0 (the biweight with most points beyond c) the
// standard errors are NaN and the message says so.
FitStatistics ComputeRobustStatistics(const Problem& problem, const Eigen::VectorXd& params,
                                      const RobustAssessment& assessment);

}  // namespace foothold
