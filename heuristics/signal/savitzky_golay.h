#pragma once
// Savitzky-Golay smoothing and derivatives on even or uneven x (Savitzky & Golay 1964,
// Anal. Chem. 36, 1627). Each point gets its own least-squares polynomial over a window of
// 2h + 1 neighbours, fitted in the local coordinate t = (x_j - x_i) / s (s the largest
// |x_j - x_i| in the window, so |t| <= 1 and the normal equations stay well conditioned).
// The value and the first two derivatives at x_i come from that polynomial. Near the ends
// the window keeps its 2h + 1 points and slides inward (an asymmetric window).
//
// Automatic window: among half-windows h_min, ~1.25 h, ... up to max_auto_half_window (and
// 2h + 1 <= n), choose the one minimising Mallows' Cp / Stein's unbiased risk estimate for
// a linear smoother (Mallows 1973; Stein 1981):
//   risk(h) = mean (y_i - yhat_i)^2 - s^2 + 2 s^2 mean H_ii,
// where s is the noise estimate (EstimateNoise, second differences, unless given) and H_ii
// the weight of y_i in its own smoothed value. Wide windows lower the variance term and
// raise the bias that shows in the residuals; the minimum balances the two.

#include <Eigen/Core>
#include <string>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

struct SavitzkyGolayOptions {
  // Degree of the local polynomial. 2, 3 or 4; default 2.
  int polynomial_order = 2;
  // Half-width h of the window (2h + 1 points). 0 selects it automatically (see above);
  // otherwise 2h + 1 must exceed polynomial_order + 1. Default 0.
  int half_window = 0;
  // Largest h the automatic search tries. >= 2; default 50.
  int max_auto_half_window = 50;
  // Noise standard deviation for the automatic window, in y units. < 0 (default -1):
  // estimate it from the data.
  double noise_sigma = -1.0;

  bool Validate(std::string* error) const;
  // The smallest half-window that smooths at all: 2h + 1 >= polynomial_order + 2.
  int MinHalfWindow() const { return (polynomial_order + 2) / 2; }
};

struct SmoothedCurve {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  Eigen::VectorXd value;              // smoothed y at each x
  Eigen::VectorXd first_derivative;   // dy/dx
  Eigen::VectorXd second_derivative;  // d2y/dx2
  int polynomial_order = 2;
  int half_window = 0;          // the h used
  bool is_auto_window = false;  // chosen by the risk rule
  double noise_sigma = 0.0;     // the noise level the rule used (0 when h was given)
  double estimated_risk = 0.0;  // risk(h) of the chosen window (auto only)

  bool IsOk() const { return status == SignalStatus::kOk; }
};

// x strictly increasing (SortAndMerge). Constant y is allowed (the smooth is constant).
SmoothedCurve SmoothSavitzkyGolay(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                                  const SavitzkyGolayOptions& options = SavitzkyGolayOptions());

// Weights w with sum_j w_j y_j = the `derivative`-th derivative, at x_eval, of the
// least-squares polynomial of degree `order` through (window_x, y). window_x needs at
// least order + 1 distinct values; order in [0, 8], derivative in [0, min(order, 2)]. False
// with a message otherwise.
bool SavitzkyGolayWeights(const Eigen::VectorXd& window_x, double x_eval, int order, int derivative,
                          Eigen::VectorXd* weights, std::string* error);

}  // namespace signal
}  // namespace foothold
