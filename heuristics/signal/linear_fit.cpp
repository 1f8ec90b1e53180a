#include "heuristics/signal/linear_fit.h"

#include <Eigen/QR>
#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

namespace foothold {
namespace signal {
namespace {

// Relative size of the last kept diagonal of R, as a multiple of machine epsilon times the
// larger dimension (the usual numerical-rank rule, Golub & Van Loan, sec. 5.4).
constexpr double kRankToleranceFactor = 10.0;

}  // namespace

LinearFit SolveWeightedLeastSquares(const Eigen::MatrixXd& design, const Eigen::VectorXd& y,
                                    const Eigen::VectorXd& weights) {
  LinearFit out;
  std::ostringstream text;
  const Eigen::Index n = design.rows();
  const Eigen::Index p = design.cols();
  if (y.size() != n || (weights.size() != 0 && weights.size() != n)) {
    out.status = SignalStatus::kSizeMismatch;
    text << "design has " << n << " rows, y " << y.size() << " values, weights " << weights.size()
         << ": expected equal lengths (weights may be empty)";
    out.message = text.str();
    return out;
  }
  for (Eigen::Index i = 0; i < n; ++i) {
    const bool bad_weight =
        weights.size() != 0 && !(std::isfinite(weights[i]) && weights[i] >= 0.0);
    if (!std::isfinite(y[i]) || !design.row(i).allFinite() || bad_weight) {
      out.status = SignalStatus::kNonFinite;
      text << "row " << i << ": y, design and weight must be finite (weight >= 0)";
      out.message = text.str();
      return out;
    }
  }
  Eigen::Index num_used = 0;
  for (Eigen::Index i = 0; i < n; ++i) num_used += (weights.size() == 0 || weights[i] > 0.0);
  if (num_used < p || p == 0) {
    out.status = SignalStatus::kTooFewPoints;
    text << num_used << " rows with positive weight: need at least " << std::max<Eigen::Index>(p, 1)
         << " for " << p << " coefficients";
    out.message = text.str();
    return out;
  }
  Eigen::MatrixXd scaled(num_used, p);
  Eigen::VectorXd target(num_used);
  for (Eigen::Index i = 0, row = 0; i < n; ++i) {
    const double w = weights.size() == 0 ? 1.0 : weights[i];
    if (!(w > 0.0)) continue;
    const double root = std::sqrt(w);
    scaled.row(row) = root * design.row(i);
    target[row] = root * y[i];
    ++row;
  }
  Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(scaled);
  qr.setThreshold(kRankToleranceFactor * std::numeric_limits<double>::epsilon() *
                  static_cast<double>(std::max(num_used, p)));
  out.rank = static_cast<int>(qr.rank());
  if (qr.rank() < p) {
    out.status = SignalStatus::kRankDeficient;
    text << "the design matrix has rank " << qr.rank() << " < " << p
         << " columns: the coefficients are not determined by these points";
    out.message = text.str();
    return out;
  }
  out.coefficients = qr.solve(target);
  out.rss = (scaled * out.coefficients - target).squaredNorm();
  out.dof = static_cast<int>(num_used - p);
  // (A^T W A)^-1 = P R^-1 R^-T P^T.
  const Eigen::MatrixXd r = qr.matrixR().topLeftCorner(p, p).triangularView<Eigen::Upper>();
  const Eigen::MatrixXd r_inverse =
      r.triangularView<Eigen::Upper>().solve(Eigen::MatrixXd::Identity(p, p));
  const Eigen::MatrixXd unpermuted = qr.colsPermutation() * r_inverse;
  out.covariance = unpermuted * unpermuted.transpose();
  return out;
}

LineFit FitLine(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                const Eigen::VectorXd& weights) {
  LineFit out;
  if (x.size() != y.size()) {
    out.status = SignalStatus::kSizeMismatch;
    out.message =
        "x has " + std::to_string(x.size()) + " values but y has " + std::to_string(y.size());
    return out;
  }
  // Centring x keeps the two columns well conditioned for x far from zero.
  double x_center = 0.0, weight_sum = 0.0;
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    const double w = weights.size() == x.size() ? weights[i] : 1.0;
    if (std::isfinite(x[i]) && std::isfinite(w) && w > 0.0) {
      x_center += w * x[i];
      weight_sum += w;
    }
  }
  x_center = weight_sum > 0.0 ? x_center / weight_sum : 0.0;
  Eigen::MatrixXd design(x.size(), 2);
  design.col(0).setOnes();
  design.col(1) = x.array() - x_center;
  const LinearFit fit = SolveWeightedLeastSquares(design, y, weights);
  out.status = fit.status;
  out.message = fit.message;
  if (fit.status == SignalStatus::kRankDeficient) {
    out.status = SignalStatus::kAllXEqual;
    out.message = "all x with positive weight are equal: a line through them has no slope";
  }
  if (!out.IsOk()) return out;
  out.num_points = fit.dof + 2;
  out.slope = fit.coefficients[1];
  out.intercept = fit.coefficients[0] - out.slope * x_center;
  out.rss = fit.rss;
  const double residual_variance = fit.dof > 0 ? fit.rss / fit.dof : 0.0;
  // Var(intercept) at x = 0 = Var(a) + x_c^2 Var(b) - 2 x_c Cov(a, b).
  const Eigen::MatrixXd& c = fit.covariance;
  out.slope_stderr = std::sqrt(residual_variance * c(1, 1));
  out.intercept_stderr =
      std::sqrt(std::max(0.0, residual_variance * (c(0, 0) + x_center * x_center * c(1, 1) -
                                                   2.0 * x_center * c(0, 1))));
  return out;
}

}  // namespace signal
}  // namespace foothold
