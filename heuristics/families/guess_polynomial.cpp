// Guesses for line and polynomial: both are linear in every coefficient, so the weighted
// least-squares solution on the full data is the optimum itself. It is solved in
// t = (x - c) / s, c the middle and s the half-width of the x range, so that the powers stay
// within [-1, 1] whatever the units and offset of x; then the coefficients of x^j are
// c_j = sum_{k >= j} d_k binom(k, j) (-c)^(k - j) / s^k. Low degrees are well conditioned
// in t and take the normal equations, accumulated in one pass over the data (a fraction of
// the cost of a QR of the n x (d + 1) design); when their pivots show ill-conditioning
// (high degrees) pivoted QR solves instead.

#include <Eigen/Cholesky>
#include <algorithm>
#include <cmath>

#include "heuristics/families/guess_families.h"
#include "heuristics/signal/linear_fit.h"

namespace foothold {
namespace guess {
namespace {

// Coefficients of x^j from those of t^k, t = (x - center) / half_width.
Eigen::VectorXd FromCentred(const Eigen::VectorXd& d, double center, double half_width) {
  const int p = static_cast<int>(d.size());
  Eigen::VectorXd c = Eigen::VectorXd::Zero(p);
  for (int k = 0; k < p; ++k) {
    // d_k ((x - center) / s)^k expanded by the binomial theorem.
    const double leading = d[k] / std::pow(half_width, k);
    double binomial = 1.0;  // binom(k, j), from j = k down
    double shift = 1.0;     // (-center)^(k - j)
    for (int j = k; j >= 0; --j) {
      c[j] += leading * binomial * shift;
      binomial = binomial * j / (k - j + 1);
      shift *= -center;
    }
  }
  return c;
}

// The normal equations' smallest LDLT pivot must exceed this share of the largest: the
// condition number is then about 1e8 at most and the solution good to ~1e-8, which the
// local fit that follows polishes in one step.
constexpr double kMinNormalPivotShare = 1e-8;

// Coefficients of t^k (k = 0..degree) by the weighted normal equations; false when they
// are too ill-conditioned to trust.
bool SolveNormalEquations(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                          const Eigen::VectorXd& weight, double center, double half_width,
                          int degree, Eigen::VectorXd* d) {
  const int p = degree + 1;
  Eigen::VectorXd power_sums = Eigen::VectorXd::Zero(2 * p - 1);
  Eigen::VectorXd moments = Eigen::VectorXd::Zero(p);
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    const double t = (x[i] - center) / half_width;
    double power = weight[i];
    for (int m = 0; m < 2 * p - 1; ++m, power *= t) {
      power_sums[m] += power;
      if (m < p) moments[m] += power * y[i];
    }
  }
  Eigen::MatrixXd gram(p, p);
  for (int a = 0; a < p; ++a) {
    for (int b = 0; b < p; ++b) gram(a, b) = power_sums[a + b];
  }
  const Eigen::LDLT<Eigen::MatrixXd> ldlt(gram);
  const Eigen::VectorXd pivots = ldlt.vectorD();
  if (ldlt.info() != Eigen::Success ||
      !(pivots.minCoeff() > kMinNormalPivotShare * pivots.maxCoeff())) {
    return false;
  }
  *d = ldlt.solve(moments);
  return d->allFinite();
}

// Coefficients of t^k by pivoted QR of the design; false (with the reason) when the
// powers are not independent on these x.
bool SolveByQr(const Eigen::VectorXd& x, const Eigen::VectorXd& y, const Eigen::VectorXd& weight,
               double center, double half_width, int degree, Eigen::VectorXd* d,
               std::string* reason) {
  Eigen::MatrixXd design(x.size(), degree + 1);
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    const double t = (x[i] - center) / half_width;
    double power = 1.0;
    for (int k = 0; k <= degree; ++k) {
      design(i, k) = power;
      power *= t;
    }
  }
  const signal::LinearFit fit = signal::SolveWeightedLeastSquares(design, y, weight);
  if (!fit.IsOk()) {
    *reason = fit.message;
    return false;
  }
  *d = fit.coefficients;
  return true;
}

}  // namespace

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
  const Eigen::VectorXd x = set.DataX().col(0);
  const double x_min = x.minCoeff(), x_max = x.maxCoeff();
  const double center = 0.5 * (x_min + x_max);
  const double half_width = 0.5 * (x_max - x_min);
  Eigen::VectorXd centred;
  std::string reason;
  Eigen::VectorXd coefficients = Eigen::VectorXd::Zero(degree + 1);
  if (SolveNormalEquations(x, set.DataY(), set.DataWeight(), center, half_width, degree,
                           &centred) ||
      SolveByQr(x, set.DataY(), set.DataWeight(), center, half_width, degree, &centred, &reason)) {
    coefficients = FromCentred(centred, center, half_width);
  } else {
    set.Warn("the powers of x are not independent on these x values (" + reason +
             "); coefficients start at the mean response");
    coefficients[0] = curve.y.mean();
  }
  // The line model orders (slope, intercept); the polynomial (c0, c1, ...).
  Eigen::VectorXd start = coefficients;
  if (context.request->name == "line") start = Eigen::Vector2d(coefficients[1], coefficients[0]);
  set.Add("lls", start, false);
  const double s = std::max(std::abs(curve.x_min), std::abs(curve.x_max));
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
