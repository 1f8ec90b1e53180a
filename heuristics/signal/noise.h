#pragma once
// Robust estimate of the noise standard deviation from the data alone, without a model.
//
// Both methods take the median absolute deviation (MAD) of differences between
// neighbouring points; the median ignores the few large differences at peaks and steps.
// For Gaussian noise of standard deviation s, MAD = s * Phi^-1(3/4), so
// 1.4826 * MAD estimates s (1.4826 = 1 / 0.67449).
//  * kFirstDifference: d_i = y_{i+1} - y_i has variance 2 s^2, so s = 1.4826 * MAD(d) / sqrt(2).
//    A constant slope shifts all d_i alike and the MAD (taken about the median) removes it.
//  * kSecondDifference: d_i = y_{i+1} - 2 y_i + y_{i-1} has variance (1 + 4 + 1) s^2 = 6 s^2,
//    so s = 1.4826 * MAD(d) / sqrt(6); it cancels slopes exactly and curvature to first order.
//    On uneven x the same idea uses the residual of y_i from the straight line through its
//    neighbours, r_i = y_i - (a_i y_{i-1} + b_i y_{i+1}), with a_i = (x_{i+1} - x_i) / h,
//    b_i = (x_i - x_{i-1}) / h, h = x_{i+1} - x_{i-1}; Var r_i = (1 + a_i^2 + b_i^2) s^2, so
//    each r_i is divided by sqrt(1 + a_i^2 + b_i^2) before the MAD. On even x, a = b = 1/2 and
//    r_i / sqrt(3/2) = -d_i / sqrt(6): the two forms agree.

#include <Eigen/Core>
#include <string>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

enum class NoiseMethod {
  kFirstDifference,
  kSecondDifference,  // the default: robust to slopes and curvature
};
const char* ToString(NoiseMethod method);  // "first_difference" | "second_difference"

struct NoiseEstimate {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  // Estimated standard deviation of the noise in y units. 0 for noise-free data (every
  // difference equal). Also 0 with status kConstantY.
  double sigma = 0.0;
  NoiseMethod method = NoiseMethod::kSecondDifference;
  int num_differences = 0;  // how many differences entered the median

  bool IsOk() const { return status == SignalStatus::kOk; }
};

// x strictly increasing (SortAndMerge), at least 3 points, y not constant.
NoiseEstimate EstimateNoise(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                            NoiseMethod method = NoiseMethod::kSecondDifference);

}  // namespace signal
}  // namespace foothold
