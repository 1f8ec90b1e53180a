#pragma once
// Profile-likelihood confidence intervals: for each free parameter, the values where the
// least-squares cost, minimised over the other free parameters, rises to a threshold above
// the optimum. Unlike the Wald intervals of fit_statistics.h they follow the curvature of
// the model and stop where the data stop constraining a parameter. docs/statistics.md gives
// the mathematics and its sources.

#include <Eigen/Core>
#include <limits>
#include <string>
#include <vector>

#include "engine/solve/levenberg_marquardt.h"
#include "engine/solve/problem.h"

namespace foothold {

// How one end of a profile interval was settled. The strings are what JSON carries.
enum class ProfileEnd {
  kCrossed,      // "crossed": the profile reached the threshold; the end is finite
  kBound,        // "bound": not reached within bounds; the end is +-inf
  kFlat,         // "flat": open, the profile flattens below the threshold; the end is +-inf
  kRefitFailed,  // "refit_failed": a re-optimisation did not converge; the end is +-inf
  kStopped,      // "stopped": cancelled or out of time before this end was settled
  kNotProfiled,  // "not_profiled": a fixed parameter, or no profile was computed
};
const char* ToString(ProfileEnd end);
bool ProfileEndFromString(const std::string& text, ProfileEnd* end);

// Which threshold the cost must cross.
enum class ProfileRule {
  kChiSquare,  // "chi_square": absolute sigma, S = S_min + chi2_{1,level}
  kFRatio,     // "f_ratio": estimated scale, S = S_min (1 + F_{1,dof,level} / dof)
};
const char* ToString(ProfileRule rule);

struct ProfileLikelihoodOptions {
  // Two-sided confidence level. Default 0.95. In (0, 1).
  double confidence_level = 0.95;
  // First trial distance from the optimum, in Wald half-widths of that side (where the
  // interval of a linear model ends exactly). Default 1. Finite and > 0.
  double initial_step = 1.0;
  // Each further outward trial is at most this many times as far from the optimum as the
  // previous one (less when the rise so far predicts the crossing nearer). Default 4. > 1.
  double max_step_growth = 4.0;
  // Outward trials per side before the side is declared flat. Default 16. >= 1.
  int max_bracket_steps = 16;
  // Re-optimisations of the root search per side once the crossing is bracketed.
  // Default 40. >= 1.
  int max_root_iterations = 40;
  // A crossing is accepted when |sqrt(S - S_min) - sqrt(dS)| <= this * sqrt(dS), dS the
  // allowed cost increase: about this relative error on the half-width. Default 1e-4.
  // In (0, 0.1].
  double crossing_tolerance = 1e-4;
  // A refit whose cost lies below S_min (1 - this) shows that the given point was not the
  // optimum; the summary reports it. Default 1e-9. In [0, 1).
  double lower_cost_tolerance = 1e-9;
  // Wall-clock limit for the whole profile in seconds; infinity means none. > 0.
  double deadline_seconds = std::numeric_limits<double>::infinity();
  // Solver settings of every re-optimisation (its callback cancels the profile).
  LevenbergMarquardtOptions refit;
  // Project out free, unbounded linear parameters in the refits. Default true.
  bool use_variable_projection = true;

  bool Validate(std::string* error) const;
};

struct ProfileInterval {
  bool is_profiled = false;  // false for a fixed parameter
  double lower = -std::numeric_limits<double>::infinity();
  double upper = std::numeric_limits<double>::infinity();
  ProfileEnd lower_end = ProfileEnd::kNotProfiled;
  ProfileEnd upper_end = ProfileEnd::kNotProfiled;
  int num_refits = 0;  // re-optimisations for both ends
  // How each end was settled, with its numbers ("lower: crossed at 2.31 after 3 refits; ...").
  std::string message;

  bool IsClosed() const {
    return lower_end == ProfileEnd::kCrossed && upper_end == ProfileEnd::kCrossed;
  }
};

struct ProfileLikelihoodSummary {
  // False when no profile could be computed (non-finite model at the optimum, no estimable
  // scale, invalid point); `message` says why and every interval is kNotProfiled.
  bool is_computed = false;
  std::string message;
  double confidence_level = 0.95;
  ProfileRule rule = ProfileRule::kChiSquare;
  double optimum_cost = 0;                 // S_min: the rss at the given optimum
  double cost_increase = 0;                // dS: the threshold is optimum_cost + cost_increase
  double threshold_cost = 0;               // optimum_cost + cost_increase
  std::vector<ProfileInterval> intervals;  // size p, parameter order
  int num_refits = 0;
  double total_seconds = 0;
  // A refit found a cost below S_min (1 - lower_cost_tolerance): the given point was not the
  // least-squares optimum, and the intervals are relative to the wrong minimum.
  bool found_lower_cost = false;
  double lowest_cost = std::numeric_limits<double>::quiet_NaN();
  Eigen::VectorXd lowest_cost_parameters;  // empty unless found_lower_cost

  std::string BriefReport() const;
};

// Profiles every free parameter of `problem` around `optimum` (size p, inside the bounds; a
// least-squares optimum). Each trial value of parameter j is held fixed while the other free
// parameters are re-optimised from the optimum of the neighbouring trial; the trials step
// outward from the optimum in Wald half-widths until the cost passes the threshold (or a
// bound, or the side proves flat), then a safeguarded secant search finds the crossing.
// Deterministic; never throws for a numerical outcome; never reports a non-finite end as a
// crossing. Options must pass Validate (a broken invariant otherwise).
ProfileLikelihoodSummary ComputeProfileLikelihood(const Problem& problem,
                                                  const Eigen::VectorXd& optimum,
                                                  const ProfileLikelihoodOptions& options = {});

}  // namespace foothold
