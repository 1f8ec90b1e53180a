#pragma once
// Profiles over the nonlinear parameters of a family, with the linear ones solved at each
// point (variable projection on a grid, or along a pattern search).

#include <Eigen/Core>
#include <limits>
#include <vector>

#include "heuristics/families/guess_common.h"

namespace foothold {
namespace guess {

// Of `starts`, the one with the lowest rss on `curve` once its linear parameters are solved
// there (a profile over the nonlinear ones). False when none is finite.
bool BestOnCurve(const CandidateSet& set, const Curve& curve,
                 const std::vector<Eigen::VectorXd>& starts, Eigen::VectorXd* best);

// Compass (pattern) search of the nonlinear parameters `free` of *parameters on `curve`,
// the linear ones solved at every trial: each step tries +-step_j, grows a step that
// helps by 2 and halves one that does not, for at most max_evaluations trials. Steps of
// parameters flagged multiplicative scale the value by exp(+-step) instead. Used where a
// grid leaves the start in a long, curved valley. Multiplicative parameters are kept >=
// min_positive and <= max_positive in magnitude (e.g. lifetimes the data can resolve).
void PolishProfile(const CandidateSet& set, const Curve& curve, const std::vector<int>& free,
                   std::vector<double> steps, const std::vector<bool>& multiplicative,
                   int max_evaluations, Eigen::VectorXd* parameters, double min_positive = 0.0,
                   double max_positive = std::numeric_limits<double>::infinity());

// Single exponential a*exp(-x/tau) (+ c when with_offset) by a profile over tau in
// [tau_lo, tau_hi] (log grid, then a golden refinement), amplitude and offset by weighted
// linear least squares. False when nothing finite was found.
struct ExpProfile {
  double tau = 0;
  double amplitude = 0;
  double offset = 0;
  double rss = 0;
};
bool ProfileExponential(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                        const Eigen::VectorXd& weight, bool with_offset, double tau_lo,
                        double tau_hi, ExpProfile* out);

}  // namespace guess
}  // namespace foothold
