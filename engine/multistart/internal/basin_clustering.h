#pragma once
// Grouping converged end points into basins, modulo the model's symmetries, with a
// same-curve fall-back for equivalences no model declares.

#include <Eigen/Core>
#include <functional>
#include <vector>

#include "engine/model/model.h"
#include "engine/solve/problem.h"

namespace foothold {
namespace internal {

// The canonical representative of `params` modulo `symmetries`: for each symmetry in turn,
// its members are stably sorted by the parameter at sort_position (peaks by center), ties
// keeping their order. Two points that differ by a permutation of members map to the same
// canonical point.
Eigen::VectorXd Canonicalize(const Eigen::VectorXd& params,
                             const std::vector<PermutationSymmetry>& symmetries);

// The canonical representative of `params` for `problem`: first the model's own canonical
// form (Model::CanonicalizeParameters inside the problem's bounds, fixed parameters held at
// their values), then the permutation order of its symmetries as above.
Eigen::VectorXd Canonicalize(const Problem& problem, const Eigen::VectorXd& params);

// The weighted model values W f(x_i; params) at the data points, the quantity whose
// distance SameCurve measures; empty when the model is not finite there.
Eigen::VectorXd WeightedCurve(const Problem& problem, const Eigen::VectorXd& params);

struct BasinTolerances {
  double cost_relative = 1e-6;
  double cost_absolute = 0;  // added to the relative part (exact fits)
  double stderr_multiple = 3;
  double parameter_relative = 1e-4;
  Eigen::VectorXd parameter_scale;  // size p, >= 0: the box width per parameter
  std::vector<bool> is_free;        // size p: only free parameters are compared
  // Same-curve merge: two end points of equal cost (as above) whose weighted curves agree
  // at every data point within curve_relative * sqrt(max(rss, cost_absolute) / n), the
  // noise scale of the fit, are one basin whatever their parameters. 0 switches it off.
  double curve_relative = 0.05;
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

// As above, and a point that matches a leader's parameters or, failing that, its curve
// (SameCurve) joins it: end points that predict the same values at every data point count
// as one basin, the lowest-rss one (ties: the lowest start index) representing it.
// `curves(position)` gives WeightedCurve at that end point; it is called lazily, at most
// once per position, in order, from the calling thread.
std::vector<Cluster> ClusterEndPoints(
    const std::vector<EndPoint>& points, const BasinTolerances& tolerances,
    const std::function<Eigen::VectorXd(int position)>& leader_errors,
    const std::function<Eigen::VectorXd(int position)>& curves);

// True when the two end points have equal cost and their weighted curves (non-empty, of
// equal size) agree within the tolerance (exposed for the tests).
bool SameCurve(const EndPoint& leader, const Eigen::VectorXd& leader_curve, const EndPoint& point,
               const Eigen::VectorXd& point_curve, const BasinTolerances& tolerances);

// True when `point` belongs with `leader` (exposed for the tests).
bool SameBasin(const EndPoint& leader, const Eigen::VectorXd& leader_errors, const EndPoint& point,
               const BasinTolerances& tolerances);

}  // namespace internal
}  // namespace foothold
