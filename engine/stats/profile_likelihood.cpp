#include "engine/stats/profile_likelihood.h"

#include <algorithm>
#include <boost/math/distributions/chi_squared.hpp>
#include <boost/math/distributions/fisher_f.hpp>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <sstream>

#include "engine/solve/local_fit.h"
#include "engine/stats/fit_statistics.h"
#include "engine/stats/internal/distributions.h"

namespace foothold {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kEpsilon = std::numeric_limits<double>::epsilon();
// The outward step never grows by less than this (unless max_step_growth is smaller), so a
// side reaches its limit in a bounded number of trials.
constexpr double kMinStepGrowth = 1.25;
// Aim this much beyond the crossing that the profile-t linearisation predicts, so that the
// next trial usually brackets it instead of falling just short.
constexpr double kOvershoot = 1.1;
// A failed outward refit is retried this many times, each halfway back to the last good one.
constexpr int kMaxFailureRetries = 4;
// Without a finite Wald half-width the steps start at this fraction of |estimate| (or at this
// value for an estimate of 0).
constexpr double kFallbackStep = 0.1;

using Clock = std::chrono::steady_clock;

void CheckInvariant(bool condition, const char* what) {
  if (condition) return;
  std::fprintf(stderr, "foothold: broken invariant in ComputeProfileLikelihood: %s\n", what);
  std::abort();
}

std::string Format(double value) {
  std::ostringstream text;
  text.precision(6);
  text << value;
  return text.str();
}

// One re-optimised point of the profile: parameter j held at `value`.
struct ProfilePoint {
  double value = kNaN;
  double cost = kNaN;
  // sqrt(max(S - S_min, 0)) - sqrt(dS): negative inside the interval, 0 at its end. Its root
  // is the root of S - S_min - dS, but it is linear in the parameter for a model linear in
  // its parameters (the profile t of Bates & Watts), so the secant search converges fast.
  double excess = kNaN;
  Eigen::VectorXd parameters;
};

enum class RefitOutcome { kConverged, kFailed, kStopped };

struct SideResult {
  double end = kNaN;
  ProfileEnd status = ProfileEnd::kNotProfiled;
  std::string note;
};

// Profiles one parameter: the problem with that parameter fixed, and the trial points.
class ParameterProfiler {
 public:
  ParameterProfiler(const Problem& problem, int j, const Eigen::VectorXd& optimum,
                    const ProfileLikelihoodOptions& options, const Clock::time_point& started,
                    ProfileLikelihoodSummary* summary)
      : fixed_(problem), j_(j), options_(options), started_(started), summary_(summary) {
    if (fixed_.is_fixed.empty()) fixed_.is_fixed.assign(problem.NumParameters(), false);
    fixed_.is_fixed[j] = true;
    local_.lm = options.refit;
    local_.use_variable_projection = options.use_variable_projection;
    root_increase_ = std::sqrt(summary->cost_increase);
    optimum_.value = optimum[j];
    optimum_.cost = summary->optimum_cost;
    optimum_.excess = -root_increase_;
    optimum_.parameters = optimum;
  }

  int num_refits() const { return num_refits_; }

