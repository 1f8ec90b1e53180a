#pragma once
// Linearisations: transforms that turn a few nonlinear families into straight lines, solved
// by weighted linear least squares. They give starting guesses, not final answers: the
// transform distorts the noise, which the default weights undo to first order (the delta
// method: Var f(y) ~ f'(y)^2 Var y).
//
//   kLog        y = A exp(b x)             log y vs x (log y = log A + b x),
//                                          weights y^2 / sigma^2
//   kLogLog     y = a x^k                  log y vs log x, weights y^2 / sigma^2
//   kReciprocal 1/y = c0 + c1 / x          1/y vs 1/x, weights y^4 / sigma^2 (e.g. Michaelis-
//                                          Menten: vmax = 1 / c0, km = c1 / c0)
//
// Points where the transform is undefined (y <= 0 for the logs, x <= 0 for log-log, x = 0
// or y = 0 for the reciprocal) are skipped and counted; when fewer than min_points remain
// the fit is rejected with kTooFewValidPoints.

#include <Eigen/Core>
#include <string>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

enum class Linearisation { kLog, kLogLog, kReciprocal };
const char* ToString(Linearisation kind);  // "log" | "log_log" | "reciprocal"

struct LinearisationOptions {
  // Usable points needed after skipping. >= 2; default 3 (a line plus one check).
  int min_points = 3;
  // Delta-method weights (above) times 1 / sigma^2 when sigma is given. False: every usable
  // point weighs the same in the transformed space. Default true.
  bool is_weighted = true;

  bool Validate(std::string* error) const;
};

struct LinearisedFit {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  Linearisation kind = Linearisation::kLog;
  // The transformed line: v = intercept + slope * u, with (u, v) as in the table above.
  double intercept = 0.0;
  double slope = 0.0;
  double intercept_stderr = 0.0;  // scaled by the transformed residual variance
  double slope_stderr = 0.0;
  double rss = 0.0;  // weighted, in the transformed space
  int num_used = 0;
  int num_skipped = 0;  // points where the transform is undefined

  bool IsOk() const { return status == SignalStatus::kOk; }
  // kLog: A = exp(intercept), b = slope. kLogLog: a = exp(intercept), k = slope.
  double Prefactor() const;
};

// x in any order; sigma empty or one value > 0 per point.
LinearisedFit FitLogLinear(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                           const Eigen::VectorXd& sigma = Eigen::VectorXd(),
                           const LinearisationOptions& options = LinearisationOptions());
LinearisedFit FitLogLog(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                        const Eigen::VectorXd& sigma = Eigen::VectorXd(),
                        const LinearisationOptions& options = LinearisationOptions());
LinearisedFit FitReciprocal(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                            const Eigen::VectorXd& sigma = Eigen::VectorXd(),
                            const LinearisationOptions& options = LinearisationOptions());

}  // namespace signal
}  // namespace foothold
