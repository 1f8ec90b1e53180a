#include "engine/stats/internal/covariance.h"

#include <Eigen/SVD>
#include <cmath>
#include <limits>

namespace foothold {
namespace internal {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kInf = std::numeric_limits<double>::infinity();

// Unit column norms; a zero column keeps scale 1 so that it stays an exact null direction.
Eigen::VectorXd ColumnScales(const Eigen::MatrixXd& jacobian) {
  Eigen::VectorXd scales = jacobian.colwise().norm().transpose();
  for (Eigen::Index j = 0; j < scales.size(); ++j) {
    if (!(scales[j] > 0)) scales[j] = 1;
  }
  return scales;
}

}  // namespace

SvdCovariance ComputeSvdCovariance(const Eigen::MatrixXd& weighted_jacobian,
                                   double rank_tolerance) {
  const Eigen::Index m = weighted_jacobian.cols();
  SvdCovariance result;
  result.covariance = Eigen::MatrixXd::Zero(m, m);
  result.singular_values = Eigen::VectorXd::Zero(m);
  result.is_unidentifiable.assign(static_cast<size_t>(m), false);
  if (m == 0) {
    result.condition_number = kNaN;
    result.identifiable_condition_number = kNaN;
    return result;
  }

  const Eigen::VectorXd scales = ColumnScales(weighted_jacobian);
  const Eigen::MatrixXd scaled = weighted_jacobian * scales.cwiseInverse().asDiagonal();

  // Full V so that the null space is complete even when there are fewer rows than columns.
  Eigen::MatrixXd v = Eigen::MatrixXd::Identity(m, m);
  if (scaled.rows() > 0) {
    Eigen::JacobiSVD<Eigen::MatrixXd> svd(scaled, Eigen::ComputeFullV);
    const Eigen::VectorXd& s = svd.singularValues();
    result.singular_values.head(s.size()) = s;
    v = svd.matrixV();
  }

  const Eigen::VectorXd& s = result.singular_values;
  const double threshold = rank_tolerance * s[0];
  while (result.rank < m && s[result.rank] > threshold && s[result.rank] > 0) ++result.rank;
  const int rank = result.rank;

  // cov_scaled = V_r S_r^-2 V_r^T; then undo the column scaling: cov = D^-1 cov_scaled D^-1.
  const Eigen::MatrixXd v_r = v.leftCols(rank);
  const Eigen::VectorXd inverse_squares = s.head(rank).array().square().inverse();
  const Eigen::MatrixXd scaled_covariance = v_r * inverse_squares.asDiagonal() * v_r.transpose();
  const Eigen::VectorXd inverse_scales = scales.cwiseInverse();
  result.covariance = inverse_scales.asDiagonal() * scaled_covariance * inverse_scales.asDiagonal();

  // A parameter is identifiable when e_j lies in the row space, i.e. when its row of the
  // null-space basis V_0 vanishes; then (J^T J)^+ gives its true variance.
  if (rank < m) {
    const Eigen::MatrixXd null_basis = v.rightCols(m - rank);
    for (Eigen::Index j = 0; j < m; ++j) {
      result.is_unidentifiable[j] = null_basis.row(j).norm() > kNullComponentThreshold;
    }
  }

  result.condition_number = rank < m ? kInf : s[0] / s[m - 1];
  result.identifiable_condition_number = rank > 0 ? s[0] / s[rank - 1] : kNaN;
  return result;
}

}  // namespace internal
}  // namespace foothold