  // direction +1 profiles the upper end, -1 the lower end; half_width is that side's Wald
  // half-width (NaN when the covariance does not give one).
  SideResult Side(int direction, double half_width) {
    SideResult result;
    const double estimate = optimum_.value;
    const double bound = direction > 0 ? fixed_.Upper(j_) : fixed_.Lower(j_);
    if (direction * (bound - estimate) <= 0) {
      result.status = ProfileEnd::kBound;
      result.note = "the estimate sits on the bound " + Format(bound);
      return result;
    }
    double distance = options_.initial_step * half_width;
    if (!(std::isfinite(distance) && distance > 0)) {
      distance = estimate != 0 ? kFallbackStep * std::abs(estimate) : kFallbackStep;
    }
    ProfilePoint inside = optimum_;
    int failures = 0;
    for (int step = 1; step <= options_.max_bracket_steps; ++step) {
      double value = estimate + direction * distance;
      const bool is_at_bound = direction * (value - bound) >= 0;
      if (is_at_bound) value = bound;
      ProfilePoint trial;
      const RefitOutcome outcome = Refit(value, inside.parameters, &trial);
      if (outcome == RefitOutcome::kStopped) return Stopped(value);
      if (outcome == RefitOutcome::kFailed) {
        if (++failures > kMaxFailureRetries) return Failed(value);
        distance = 0.5 * (distance + std::abs(inside.value - estimate));
        continue;
      }
      if (std::abs(trial.excess) <= options_.crossing_tolerance * root_increase_) {
        return Crossed(value);
      }
      if (trial.excess > 0) return SearchRoot(inside, trial);
      if (is_at_bound) {
        result.status = ProfileEnd::kBound;
        result.note = "not reached within bounds: at the bound " + Format(bound) +
                      " the rss rose by " + Format(trial.cost - optimum_.cost) + " of the " +
                      Format(summary_->cost_increase) + " needed";
        return result;
      }
      inside = trial;
      distance *= NextGrowth(trial);
    }
    result.status = ProfileEnd::kFlat;
    result.note = "open: the profile flattens; " + std::to_string(options_.max_bracket_steps) +
                  " outward trials reached " + Format(inside.value) + " where the rss rose by " +
                  Format(inside.cost - optimum_.cost) + " of the " +
                  Format(summary_->cost_increase) + " needed";
    return result;
  }

 private:
  // Predicts the crossing from the profile t so far (linear in the distance) and aims a
  // little beyond it, within [kMinStepGrowth, max_step_growth].
  double NextGrowth(const ProfilePoint& trial) const {
    const double high = options_.max_step_growth;
    const double low = std::min(kMinStepGrowth, high);
    const double rise = trial.excess + root_increase_;  // sqrt(S - S_min) >= 0
    if (!(rise > 0)) return high;
    return std::clamp(kOvershoot * root_increase_ / rise, low, high);
  }

  // Illinois variant of regula falsi on `excess` between a point inside (excess < 0) and one
  // outside (excess > 0); each refit starts from the nearer end of the bracket.
  SideResult SearchRoot(ProfilePoint inside, ProfilePoint outside) {
    double f_inside = inside.excess;
    double f_outside = outside.excess;
    int last_moved = 0;  // -1 inside, +1 outside
    double value = outside.value;
    for (int iteration = 1; iteration <= options_.max_root_iterations; ++iteration) {
      value = (inside.value * f_outside - outside.value * f_inside) / (f_outside - f_inside);
      const double low = std::min(inside.value, outside.value);
      const double high = std::max(inside.value, outside.value);
      if (!(value > low && value < high)) value = 0.5 * (low + high);
      if (high - low <= 4 * kEpsilon * std::max(std::abs(low), std::abs(high))) {
        return Crossed(value);
      }
      const bool nearer_inside = std::abs(value - inside.value) <= std::abs(value - outside.value);
      ProfilePoint trial;
      const RefitOutcome outcome =
          Refit(value, nearer_inside ? inside.parameters : outside.parameters, &trial);
      if (outcome == RefitOutcome::kStopped) return Stopped(value);
      if (outcome == RefitOutcome::kFailed) return Failed(value);
      if (std::abs(trial.excess) <= options_.crossing_tolerance * root_increase_) {
        return Crossed(value);
      }
      if (trial.excess < 0) {
        inside = trial;
        f_inside = trial.excess;
        if (last_moved == -1) f_outside *= 0.5;
        last_moved = -1;
      } else {
        outside = trial;
        f_outside = trial.excess;
        if (last_moved == +1) f_inside *= 0.5;
        last_moved = +1;
      }
    }
    SideResult result = Crossed(value);
    result.note += " (bracket [" + Format(std::min(inside.value, outside.value)) + ", " +
                   Format(std::max(inside.value, outside.value)) + "] not closed to tolerance in " +
                   std::to_string(options_.max_root_iterations) + " refits)";
    return result;
  }

