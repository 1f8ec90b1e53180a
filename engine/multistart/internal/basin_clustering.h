#pragma once
// Grouping converged end points into basins, modulo the model's permutation symmetries.

#include <Eigen/Core>
#include <functional>
#include <vector>

#include "engine/model/model.h"

namespace foothold {
namespace internal {

// The canonical representative of `params` modulo `symmetries`: for each symmetry in turn,
// its members are stably sorted by the parameter at sort_position (peaks by center), ties
// keeping their order. Two points that differ by a permutation of members map to the same
// canonical point.
Eigen::VectorXd Canonicalize(const Eigen::VectorXd& params,
                             const std::vector<PermutationSymmetry>& symmetries);

struct BasinTolerances {
  double cost_relative = 1e-6;
  double cost_absolute = 0;  // added to the relative part (exact fits)
  double stderr_multiple = 3;
  double parameter_relative = 1e-4;
  Eigen::VectorXd parameter_scale;  // size p, >= 0: the box width per parameter
  std::vector<bool> is_free;        // size p: only free parameters are compared
};

// A converged end point, canonicalised.
struct EndPoint {
  int start_index = 0;
  double rss = 0;
  Eigen::VectorXd canonical;
};

struct Cluster {
  int leader = 0;            // position in the end-point vector (lowest rss of the cluster)
  std::vector<int> members;  // positions, the leader first, then increasing (rss, start)
};

// Leader clustering in increasing (rss, start index) order: each point joins the first
// existing cluster whose leader it matches (same cost within tolerance and every free
// parameter within tolerance), otherwise it leads a new cluster. Clusters come out best
// first. `leader_errors(position)` gives the standard errors at a leader (size p, NaN where
// unavailable); it is called once per new leader, in order, from the calling thread.
std::vector<Cluster> ClusterEndPoints(
    const std::vector<EndPoint>& points, const BasinTolerances& tolerances,
    const std::function<Eigen::VectorXd(int position)>& leader_errors);

// True when `point` belongs with `leader` (exposed for the tests).
bool SameBasin(const EndPoint& leader, const Eigen::VectorXd& leader_errors, const EndPoint& point,
               const BasinTolerances& tolerances);

}  // namespace internal
}  // namespace foothold
