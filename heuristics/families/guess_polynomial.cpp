// Guesses for line and polynomial: both are linear in every coefficient, so the weighted
// least-squares solution is the optimum itself. It is solved in t = x / s (s the largest
// |x|) so that the powers stay near 1 whatever the units of x, then c_k = d_k / s^k.

#include <algorithm>
#include <cmath>

#include "heuristics/families/guess_families.h"
#include "heuristics/signal/linear_fit.h"

namespace foothold {
namespace guess {

bool GuessPolynomialFamily(const GuessContext& context, std::string* error) {
  const Curve& curve = *context.curve;
  CandidateSet& set = *context.set;
  const int degree = set.NumParameters() - 1;
  const int n = curve.NumPoints();
  if (n < degree + 1) {
    if (error != nullptr) {
      *error = context.request->name + " of degree " + std::to_string(degree) + " needs at least " +
               std::to_string(degree + 1) + " points with distinct x: got " + std::to_string(n);
    }
    return false;
  }
  const double s = std::max(std::abs(curve.x_min), std::abs(curve.x_max));
  Eigen::MatrixXd design(n, degree + 1);
  for (int i = 0; i < n; ++i) {
    const double t = curve.x[i] / s;
    double power = 1.0;
    for (int k = 0; k <= degree; ++k) {
      design(i, k) = power;
      power *= t;
    }
  }
  const signal::LinearFit fit = signal::SolveWeightedLeastSquares(design, curve.y, curve.weight);
  Eigen::VectorXd coefficients = Eigen::VectorXd::Zero(degree + 1);
  if (fit.IsOk()) {
    double factor = 1.0;
    for (int k = 0; k <= degree; ++k) {
      coefficients[k] = fit.coefficients[k] / factor;
      factor *= s;
    }
  } else {
    set.Warn("the powers of x are not independent on these x values (" + fit.message +
             "); coefficients start at the mean response");
    coefficients[0] = curve.y.mean();
  }
  // The line model orders (slope, intercept); the polynomial (c0, c1, ...).
  Eigen::VectorXd start = coefficients;
  if (context.request->name == "line") start = Eigen::Vector2d(coefficients[1], coefficients[0]);
  // Bin means make the curve exact for a line but not for higher powers: re-solve on the
  // full data (kept only when that lowers the rss, e.g. not when badly conditioned).
  set.RefineLinear(&start, nullptr);
  set.Add("lls", start, false);
  const double y_scale = std::max(std::abs(curve.y_max), std::abs(curve.y_min));
  for (int j = 0; j < set.NumParameters(); ++j) {
    const int power = context.request->name == "line" ? 1 - j : j;
    const double typical = y_scale > 0 ? y_scale / std::pow(s, power) : 1.0;
    set.SetScale(j, std::max(std::abs(start[j]), typical), false);
  }
  return true;
}

}  // namespace guess
}  // namespace foothold
