#include "heuristics/signal/peaks.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/internal/robust_stats.h"
#include "heuristics/signal/noise.h"

namespace foothold {
namespace signal {
namespace {

// FWHM / (distance between the inflection points) for a Gaussian: 2 sqrt(2 ln 2) sigma / 2 sigma.
constexpr double kFwhmPerInflectionSpan = 1.1774100225154747;

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

// First zero of the polyline (x, d2) walking from i while d2 < 0; false at the data end.
bool FindCurvatureZero(const Eigen::VectorXd& x, const Eigen::VectorXd& d2, Eigen::Index i,
                       int step, double* at, Eigen::Index* index) {
  for (Eigen::Index j = i + step; j >= 0 && j < d2.size(); j += step) {
    if (d2[j] >= 0.0) {
      const Eigen::Index inner = j - step;
      const double rise = d2[j] - d2[inner];
      const double fraction = rise > 0.0 ? std::clamp(-d2[inner] / rise, 0.0, 1.0) : 0.0;
      *at = x[inner] + fraction * (x[j] - x[inner]);
      *index = j;
      return true;
    }
  }
  return false;
}

// Abscissa of the vertex of the parabola through three points (Newton form), kept in
// [x0, x2]; the middle point when the parabola does not open upwards.
double ParabolaMinimum(double x0, double y0, double x1, double y1, double x2, double y2) {
  const double slope01 = (y1 - y0) / (x1 - x0);
  const double slope12 = (y2 - y1) / (x2 - x1);
  const double c = (slope12 - slope01) / (x2 - x0);
  if (!(c > 0.0)) return x1;
  return std::clamp(0.5 * (x0 + x1) - slope01 / (2.0 * c), x0, x2);
}

// Appends the shoulders (see peaks.h) of the signed signal to `peaks`, with heights in the
// caller's orientation (times `sign`).
void AddShoulders(const Eigen::VectorXd& x, const SmoothedCurve& smooth, const Baseline& baseline,
                  const PeakOptions& options, double threshold, double sign,
                  std::vector<Peak>* peaks) {
  const Eigen::VectorXd& s = smooth.value;
  const Eigen::VectorXd& d2 = smooth.second_derivative;
  const Eigen::Index n = d2.size();
  const double spread = internal::kMadToSigma * internal::MedianAbsoluteDeviation(
                                                    std::vector<double>(d2.data(), d2.data() + n));
  const double limit = -options.shoulder_curvature_sigmas * spread;
  std::vector<Eigen::Index> minima;
  for (Eigen::Index i = 1; i + 1 < n; ++i) {
    if (d2[i] < d2[i - 1] && d2[i] <= d2[i + 1] && d2[i] < std::min(limit, 0.0)) {
      minima.push_back(i);
    }
  }
  std::sort(minima.begin(), minima.end(),
            [&d2](Eigen::Index a, Eigen::Index b) { return d2[a] < d2[b]; });
  const size_t num_peaks = peaks->size();
  std::vector<Eigen::Index> accepted;
  for (Eigen::Index i : minima) {
    bool is_taken = false;
    for (size_t k = 0; k < num_peaks && !is_taken; ++k) {
      const Peak& peak = (*peaks)[k];
      const double core = std::max(0.5 * peak.fwhm, std::abs(x[peak.apex_index] - peak.center));
      is_taken = std::abs(x[i] - peak.center) <= core;
    }
    for (Eigen::Index j : accepted) is_taken = is_taken || std::abs(i - j) <= smooth.half_window;
    if (is_taken) continue;
    double low = 0.0, high = 0.0;
    Eigen::Index left = i, right = i;
    const bool has_low = FindCurvatureZero(x, d2, i, -1, &low, &left);
    const bool has_high = FindCurvatureZero(x, d2, i, +1, &high, &right);
    if (!has_low && !has_high) continue;
    Peak shoulder;
    shoulder.center = ParabolaMinimum(x[i - 1], d2[i - 1], x[i], d2[i], x[i + 1], d2[i + 1]);
    shoulder.height = s[i] - baseline.At(shoulder.center);
    if (shoulder.height < threshold) continue;
    const double span = has_low && has_high
                            ? high - low
                            : 2.0 * (has_low ? shoulder.center - low : high - shoulder.center);
    shoulder.fwhm = kFwhmPerInflectionSpan * span;
    shoulder.apex_index = static_cast<int>(i);
    shoulder.left_index = static_cast<int>(left);
    shoulder.right_index = static_cast<int>(right);
    shoulder.is_shoulder = true;
    shoulder.height *= sign;  // back to the caller's orientation, as for the peaks
    accepted.push_back(i);
    peaks->push_back(shoulder);
  }
}

}  // namespace

bool PeakOptions::Validate(std::string* error) const {
  std::ostringstream text;
  std::string nested;
  if (!(min_prominence_sigmas >= 0.0) || !std::isfinite(min_prominence_sigmas)) {
    text << "min_prominence_sigmas = " << min_prominence_sigmas << ": must be finite and >= 0";
  } else if (!(min_prominence_fraction >= 0.0 && min_prominence_fraction < 1.0)) {
    text << "min_prominence_fraction = " << min_prominence_fraction << ": must be in [0, 1)";
  } else if (!(shoulder_curvature_sigmas >= 0.0) || !std::isfinite(shoulder_curvature_sigmas)) {
    text << "shoulder_curvature_sigmas = " << shoulder_curvature_sigmas
         << ": must be finite and >= 0";
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

PeakSmoothing SmoothForPeaks(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                             const PeakOptions& options) {
  PeakSmoothing out;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  out.status = internal::CheckCurve(x, y, internal::CurveRequirements(), &out.message);
  if (!out.IsOk()) return out;
  out.noise_sigma = EstimateNoise(x, y).sigma;
  SavitzkyGolayOptions smoothing = options.smoothing;
  if (smoothing.noise_sigma < 0.0) smoothing.noise_sigma = out.noise_sigma;
  out.smoothed = SmoothSavitzkyGolay(x, y, smoothing);
  if (!out.smoothed.IsOk()) {
    out.status = out.smoothed.status;
    out.message = "smoothing before peak detection: " + out.smoothed.message;
  }
  return out;
}

PeakList FindPeaks(const Eigen::VectorXd& x, const Eigen::VectorXd& y, const PeakOptions& options) {
  return FindPeaks(x, y, SmoothForPeaks(x, y, options), options);
}

PeakList FindPeaks(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                   const PeakSmoothing& smoothing, const PeakOptions& options) {
  PeakList out;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  if (!smoothing.IsOk()) {
    out.status = smoothing.status;
    out.message = smoothing.message;
    return out;
  }
  // Dips are peaks of the negated signal; everything is measured there and mapped back.
  const double sign = options.negative ? -1.0 : 1.0;
  const Eigen::VectorXd signal = sign * y;
  out.noise_sigma = smoothing.noise_sigma;
  SmoothedCurve smooth = smoothing.smoothed;
  smooth.value *= sign;
  smooth.first_derivative *= sign;
  smooth.second_derivative *= sign;
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
  if (options.find_shoulders) {
    AddShoulders(x, smooth, baseline, options, out.prominence_threshold, sign, &out.peaks);
    std::stable_sort(out.peaks.begin(), out.peaks.end(), [](const Peak& a, const Peak& b) {
      if (a.is_shoulder != b.is_shoulder) return !a.is_shoulder;
      return a.is_shoulder ? a.height > b.height : a.prominence > b.prominence;
    });
  }
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
