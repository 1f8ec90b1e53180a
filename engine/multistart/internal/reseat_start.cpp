#include "engine/multistart/internal/reseat_start.h"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <vector>

namespace foothold {
namespace internal {
namespace {

// The running mean spans n / kSmoothingDivisor points (at least kMinWindow): wide enough
// that noise does not pick the spot, narrow enough to keep two nearby features apart.
constexpr int kSmoothingDivisor = 40;
constexpr int kMinWindow = 3;
// Standard deviation of the move of the member's other nonlinear parameters, in units of
// the box's (transformed) width.
constexpr double kWidthSpread = 0.1;

}  // namespace

bool FindReseatSymmetry(const Problem& problem, PermutationSymmetry* symmetry) {
  if (problem.data.predictors.cols() != 1) return false;
  for (const PermutationSymmetry& candidate : problem.model->Symmetries()) {
    if (candidate.location_position < 0 || candidate.members.size() < 2) continue;
    bool all_free = true;
    for (const std::vector<int>& member : candidate.members) {
      all_free = all_free && !problem.IsFixed(member[candidate.location_position]);
    }
    if (!all_free) continue;
    *symmetry = candidate;
    return true;
  }
  return false;
}

Eigen::VectorXd ReseatStart(const Problem& problem, const Model& model, const ResolvedBox& box,
                            const PermutationSymmetry& symmetry, const Eigen::VectorXd& center,
                            RandomStream* stream) {
  const Dataset& data = problem.data;
  const int n = data.NumPoints();
  Eigen::VectorXd curve(n);
  model.Evaluate(data.predictors, center.data(), curve.data());
  Eigen::VectorXd residual = data.response - curve;
  if (data.HasSigma()) residual = residual.cwiseQuotient(data.sigma);

  std::vector<int> order(n);
  std::iota(order.begin(), order.end(), 0);
  const Eigen::VectorXd x = data.predictors.col(0);
  std::stable_sort(order.begin(), order.end(), [&](int a, int b) { return x[a] < x[b]; });
  const int half = std::max(kMinWindow, n / kSmoothingDivisor) / 2;
  // Prefix sums over the sorted residuals give every window's mean in O(n).
  std::vector<double> prefix(n + 1, 0.0);
  for (int k = 0; k < n; ++k) prefix[k + 1] = prefix[k] + residual[order[k]];
  std::vector<double> weight(n);
  double total = 0;
  for (int k = 0; k < n; ++k) {
    const int from = std::max(0, k - half);
    const int to = std::min(n, k + half + 1);
    const double mean = (prefix[to] - prefix[from]) / (to - from);
    weight[k] = std::isfinite(mean) ? mean * mean : 0.0;
    total += weight[k];
  }
  if (!(total > 0) || !std::isfinite(total)) return center;

  double target = stream->NextUniform() * total;
  int chosen = n - 1;
  for (int k = 0; k < n; ++k) {
    target -= weight[k];
    if (target < 0) {
      chosen = k;
      break;
    }
  }
  const int num_members = static_cast<int>(symmetry.members.size());
  const int member =
      std::min(num_members - 1, static_cast<int>(stream->NextUniform() * num_members));
  Eigen::VectorXd start = center;
  const int j = symmetry.members[member][symmetry.location_position];
  start[j] = std::min(box.upper[j], std::max(box.lower[j], x[order[chosen]]));
  // The member's other nonlinear parameters (a width) move too: a peak that had grown wide
  // to cover two features must not keep that width at its new place.
  const std::vector<int> linear = model.LinearParameters();
  for (int position = 0; position < static_cast<int>(symmetry.members[member].size()); ++position) {
    const int k = symmetry.members[member][position];
    if (position == symmetry.location_position || problem.IsFixed(k) ||
        std::find(linear.begin(), linear.end(), k) != linear.end() || !(box.Width(k) > 0)) {
      continue;
    }
    const double unit = box.ToUnit(k, std::min(box.upper[k], std::max(box.lower[k], start[k])));
    const double moved = std::min(1.0, std::max(0.0, unit + kWidthSpread * stream->NextNormal()));
    start[k] = box.FromUnit(k, moved);
  }
  return start;
}

}  // namespace internal
}  // namespace foothold
