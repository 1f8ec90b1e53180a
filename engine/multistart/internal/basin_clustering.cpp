#include "engine/multistart/internal/basin_clustering.h"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <limits>
#include <numeric>

namespace foothold {
namespace internal {
namespace {

// Members of equal length, sort_position inside a member, indices inside the vector.
[[maybe_unused]] bool SymmetryFits(const PermutationSymmetry& symmetry,
                                   Eigen::Index num_parameters) {
  for (const std::vector<int>& member : symmetry.members) {
    if (member.size() != symmetry.members.front().size()) return false;
    if (symmetry.sort_position < 0 || symmetry.sort_position >= static_cast<int>(member.size())) {
      return false;
    }
    for (int index : member) {
      if (index < 0 || index >= num_parameters) return false;
    }
  }
  return true;
}

bool SameCost(const EndPoint& leader, const EndPoint& point, const BasinTolerances& tolerances) {
  const double cost_gap = std::abs(point.rss - leader.rss);
  const double cost_limit =
      tolerances.cost_relative * std::max(point.rss, leader.rss) + tolerances.cost_absolute;
  return cost_gap <= cost_limit;
}

}  // namespace

Eigen::VectorXd Canonicalize(const Eigen::VectorXd& params,
                             const std::vector<PermutationSymmetry>& symmetries) {
  Eigen::VectorXd canonical = params;
  for (const PermutationSymmetry& symmetry : symmetries) {
    const int num_members = static_cast<int>(symmetry.members.size());
    if (num_members < 2) continue;
    // A symmetry that names parameters the model does not have is a broken invariant.
    assert(SymmetryFits(symmetry, params.size()));
    const Eigen::VectorXd current = canonical;
    std::vector<int> order(num_members);
    std::iota(order.begin(), order.end(), 0);
    auto key = [&](int g) { return current[symmetry.members[g][symmetry.sort_position]]; };
    std::stable_sort(order.begin(), order.end(), [&](int a, int b) {
      // NaN sorts last so the order stays a strict weak ordering.
      const double ka = key(a);
      const double kb = key(b);
      if (std::isnan(ka)) return false;
      if (std::isnan(kb)) return true;
      return ka < kb;
    });
    for (int slot = 0; slot < num_members; ++slot) {
      const std::vector<int>& target = symmetry.members[slot];
      const std::vector<int>& source = symmetry.members[order[slot]];
      assert(target.size() == source.size());
      for (size_t k = 0; k < target.size(); ++k) canonical[target[k]] = current[source[k]];
    }
  }
  return canonical;
}

Eigen::VectorXd Canonicalize(const Problem& problem, const Eigen::VectorXd& params) {
  const int p = problem.NumParameters();
  assert(params.size() == p);
  Eigen::VectorXd canonical = params;
  Eigen::VectorXd lower(p);
  Eigen::VectorXd upper(p);
  for (int j = 0; j < p; ++j) {
    // A fixed parameter may not move: its bounds collapse onto its value.
    lower[j] = problem.IsFixed(j) ? params[j] : problem.Lower(j);
    upper[j] = problem.IsFixed(j) ? params[j] : problem.Upper(j);
  }
  problem.model->CanonicalizeParameters(canonical.data(), lower.data(), upper.data());
  // The hook must keep the point inside the bounds; if a model breaks that rule the raw
  // point is kept, so that basins never report parameters outside the problem.
  for (int j = 0; j < p; ++j) {
    const bool moved_bad = !(canonical[j] >= lower[j] && canonical[j] <= upper[j]) &&
                           (params[j] >= lower[j] && params[j] <= upper[j]);
    if (moved_bad || (std::isfinite(params[j]) && !std::isfinite(canonical[j]))) {
      canonical = params;
      break;
    }
  }
  return Canonicalize(canonical, problem.model->Symmetries());
}

Eigen::VectorXd WeightedCurve(const Problem& problem, const Eigen::VectorXd& params) {
  const Eigen::Index n = problem.data.NumPoints();
  Eigen::VectorXd values = Eigen::VectorXd::Constant(n, std::numeric_limits<double>::quiet_NaN());
  problem.model->Evaluate(problem.data.predictors, params.data(), values.data());
  if (problem.data.HasSigma()) values.array() /= problem.data.sigma.array();
  if (!values.allFinite()) return Eigen::VectorXd();
  return values;
}

bool SameBasin(const EndPoint& leader, const Eigen::VectorXd& leader_errors, const EndPoint& point,
               const BasinTolerances& tolerances) {
  if (!SameCost(leader, point, tolerances)) return false;
  for (Eigen::Index j = 0; j < point.canonical.size(); ++j) {
    if (!tolerances.is_free.empty() && !tolerances.is_free[j]) continue;
    const double a = leader.canonical[j];
    const double b = point.canonical[j];
    const double scale = tolerances.parameter_scale.size() ? tolerances.parameter_scale[j] : 0;
    double limit = tolerances.parameter_relative * std::max({std::abs(a), std::abs(b), scale});
    const double error = leader_errors.size() ? leader_errors[j] : std::nan("");
    if (std::isfinite(error) && error > 0) {
      limit = std::max(limit, tolerances.stderr_multiple * error);
    }
    if (!(std::abs(a - b) <= limit)) return false;
  }
  return true;
}

bool SameCurve(const EndPoint& leader, const Eigen::VectorXd& leader_curve, const EndPoint& point,
               const Eigen::VectorXd& point_curve, const BasinTolerances& tolerances) {
  const Eigen::Index n = leader_curve.size();
  if (!(tolerances.curve_relative > 0) || n == 0 || point_curve.size() != n) return false;
  if (!SameCost(leader, point, tolerances)) return false;
  // The noise scale of the fit, floored like the cost so that exact fits compare equal.
  const double rss = std::max({leader.rss, point.rss, tolerances.cost_absolute});
  const double limit = tolerances.curve_relative * std::sqrt(rss / static_cast<double>(n));
  return (leader_curve - point_curve).cwiseAbs().maxCoeff() <= limit;
}

std::vector<Cluster> ClusterEndPoints(
    const std::vector<EndPoint>& points, const BasinTolerances& tolerances,
    const std::function<Eigen::VectorXd(int position)>& leader_errors) {
  return ClusterEndPoints(points, tolerances, leader_errors, nullptr);
}

std::vector<Cluster> ClusterEndPoints(
    const std::vector<EndPoint>& points, const BasinTolerances& tolerances,
    const std::function<Eigen::VectorXd(int position)>& leader_errors,
    const std::function<Eigen::VectorXd(int position)>& curves) {
  std::vector<int> order(points.size());
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](int a, int b) {
    if (points[a].rss != points[b].rss) return points[a].rss < points[b].rss;
    return points[a].start_index < points[b].start_index;
  });
  // Curves are computed on first use and kept for this call.
  std::vector<Eigen::VectorXd> curve_cache(points.size());
  std::vector<bool> has_curve(points.size(), false);
  auto curve_of = [&](int position) -> const Eigen::VectorXd& {
    if (!has_curve[position]) {
      curve_cache[position] = curves(position);
      has_curve[position] = true;
    }
    return curve_cache[position];
  };
  std::vector<Cluster> clusters;
  std::vector<Eigen::VectorXd> errors;
  std::vector<double> leader_rss;  // increasing, since points arrive in increasing rss
  for (int position : order) {
    // Points arrive in increasing rss, so a leader can match only if its rss is at least
    // rss - (cost_relative * rss + cost_absolute); earlier leaders are skipped by bisection.
    const double rss = points[position].rss;
    const double lowest = rss - (tolerances.cost_relative * rss + tolerances.cost_absolute);
    size_t c = std::lower_bound(leader_rss.begin(), leader_rss.end(), lowest) - leader_rss.begin();
    bool joined = false;
    for (; c < clusters.size() && !joined; ++c) {
      const int leader = clusters[c].leader;
      joined = SameBasin(points[leader], errors[c], points[position], tolerances) ||
               (curves && SameCost(points[leader], points[position], tolerances) &&
                SameCurve(points[leader], curve_of(leader), points[position], curve_of(position),
                          tolerances));
      if (joined) clusters[c].members.push_back(position);
    }
    if (joined) continue;
    clusters.push_back(Cluster{position, {position}});
    errors.push_back(leader_errors(position));
    leader_rss.push_back(rss);
  }
  return clusters;
}

}  // namespace internal
}  // namespace foothold
