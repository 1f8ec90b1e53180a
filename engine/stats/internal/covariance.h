#pragma once
// The unscaled covariance (J^T J)^+ of the free parameters from an SVD of the weighted
// Jacobian, with rank deficiency detected rather than inverted into inf.

#include <Eigen/Core>
#include <vector>

namespace foothold {
namespace internal {

struct SvdCovariance {
  // m x m pseudo-inverse of J^T J in the parameters' own units (no variance scale applied).
  // Entries of unidentifiable parameters are meaningless here; the caller masks them.
  Eigen::MatrixXd covariance;
  // Singular values of the column-scaled Jacobian, descending, padded with zeros to m.
  Eigen::VectorXd singular_values;
  // Singular values above rank_tolerance * largest.
  int rank = 0;
  // is_unidentifiable[j]: column j has a significant component in a null direction.
  std::vector<bool> is_unidentifiable;
  // s_max / s_min of the column-scaled Jacobian; +inf when rank < m; NaN when m == 0.
  double condition_number = 0;
  // s_max / s_rank: the conditioning of the identifiable part; NaN when rank == 0.
  double identifiable_condition_number = 0;
};

// A parameter whose row of the null-space basis has norm above this is unidentifiable.
// Rounding leaves parameters outside a null direction near 1e-15, a real share is O(1).
constexpr double kNullComponentThreshold = 1e-6;

// `weighted_jacobian` is n x m (rows divided by sigma, free columns only) and finite.
// Each column is scaled to unit norm before the SVD, which removes the conditioning due
// to parameter units alone; the scaling is undone in `covariance`.
SvdCovariance ComputeSvdCovariance(const Eigen::MatrixXd& weighted_jacobian, double rank_tolerance);

}  // namespace internal
}  // namespace foothold