  RefitOutcome Refit(double value, const Eigen::VectorXd& warm, ProfilePoint* point) {
    if (!stop_reason_.empty()) return RefitOutcome::kStopped;  // the other side was stopped
    const double elapsed = std::chrono::duration<double>(Clock::now() - started_).count();
    if (elapsed >= options_.deadline_seconds) {
      stop_reason_ = "profile deadline of " + Format(options_.deadline_seconds) + " s passed";
      return RefitOutcome::kStopped;
    }
    local_.lm.deadline_seconds =
        std::min(options_.refit.deadline_seconds, options_.deadline_seconds - elapsed);
    Eigen::VectorXd start = warm;
    start[j_] = value;
    const LocalFitSummary fit = RunLocalFit(fixed_, start, local_);
    ++num_refits_;
    ++summary_->num_refits;
    if (fit.termination == Termination::kCancelled || fit.termination == Termination::kDeadline) {
      stop_reason_ = std::string("refit ") + ToString(fit.termination);
      return RefitOutcome::kStopped;
    }
    if (!fit.IsConverged() || !std::isfinite(fit.final_cost) ||
        fit.parameters.size() != start.size() || !fit.parameters.allFinite()) {
      failure_reason_ = std::string(ToString(fit.termination));
      return RefitOutcome::kFailed;
    }
    point->value = value;
    point->cost = fit.final_cost;
    point->excess = std::sqrt(std::max(fit.final_cost - optimum_.cost, 0.0)) - root_increase_;
    point->parameters = fit.parameters;
    NoteLowerCost(*point);
    return RefitOutcome::kConverged;
  }

  void NoteLowerCost(const ProfilePoint& point) {
    const double level = optimum_.cost * (1 - options_.lower_cost_tolerance);
    if (!(point.cost < level)) return;
    if (summary_->found_lower_cost && !(point.cost < summary_->lowest_cost)) return;
    summary_->found_lower_cost = true;
    summary_->lowest_cost = point.cost;
    summary_->lowest_cost_parameters = point.parameters;
  }

  SideResult Crossed(double value) const {
    SideResult result;
    result.end = value;
    result.status = ProfileEnd::kCrossed;
    result.note = "crossed at " + Format(value);
    return result;
  }
  SideResult Failed(double value) const {
    SideResult result;
    result.status = ProfileEnd::kRefitFailed;
    result.note = "the refit at " + Format(value) + " did not converge (" + failure_reason_ + ")";
    return result;
  }
  SideResult Stopped(double value) const {
    SideResult result;
    result.status = ProfileEnd::kStopped;
    result.note = "stopped before " + Format(value) + " (" + stop_reason_ + ")";
    return result;
  }

