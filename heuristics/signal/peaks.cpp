#include "heuristics/signal/peaks.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/noise.h"

namespace foothold {
namespace signal {
namespace {

// x where the polyline through (x, s) first drops below `level`, walking from `apex`
// towards `stop` (step -1 or +1). False when it never does before passing `stop`.
bool FindLevelCrossing(const Eigen::VectorXd& x, const Eigen::VectorXd& s, Eigen::Index apex,
                       Eigen::Index stop, int step, double level, double* crossing) {
  for (Eigen::Index j = apex + step; step < 0 ? j >= stop : j <= stop; j += step) {
    if (s[j] < level) {
      const Eigen::Index inner = j - step;
      const double drop = s[inner] - s[j];
      // The inner sample is at or above the level except, by rounding, right at the apex.
      const double fraction = drop > 0.0 ? std::clamp((s[inner] - level) / drop, 0.0, 1.0) : 0.0;
      *crossing = x[inner] + fraction * (x[j] - x[inner]);
      return true;
    }
  }
  return false;
}

// Walks from the apex while the signal stays at or below `apex_value`; returns the index of
// the lowest sample passed (the base on that side), or the apex itself if none.
Eigen::Index FindBase(const Eigen::VectorXd& s, Eigen::Index apex, int step, double apex_value) {
  Eigen::Index base = apex;
  const Eigen::Index n = s.size();
  for (Eigen::Index j = apex + step; j >= 0 && j < n && s[j] <= apex_value; j += step) {
    if (s[j] < s[base]) base = j;
  }
  return base;
}

// Builds the peak whose derivative crosses zero between samples i and i + 1, or returns
// false if the curvature there is not negative.
bool MeasurePeak(const Eigen::VectorXd& x, const SmoothedCurve& smooth, const Baseline& baseline,
                 Eigen::Index i, Peak* peak) {
  const Eigen::VectorXd& s = smooth.value;
  const Eigen::VectorXd& d1 = smooth.first_derivative;
  const Eigen::VectorXd& d2 = smooth.second_derivative;
  const double fraction = d1[i] / (d1[i] - d1[i + 1]);
  const double center = x[i] + fraction * (x[i + 1] - x[i]);
  if (!(d2[i] + fraction * (d2[i + 1] - d2[i]) < 0.0)) return false;
  // Bases and prominence compare samples with samples only, so that of two neighbouring
  // noise tops the higher one always wins; the height uses the value at the true center.
  // Sample to sample, the smoothed values still jitter by about noise / sqrt(window) on a
  // flat top, so the apex is the highest sample within one half-window of the crossing
  // (features closer than that are not resolved anyway), then climbed to a local maximum.
  const Eigen::Index h = smooth.half_window;
  const Eigen::Index first = std::max<Eigen::Index>(0, i - h);
  const Eigen::Index last = std::min<Eigen::Index>(s.size() - 1, i + 1 + h);
  Eigen::Index apex = first;
  s.segment(first, last - first + 1).maxCoeff(&apex);
  apex += first;
  while (apex > 0 && s[apex - 1] > s[apex]) --apex;
  while (apex + 1 < s.size() && s[apex + 1] > s[apex]) ++apex;
  const Eigen::Index nearest = fraction < 0.5 ? i : i + 1;
  // Second-order Taylor expansion of the local fit from the nearest sample to the center.
  const double delta = center - x[nearest];
  const double apex_value =
      std::max(s[apex], s[nearest] + d1[nearest] * delta + 0.5 * d2[nearest] * delta * delta);

  const Eigen::Index left = FindBase(s, apex, -1, s[apex]);
  const Eigen::Index right = FindBase(s, apex, +1, s[apex]);
  peak->center = center;
  peak->apex_index = static_cast<int>(apex);
  peak->left_index = static_cast<int>(left);
  peak->right_index = static_cast<int>(right);
  peak->prominence = s[apex] - std::max(s[left], s[right]);
  peak->height = apex_value - baseline.At(center);

  double low = 0.0, high = 0.0;
  const double half_height = apex_value - 0.5 * peak->height;
  if (peak->height > 0.0 && FindLevelCrossing(x, s, apex, left, -1, half_height, &low) &&
      FindLevelCrossing(x, s, apex, right, +1, half_height, &high)) {
    peak->fwhm = high - low;
    return true;
  }
  // Half-way down the prominence is crossed on both sides by construction of the bases.
  const double half_prominence = apex_value - 0.5 * peak->prominence;
  peak->is_width_from_prominence = true;
  if (FindLevelCrossing(x, s, apex, left, -1, half_prominence, &low) &&
      FindLevelCrossing(x, s, apex, right, +1, half_prominence, &high)) {
    peak->fwhm = high - low;
  } else {
    peak->fwhm = 0.0;
  }
  return true;
}

}  // namespace

bool PeakOptions::Validate(std::string* error) const {
  std::ostringstream text;
  std::string nested;
  if (!(min_prominence_sigmas >= 0.0) || !std::isfinite(min_prominence_sigmas)) {
    text << "min_prominence_sigmas = " << min_prominence_sigmas << ": must be finite and >= 0";
  } else if (!(min_prominence_fraction >= 0.0 && min_prominence_fraction < 1.0)) {
    text << "min_prominence_fraction = " << min_prominence_fraction << ": must be in [0, 1)";
  } else if (max_peaks < 0) {
    text << "max_peaks = " << max_peaks << ": must be >= 0 (0 keeps all)";
  } else if (!smoothing.Validate(&nested)) {
    text << "smoothing." << nested;
  } else if (!baseline.Validate(&nested)) {
    text << "baseline." << nested;
  }
  if (text.tellp() == 0) return true;
  if (error) *error = text.str();
  return false;
}

PeakList FindPeaks(const Eigen::VectorXd& x, const Eigen::VectorXd& y, const PeakOptions& options) {
  PeakList out;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  out.status = internal::CheckCurve(x, y, internal::CurveRequirements(), &out.message);
  if (!out.IsOk()) return out;

  // Dips are peaks of the negated signal; everything is measured there and mapped back.
  const double sign = options.negative ? -1.0 : 1.0;
  const Eigen::VectorXd signal = sign * y;
  out.noise_sigma = EstimateNoise(x, signal).sigma;
  SavitzkyGolayOptions smoothing = options.smoothing;
  if (smoothing.noise_sigma < 0.0) smoothing.noise_sigma = out.noise_sigma;
  SmoothedCurve smooth = SmoothSavitzkyGolay(x, signal, smoothing);
  if (!smooth.IsOk()) {
    out.status = smooth.status;
    out.message = "smoothing before peak detection: " + smooth.message;
    return out;
  }
  Baseline baseline = EstimateBaseline(x, smooth.value, options.baseline);
  out.prominence_threshold =
      std::max(options.min_prominence_sigmas * out.noise_sigma,
               options.min_prominence_fraction * (signal.maxCoeff() - signal.minCoeff()));

  const Eigen::VectorXd& d1 = smooth.first_derivative;
  std::map<int, Peak> by_apex;
  for (Eigen::Index i = 0; i + 1 < x.size(); ++i) {
    if (!(d1[i] > 0.0 && d1[i + 1] <= 0.0)) continue;
    Peak peak;
    if (!MeasurePeak(x, smooth, baseline, i, &peak)) continue;
    if (peak.prominence < out.prominence_threshold) continue;
    if (!std::isfinite(peak.center) || !std::isfinite(peak.height) || !std::isfinite(peak.fwhm)) {
      continue;
    }
    peak.height *= sign;
    // Crossings that share an apex are one peak: keep the crossing nearest the apex sample.
    const auto found = by_apex.find(peak.apex_index);
    const double apex_x = x[peak.apex_index];
    if (found == by_apex.end()) {
      by_apex.emplace(peak.apex_index, peak);
    } else if (std::abs(peak.center - apex_x) < std::abs(found->second.center - apex_x)) {
      found->second = peak;
    }
  }
  for (const auto& entry : by_apex) out.peaks.push_back(entry.second);
  std::stable_sort(out.peaks.begin(), out.peaks.end(),
                   [](const Peak& a, const Peak& b) { return a.prominence > b.prominence; });
  if (options.max_peaks > 0 && out.peaks.size() > static_cast<size_t>(options.max_peaks)) {
    out.peaks.resize(static_cast<size_t>(options.max_peaks));
  }

  baseline.intercept *= sign;
  baseline.slope *= sign;
  out.baseline = baseline;
  smooth.value *= sign;
  smooth.first_derivative *= sign;
  smooth.second_derivative *= sign;
  out.smoothed = std::move(smooth);
  return out;
}

}  // namespace signal
}  // namespace foothold
