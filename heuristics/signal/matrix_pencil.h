#pragma once
// Sums of exponentials by the matrix-pencil method (Hua & Sarkar 1990, IEEE Trans. ASSP 38,
// 814): y(x) ~ sum_m a_m exp(-r_m x) (+ c).
//
// On an even grid y_j = y(x_0 + j D), each term is a_m' z_m^j with pole z_m = exp(-r_m D).
// The rows of the Hankel matrix Y (N - L rows, L + 1 columns, Y_ij = y_{i+j}) lie in the span
// of (1, z_m, ..., z_m^L); the M leading right singular vectors V of Y span the same space, and
// with V1 = V without its last row, V2 = V without its first row, the eigenvalues of
// pinv(V1) V2 are the poles (the shift invariance of that span). Truncating to M singular
// vectors is what filters the noise. A constant offset is one more pole at z = 1.
// Rates are r_m = -ln(z_m) / D; the amplitudes (and the offset) then come from weighted
// linear least squares on the original points, not the resampled ones.
//
// Uneven x is first resampled by linear interpolation onto an even grid of n points. More
// than max_samples points are reduced first: even x by means of m = ceil(n / max_samples)
// consecutive points, uneven x by means over max_samples equal bins (a box average keeps
// each pole and only rescales its amplitude, which is refitted anyway).

#include <Eigen/Core>
#include <string>
#include <vector>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

struct MatrixPencilOptions {
  // Number of decaying exponentials k. 1..8; default 1.
  int num_exponentials = 1;
  // Also fit a constant offset (an extra pole at z = 1). Default false.
  bool fit_offset = false;
  // Pencil parameter L as a share of the samples N; Hua & Sarkar recommend N/3 to N/2 for the
  // least noise sensitivity. In [0.2, 0.5]; default 1/3.
  double pencil_fraction = 1.0 / 3.0;
  // Cap on the grid the pencil uses (the SVD costs O(N^3)). >= 16; default 1000.
  int max_samples = 1000;
  // Spacings within this relative distance of the median count as even. In [0, 0.1);
  // default 1e-6.
  double even_tolerance = 1e-6;
  // A pole whose argument exceeds this (radians) is complex: an oscillation, not a decay.
  // In [0, pi); default 1e-6.
  double max_pole_angle = 1e-6;

  bool Validate(std::string* error) const;
};

struct ExponentialTerm {
  double rate = 0.0;       // r > 0, per x unit (tau = 1 / r)
  double amplitude = 0.0;  // a, the term's value at x = 0
};

struct ExponentialSum {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  std::vector<ExponentialTerm> terms;  // slowest (smallest rate) first
  double offset = 0.0;                 // c (0 unless fit_offset)
  double rss = 0.0;                    // on the original points
  bool was_resampled = false;
  int num_samples = 0;          // N, the even grid the pencil used
  double sample_spacing = 0.0;  // D
  // Leading singular values of the Hankel matrix, largest first (at most 10): a sharp drop
  // after the k-th says the data hold k terms.
  Eigen::VectorXd singular_values;
  // All poles found (real and imaginary parts), before classification.
  Eigen::VectorXd pole_real;
  Eigen::VectorXd pole_imag;

  bool IsOk() const { return status == SignalStatus::kOk; }
};

// x strictly increasing (SortAndMerge), at least 2 M + 2 points for M poles, y not constant.
ExponentialSum FitExponentialSum(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                                 const MatrixPencilOptions& options = MatrixPencilOptions());

}  // namespace signal
}  // namespace foothold
