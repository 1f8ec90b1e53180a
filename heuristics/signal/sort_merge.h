#pragma once
// Sorting by x and merging duplicate x: the first step before any other signal tool,
// all of which expect strictly increasing, finite x.

#include <Eigen/Core>
#include <string>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

struct SortMergeOptions {
  // Points whose x lie within relative_x_tolerance * (x span) of the first x of a run are
  // merged into one. Unitless, >= 0 and < 0.01; default 1e-12 (equal up to rounding).
  double relative_x_tolerance = 1e-12;
  // Drop points with a non-finite x, y or sigma (counted in num_dropped) instead of
  // failing with kNonFinite. Default false.
  bool drop_non_finite = false;
  // Fewer merged points than this gives kTooFewPoints. >= 1; default 3.
  int min_points = 3;

  bool Validate(std::string* error) const;
};

struct PreparedCurve {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  // Strictly increasing x; y and sigma merged. sigma is empty when none was given.
  // Filled for kTooFewPoints and kAllXEqual too, so a caller can look at what remains.
  Eigen::VectorXd x;
  Eigen::VectorXd y;
  Eigen::VectorXd sigma;
  // How many input points each output point stands for.
  Eigen::VectorXi multiplicity;
  int num_input_points = 0;
  int num_merged = 0;   // input points absorbed into another point (input - output - dropped)
  int num_dropped = 0;  // non-finite points removed (drop_non_finite only)

  bool IsOk() const { return status == SignalStatus::kOk; }
  int NumPoints() const { return static_cast<int>(x.size()); }
};

// Sorts by x (stable, so equal x keep their input order) and merges runs of equal x.
// Merged y is the mean, weighted by 1/sigma^2 when sigma is given; merged sigma is
// 1 / sqrt(sum 1/sigma_i^2), the standard error of that weighted mean. Merged x is the
// mean of the run. `sigma` may be empty.
PreparedCurve SortAndMerge(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                           const Eigen::VectorXd& sigma = Eigen::VectorXd(),
                           const SortMergeOptions& options = SortMergeOptions());

}  // namespace signal
}  // namespace foothold
