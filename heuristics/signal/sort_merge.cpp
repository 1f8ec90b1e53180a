#include "heuristics/signal/sort_merge.h"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <sstream>
#include <vector>

namespace foothold {
namespace signal {
namespace {

constexpr double kMaxRelativeXTolerance = 0.01;

bool IsFinitePoint(const Eigen::VectorXd& x, const Eigen::VectorXd& y, const Eigen::VectorXd& sigma,
                   Eigen::Index i) {
  if (!std::isfinite(x[i]) || !std::isfinite(y[i])) return false;
  return sigma.size() == 0 || std::isfinite(sigma[i]);
}

// Sorted x whose neighbours are all more than `tolerance` apart: no run to merge.
bool HasNoCloseNeighbours(const Eigen::VectorXd& x, double tolerance) {
  for (Eigen::Index i = 1; i < x.size(); ++i) {
    if (!(x[i] - x[i - 1] > tolerance)) return false;
  }
  return true;
}

}  // namespace

bool SortMergeOptions::Validate(std::string* error) const {
  std::ostringstream text;
  if (!(relative_x_tolerance >= 0.0 && relative_x_tolerance < kMaxRelativeXTolerance)) {
    text << "relative_x_tolerance = " << relative_x_tolerance << ": must be >= 0 and < "
         << kMaxRelativeXTolerance;
  } else if (min_points < 1) {
    text << "min_points = " << min_points << ": must be >= 1";
  }
  if (text.tellp() == 0) return true;
  if (error) *error = text.str();
  return false;
}

PreparedCurve SortAndMerge(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                           const Eigen::VectorXd& sigma, const SortMergeOptions& options) {
  PreparedCurve out;
  out.num_input_points = static_cast<int>(x.size());
  std::ostringstream text;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  if (y.size() != x.size() || (sigma.size() != 0 && sigma.size() != x.size())) {
    out.status = SignalStatus::kSizeMismatch;
    text << "x has " << x.size() << " values, y " << y.size() << ", sigma " << sigma.size()
         << ": expected equal lengths (sigma may be empty)";
    out.message = text.str();
    return out;
  }
  const bool has_sigma = sigma.size() != 0;
  std::vector<Eigen::Index> order;
  order.reserve(static_cast<size_t>(x.size()));
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    if (!IsFinitePoint(x, y, sigma, i)) {
      if (options.drop_non_finite) {
        ++out.num_dropped;
        continue;
      }
      out.status = SignalStatus::kNonFinite;
      text << "point " << i << " is (x = " << x[i] << ", y = " << y[i];
      if (has_sigma) text << ", sigma = " << sigma[i];
      text << "): expected finite numbers";
      out.message = text.str();
      return out;
    }
    if (has_sigma && !(sigma[i] > 0.0)) {
      out.status = SignalStatus::kInvalidSigma;
      text << "sigma[" << i << "] = " << sigma[i] << ": must be > 0";
      out.message = text.str();
      return out;
    }
    order.push_back(i);
  }
  // Measured series usually arrive sorted; a stable sort leaves them as they are, so the
  // O(n log n) sort runs only when a pair is out of order.
  const auto is_before = [&x](Eigen::Index a, Eigen::Index b) { return x[a] < x[b]; };
  const bool was_sorted = std::is_sorted(order.begin(), order.end(), is_before);
  if (!was_sorted) std::stable_sort(order.begin(), order.end(), is_before);

  const double span = order.empty() ? 0.0 : x[order.back()] - x[order.front()];
  const double tolerance = options.relative_x_tolerance * span;
  if (was_sorted && order.size() == static_cast<size_t>(x.size()) && x.size() > 1 &&
      HasNoCloseNeighbours(x, tolerance)) {
    // Nothing to reorder or merge: the input is the output.
    out.x = x;
    out.y = y;
    if (has_sigma) out.sigma = sigma;
    out.multiplicity = Eigen::VectorXi::Ones(x.size());
    if (x.size() < options.min_points) {
      out.status = SignalStatus::kTooFewPoints;
      text << x.size() << " distinct x values: need at least " << options.min_points;
      out.message = text.str();
    }
    return out;
  }
  std::vector<double> merged_x, merged_y, merged_sigma;
  std::vector<int> counts;
  merged_x.reserve(order.size());
  merged_y.reserve(order.size());
  counts.reserve(order.size());
  if (has_sigma) merged_sigma.reserve(order.size());
  for (size_t start = 0; start < order.size();) {
    size_t end = start + 1;
    while (end < order.size() && x[order[end]] - x[order[start]] <= tolerance) ++end;
    double sum_x = 0.0, sum_wy = 0.0, sum_w = 0.0;
    for (size_t k = start; k < end; ++k) {
      const Eigen::Index i = order[k];
      // Inverse-variance weights give the minimum-variance mean of the run.
      const double weight = has_sigma ? 1.0 / (sigma[i] * sigma[i]) : 1.0;
      sum_x += x[i];
      sum_wy += weight * y[i];
      sum_w += weight;
    }
    const double count = static_cast<double>(end - start);
    merged_x.push_back(sum_x / count);
    merged_y.push_back(sum_wy / sum_w);
    if (has_sigma) merged_sigma.push_back(1.0 / std::sqrt(sum_w));
    counts.push_back(static_cast<int>(end - start));
    start = end;
  }

  const Eigen::Index m = static_cast<Eigen::Index>(merged_x.size());
  out.x = Eigen::Map<Eigen::VectorXd>(merged_x.data(), m);
  out.y = Eigen::Map<Eigen::VectorXd>(merged_y.data(), m);
  if (has_sigma) out.sigma = Eigen::Map<Eigen::VectorXd>(merged_sigma.data(), m);
  out.multiplicity = Eigen::Map<Eigen::VectorXi>(counts.data(), m);
  out.num_merged = static_cast<int>(order.size()) - static_cast<int>(m);

  if (m == 1 && order.size() > 1) {
    out.status = SignalStatus::kAllXEqual;
    text << "all " << order.size() << " points have x = " << merged_x[0]
         << ": the curve has no extent";
  } else if (m < options.min_points) {
    out.status = SignalStatus::kTooFewPoints;
    text << m << " distinct x values";
    if (out.num_dropped > 0) text << " after dropping " << out.num_dropped << " non-finite";
    text << ": need at least " << options.min_points;
  }
  out.message = text.str();
  return out;
}

}  // namespace signal
}  // namespace foothold