  Problem fixed_;
  int j_;
  const ProfileLikelihoodOptions& options_;
  Clock::time_point started_;
  ProfileLikelihoodSummary* summary_;
  LocalFitOptions local_;
  ProfilePoint optimum_;
  double root_increase_ = 0;
  int num_refits_ = 0;
  std::string failure_reason_;
  std::string stop_reason_;
};

bool IsAbsolute(const Problem& problem) {
  return problem.data.HasSigma() && problem.sigma_mode == SigmaMode::kAbsolute;
}

// dS, the allowed rise of the cost. With absolute sigma the likelihood-ratio statistic
// S(theta_j) - S_min is asymptotically chi-square with 1 degree of freedom (Wilks 1938;
// from memory). With the scale estimated, the profile t statistic
// tau = sign * sqrt(S(theta_j) - S_min) / s, s^2 = S_min / dof, is compared with
// t_{dof}(1 - alpha/2), i.e. S = S_min (1 + F_{1,dof,level} / dof) since t^2 = F_{1,dof}
// (Bates & Watts 1988, Nonlinear Regression Analysis and Its Applications, sec. 6.1; from
// memory). Both make the interval of a linear model equal its Wald interval exactly.
double CostIncrease(ProfileRule rule, int dof, double optimum_cost, double level) {
  using ChiSquared = boost::math::chi_squared_distribution<double, internal::NoThrowPolicy>;
  using FisherF = boost::math::fisher_f_distribution<double, internal::NoThrowPolicy>;
  if (rule == ProfileRule::kChiSquare) return boost::math::quantile(ChiSquared(1), level);
  return optimum_cost * boost::math::quantile(FisherF(1, dof), level) / dof;
}

// Sets the rule and the threshold, or says why no profile can be computed.
bool PrepareThreshold(const Problem& problem, const FitStatistics& stats,
                      const ProfileLikelihoodOptions& options, ProfileLikelihoodSummary* summary) {
  if (!stats.is_finite) {
    summary->message = "no profile: the model is not finite at the optimum (" + stats.message + ")";
    return false;
  }
  summary->rule = IsAbsolute(problem) ? ProfileRule::kChiSquare : ProfileRule::kFRatio;
  summary->optimum_cost = stats.rss;
  if (summary->rule == ProfileRule::kFRatio && stats.dof <= 0) {
    summary->message = "no profile: dof = " + std::to_string(stats.dof) +
                       " and no absolute sigma, so the threshold cannot be set";
    return false;
  }
  summary->cost_increase =
      CostIncrease(summary->rule, stats.dof, stats.rss, options.confidence_level);
  summary->threshold_cost = summary->optimum_cost + summary->cost_increase;
  if (!std::isfinite(summary->cost_increase) || !std::isfinite(summary->threshold_cost)) {
    summary->message = "no profile: the threshold is not finite";
    return false;
  }
  return true;
}

void ProfileParameter(const Problem& problem, int j, const Eigen::VectorXd& optimum,
                      const FitStatistics& stats, const ProfileLikelihoodOptions& options,
                      const Clock::time_point& started, ProfileLikelihoodSummary* summary) {
  ProfileInterval& interval = summary->intervals[j];
  interval.is_profiled = true;
  if (summary->cost_increase == 0) {
    // rss = 0 with an estimated scale: no noise, so the interval is the estimate itself.
    interval.lower = interval.upper = optimum[j];
    interval.lower_end = interval.upper_end = ProfileEnd::kCrossed;
    interval.message = "rss = 0 with an estimated scale: the interval is the estimate";
    return;
  }
  ParameterProfiler profiler(problem, j, optimum, options, started, summary);
  const SideResult lower = profiler.Side(-1, optimum[j] - stats.ci_low[j]);
  const SideResult upper = profiler.Side(+1, stats.ci_high[j] - optimum[j]);
  interval.lower = lower.status == ProfileEnd::kCrossed ? lower.end : -kInf;
  interval.upper = upper.status == ProfileEnd::kCrossed ? upper.end : kInf;
  interval.lower_end = lower.status;
  interval.upper_end = upper.status;
  interval.num_refits = profiler.num_refits();
  interval.message = "lower: " + lower.note + "; upper: " + upper.note + " (" +
                     std::to_string(interval.num_refits) + " refits)";
}

}  // namespace

const char* ToString(ProfileEnd end) {
  switch (end) {
    case ProfileEnd::kCrossed:
      return "crossed";
    case ProfileEnd::kBound:
      return "bound";
    case ProfileEnd::kFlat:
      return "flat";
    case ProfileEnd::kRefitFailed:
      return "refit_failed";
    case ProfileEnd::kStopped:
      return "stopped";
    case ProfileEnd::kNotProfiled:
      return "not_profiled";
  }
  return "unknown";
}

bool ProfileEndFromString(const std::string& text, ProfileEnd* end) {
  for (ProfileEnd candidate :
       {ProfileEnd::kCrossed, ProfileEnd::kBound, ProfileEnd::kFlat, ProfileEnd::kRefitFailed,
        ProfileEnd::kStopped, ProfileEnd::kNotProfiled}) {
    if (text == ToString(candidate)) {
      *end = candidate;
      return true;
    }
  }
  return false;
}

const char* ToString(ProfileRule rule) {
  return rule == ProfileRule::kChiSquare ? "chi_square" : "f_ratio";
}

