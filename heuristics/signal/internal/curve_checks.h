#pragma once
// Input checks every tool runs first, so that each degenerate case has one message.

#include <Eigen/Core>
#include <string>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {
namespace internal {

struct CurveRequirements {
  int min_points = 3;             // fewer gives kTooFewPoints
  bool needs_sorted = true;       // x strictly increasing, else kNotSorted
  bool needs_y_variation = true;  // constant y gives kConstantY
};

// Checks sizes, finiteness, point count, span, order and variation, in that order, and
// writes a message naming the offending index or value.
SignalStatus CheckCurve(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                        const CurveRequirements& requirements, std::string* message);

// Linear interpolation of sorted (x, y) at t, clamped to the end values outside [x0, xn].
double InterpolateLinear(const Eigen::VectorXd& x, const Eigen::VectorXd& y, double t);

}  // namespace internal
}  // namespace signal
}  // namespace foothold
