#include "engine/multistart/internal/start_schedule.h"

#include <algorithm>
#include <cmath>

namespace foothold {
namespace internal {
namespace {

// kAuto samples on a log scale when the range spans more than two decades.
constexpr double kLogSpanRatio = 100.0;
// A positive parameter without an upper bound gets [min / kPositiveSpan, max * kPositiveSpan].
constexpr double kPositiveSpan = 100.0;
// Otherwise a missing side extends the candidates' range by kHalfWidthFactor * max |value|.
constexpr double kHalfWidthFactor = 2.0;
// Jitter: kJitterErrorMultiple standard errors, at least kJitterBoxShare of the unit box.
constexpr double kJitterErrorMultiple = 3.0;
constexpr double kJitterBoxShare = 0.05;
constexpr double kTwoToMinus32 = 1.0 / 4294967296.0;

}  // namespace

double ResolvedBox::ToUnit(int j, double value) const {
  if (upper[j] <= lower[j]) return 0.5;
  if (is_log[j]) {
    return (std::log(value) - std::log(lower[j])) / (std::log(upper[j]) - std::log(lower[j]));
  }
  return (value - lower[j]) / (upper[j] - lower[j]);
}

double ResolvedBox::FromUnit(int j, double unit) const {
  double value;
  if (is_log[j]) {
    value = std::exp(std::log(lower[j]) + unit * (std::log(upper[j]) - std::log(lower[j])));
  } else {
    value = lower[j] + unit * (upper[j] - lower[j]);
  }
  return std::min(upper[j], std::max(lower[j], value));
}

ResolvedBox ResolveBox(const Problem& problem, const std::vector<StartCandidate>& candidates,
                       const SearchBox& box) {
  const int p = problem.NumParameters();
  ResolvedBox resolved;
  resolved.lower = Eigen::VectorXd::Zero(p);
  resolved.upper = Eigen::VectorXd::Zero(p);
  resolved.is_log.assign(p, false);
  resolved.base = candidates.empty() ? Eigen::VectorXd::Zero(p) : candidates.front().parameters;
  for (int j = 0; j < p; ++j) {
    if (problem.IsFixed(j)) {
      resolved.lower[j] = resolved.upper[j] = resolved.base[j];
      continue;
    }
    resolved.free.push_back(j);
    const double bound_lower = problem.Lower(j);
    const double bound_upper = problem.Upper(j);
    double lower = std::max(bound_lower, box.lower.size() ? box.lower[j] : -INFINITY);
    double upper = std::min(bound_upper, box.upper.size() ? box.upper[j] : INFINITY);
    if (!std::isfinite(lower) || !std::isfinite(upper)) {
      // Candidate values clamped into the bounds, as the fits will see them.
      double low = INFINITY, high = -INFINITY, magnitude = 0;
      for (const StartCandidate& candidate : candidates) {
        const double v = std::min(bound_upper, std::max(bound_lower, candidate.parameters[j]));
        low = std::min(low, v);
        high = std::max(high, v);
        magnitude = std::max(magnitude, std::abs(v));
      }
      if (candidates.empty()) low = high = 0;
      if (magnitude == 0) magnitude = 1;
      const bool positive = std::isfinite(lower) && lower >= 0 && low > 0;
      if (positive && !std::isfinite(upper)) {
        lower = std::max(lower, low / kPositiveSpan);
        upper = high * kPositiveSpan;
      } else {
        if (!std::isfinite(lower))
          lower = std::max(bound_lower, low - kHalfWidthFactor * magnitude);
        if (!std::isfinite(upper))
          upper = std::min(bound_upper, high + kHalfWidthFactor * magnitude);
      }
      if (upper < lower) upper = lower;
    }
    resolved.lower[j] = lower;
    resolved.upper[j] = upper;
    const BoxScale scale = box.scale.empty() ? BoxScale::kAuto : box.scale[j];
    resolved.is_log[j] = scale == BoxScale::kLog ||
                         (scale == BoxScale::kAuto && lower > 0 && upper > kLogSpanRatio * lower);
  }
  return resolved;
}

Eigen::VectorXd ClampStart(const Problem& problem, const ResolvedBox& box,
                           const Eigen::VectorXd& params) {
  Eigen::VectorXd start = params;
  for (Eigen::Index j = 0; j < start.size(); ++j) {
    if (problem.IsFixed(j)) {
      start[j] = box.base[j];
    } else {
      start[j] = std::min(problem.Upper(j), std::max(problem.Lower(j), start[j]));
    }
  }
  return start;
}

Eigen::VectorXd SobolStart(const ResolvedBox& box, const SobolSequence& sobol,
                           const std::vector<std::uint32_t>& shift, std::uint64_t ordinal) {
  std::uint32_t bits[SobolSequence::kMaxDimension];
  sobol.PointBits(ordinal + 1, bits);
  Eigen::VectorXd start = box.base;
  for (size_t d = 0; d < box.free.size(); ++d) {
    const int j = box.free[d];
    // The midpoint of the 2^-32 cell keeps log-scaled coordinates off the exact lower end.
    const double unit = ((bits[d] ^ shift[d]) + 0.5) * kTwoToMinus32;
    start[j] = box.FromUnit(j, unit);
  }
  return start;
}

Eigen::VectorXd JitterStart(const ResolvedBox& box, const Eigen::VectorXd& center,
                            const Eigen::VectorXd& standard_errors, RandomStream* stream) {
  Eigen::VectorXd start = box.base;
  for (int j : box.free) {
    const double value = std::min(box.upper[j], std::max(box.lower[j], center[j]));
    const double unit = box.ToUnit(j, value);
    double error_unit = 0;
    const double error = standard_errors.size() ? standard_errors[j] : NAN;
    if (std::isfinite(error) && error > 0 && box.Width(j) > 0) {
      // Delta method on the log scale: d log v = dv / v.
      error_unit = box.is_log[j] ? error / value / std::log(box.upper[j] / box.lower[j])
                                 : error / box.Width(j);
    }
    const double spread = std::max(kJitterErrorMultiple * error_unit, kJitterBoxShare);
    const double moved = std::min(1.0, std::max(0.0, unit + spread * stream->NextNormal()));
    start[j] = box.FromUnit(j, moved);
  }
  return start;
}

}  // namespace internal
}  // namespace foothold