bool ProfileLikelihoodOptions::Validate(std::string* error) const {
  std::ostringstream text;
  text.precision(12);
  if (!(confidence_level > 0 && confidence_level < 1)) {
    text << "confidence_level = " << confidence_level << ": must be in (0, 1)";
  } else if (!(std::isfinite(initial_step) && initial_step > 0)) {
    text << "initial_step = " << initial_step << ": must be finite and > 0";
  } else if (!(std::isfinite(max_step_growth) && max_step_growth > 1)) {
    text << "max_step_growth = " << max_step_growth << ": must be finite and > 1";
  } else if (max_bracket_steps < 1) {
    text << "max_bracket_steps = " << max_bracket_steps << ": must be >= 1";
  } else if (max_root_iterations < 1) {
    text << "max_root_iterations = " << max_root_iterations << ": must be >= 1";
  } else if (!(crossing_tolerance > 0 && crossing_tolerance <= 0.1)) {
    text << "crossing_tolerance = " << crossing_tolerance << ": must be in (0, 0.1]";
  } else if (!(lower_cost_tolerance >= 0 && lower_cost_tolerance < 1)) {
    text << "lower_cost_tolerance = " << lower_cost_tolerance << ": must be in [0, 1)";
  } else if (!(deadline_seconds > 0)) {
    text << "deadline_seconds = " << deadline_seconds << ": must be > 0";
  } else {
    std::string refit_error;
    if (refit.Validate(&refit_error)) return true;
    text << "refit." << refit_error;
  }
  if (error != nullptr) *error = text.str();
  return false;
}

std::string ProfileLikelihoodSummary::BriefReport() const {
  std::ostringstream text;
  if (!is_computed) return message;
  int num_profiled = 0;
  int num_closed = 0;
  for (const ProfileInterval& interval : intervals) {
    num_profiled += interval.is_profiled ? 1 : 0;
    num_closed += interval.is_profiled && interval.IsClosed() ? 1 : 0;
  }
  text << "profile (" << ToString(rule) << ", " << 100 * confidence_level << "%, rss "
       << Format(optimum_cost) << " + " << Format(cost_increase) << "): " << num_closed << " of "
       << num_profiled << " intervals closed, " << num_refits << " refits, "
       << Format(total_seconds) << " s";
  if (found_lower_cost) text << "; a refit found a lower rss " << Format(lowest_cost);
  return text.str();
}

ProfileLikelihoodSummary ComputeProfileLikelihood(const Problem& problem,
                                                  const Eigen::VectorXd& optimum,
                                                  const ProfileLikelihoodOptions& options) {
  CheckInvariant(problem.model != nullptr, "problem.model is null");
  CheckInvariant(optimum.size() == problem.NumParameters(), "optimum size != NumParameters()");
  CheckInvariant(options.Validate(nullptr), "options fail ProfileLikelihoodOptions::Validate");
  const Clock::time_point started = Clock::now();
  const int p = problem.NumParameters();
  ProfileLikelihoodSummary summary;
  summary.confidence_level = options.confidence_level;
  summary.intervals.assign(static_cast<size_t>(p), ProfileInterval{});
  std::string bounds_error;
  if (!optimum.allFinite() || !problem.IsInsideBounds(optimum, &bounds_error)) {
    summary.message = "no profile: the optimum is not a finite point inside the bounds" +
                      (bounds_error.empty() ? std::string() : " (" + bounds_error + ")");
    return summary;
  }
  StatisticsOptions statistics_options;
  statistics_options.confidence_level = options.confidence_level;
  const FitStatistics stats = ComputeFitStatistics(problem, optimum, statistics_options);
  if (!PrepareThreshold(problem, stats, options, &summary)) return summary;
  summary.is_computed = true;
  // Once cancelled or out of time, the remaining parameters are not started.
  bool is_stopped = false;
  std::string stop_note;
  for (int j = 0; j < p; ++j) {
    if (problem.IsFixed(j)) {
      summary.intervals[j].message = "fixed";
      continue;
    }
    if (is_stopped) {
      ProfileInterval& interval = summary.intervals[j];
      interval.is_profiled = true;
      interval.lower_end = interval.upper_end = ProfileEnd::kStopped;
      interval.message = "stopped before this parameter (" + stop_note + ")";
      continue;
    }
    ProfileParameter(problem, j, optimum, stats, options, started, &summary);
    const ProfileInterval& done = summary.intervals[j];
    if (done.lower_end == ProfileEnd::kStopped || done.upper_end == ProfileEnd::kStopped) {
      is_stopped = true;
      stop_note = "the profile of " + problem.model->ParameterNames()[j] + " was stopped";
    }
  }
  summary.total_seconds = std::chrono::duration<double>(Clock::now() - started).count();
  return summary;
}

}  // namespace foothold
