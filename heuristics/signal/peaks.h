#pragma once
// Peak detection on the Savitzky-Golay smoothed signal.
//
// A peak is a downward zero crossing of the smoothed first derivative where the smoothed
// second derivative is negative; its center is the crossing interpolated linearly between
// the two samples. Its prominence is measured as in topography: walk left and right from
// the apex until the signal rises above the apex (or the data end); the lowest point on
// each side is a base, and prominence = apex - max(left base, right base). Its width is
// the full width at half height above the baseline, with each crossing interpolated
// linearly between samples and sought only between the bases; where a side never drops to
// half height (an overlapped shoulder), the level half way down the prominence is used.
// Peaks whose prominence is below max(min_prominence_sigmas * noise sigma,
// min_prominence_fraction * (max y - min y)) are dropped.
//
// Shoulders (find_shoulders): a Gaussian's second derivative has its minimum at the center
// and crosses zero at center +- sigma, and an overlapped neighbour only tilts that pattern.
// So each significant local minimum of the smoothed second derivative that lies outside the
// half-height core of every peak found is a shoulder: center at the minimum (parabolic
// vertex), FWHM = sqrt(2 ln 2) * (distance between the two zero crossings), or twice the
// one-sided distance when only one side crosses; height above the baseline at least the
// prominence threshold. Minima closer than a half-window to a deeper one are the same
// shoulder.

#include <Eigen/Core>
#include <string>
#include <vector>

#include "heuristics/signal/baseline.h"
#include "heuristics/signal/savitzky_golay.h"
#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

struct PeakOptions {
  // Look for dips (negative-going peaks) instead of maxima. Default false.
  bool negative = false;
  // Prominence threshold in units of the noise estimate (second differences). >= 0;
  // default 4.
  double min_prominence_sigmas = 4.0;
  // Prominence threshold as a share of the y range, for noise-free data. In [0, 1);
  // default 0.01.
  double min_prominence_fraction = 0.01;
  // Keep at most this many peaks (the most prominent). 0 keeps all; default 0.
  int max_peaks = 0;
  // Also report shoulders: overlapped peaks without a maximum of their own, found as
  // minima of the smoothed second derivative (see FindPeaks). Default false.
  bool find_shoulders = false;
  // A shoulder's second-derivative minimum must be below -shoulder_curvature_sigmas times
  // the robust spread (1.4826 MAD) of the second derivative over the curve. >= 0; default 4.
  double shoulder_curvature_sigmas = 4.0;
  // Smoothing; its automatic window is the default. Order 4 keeps peak tops sharp.
  SavitzkyGolayOptions smoothing = DefaultSmoothing();
  // The baseline that heights are measured from (for dips, of the negated signal).
  BaselineOptions baseline;

  bool Validate(std::string* error) const;
  static SavitzkyGolayOptions DefaultSmoothing() {
    SavitzkyGolayOptions s;
    s.polynomial_order = 4;
    return s;
  }
};

struct Peak {
  double center = 0.0;      // x of the apex (derivative zero crossing)
  double height = 0.0;      // smoothed value at the center minus the baseline (< 0 for dips)
  double fwhm = 0.0;        // full width at half height, x units
  double prominence = 0.0;  // > 0, y units (also for dips)
  int apex_index = 0;       // the highest smoothed sample of the peak
  int left_index = 0;       // index range of the peak: its left base ...
  int right_index = 0;      // ... and its right base
  bool is_width_from_prominence = false;  // width used the half-prominence level
  bool is_shoulder = false;  // no maximum of its own: prominence is 0, listed after peaks
};

struct PeakList {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  std::vector<Peak> peaks;  // most prominent first
  double noise_sigma = 0.0;
  double prominence_threshold = 0.0;  // the threshold actually applied, y units
  Baseline baseline;
  SmoothedCurve smoothed;  // the smoothed signal the peaks were found on (not negated)

  bool IsOk() const { return status == SignalStatus::kOk; }
};

// x strictly increasing (SortAndMerge), enough points for the smoothing window, y not
// constant. No peaks above the threshold is not an error: an empty list with status kOk.
PeakList FindPeaks(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                   const PeakOptions& options = PeakOptions());

// The noise estimate and smoothing FindPeaks starts from. They do not depend on
// options.negative: the noise estimate, the window rule and the smoother all commute with
// negating y, so a caller looking for both peaks and dips smooths once.
struct PeakSmoothing {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  double noise_sigma = 0.0;
  SmoothedCurve smoothed;  // of y as given (not negated)

  bool IsOk() const { return status == SignalStatus::kOk; }
};
PeakSmoothing SmoothForPeaks(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                             const PeakOptions& options = PeakOptions());

// FindPeaks from a smoothing SmoothForPeaks made of the same x and y with the same
// options.smoothing; the result is identical to FindPeaks(x, y, options).
PeakList FindPeaks(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                   const PeakSmoothing& smoothing, const PeakOptions& options);

}  // namespace signal
}  // namespace foothold
