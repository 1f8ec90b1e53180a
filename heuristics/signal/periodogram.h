#pragma once
// Lomb-Scargle periodogram for unevenly spaced data (Lomb 1976; Scargle 1982, ApJ 263, 835),
// in the classical form normalised by the variance (Horne & Baliunas 1986, ApJ 302, 757):
//
//   P(f) = [ (sum Y_i cos w(t_i - tau))^2 / sum cos^2 w(t_i - tau)
//          + (sum Y_i sin w(t_i - tau))^2 / sum sin^2 w(t_i - tau) ] / (2 var y),
//   w = 2 pi f,  Y_i = y_i - mean y,  tan(2 w tau) = sum sin 2 w t_i / sum cos 2 w t_i
//
// (Scargle 1982, eq. 10 and 11). The offset tau makes P invariant to shifts of t and equal
// to the reduction in the sum of squares of a least-squares sinusoid at f.
//
// Frequency grid: f_k = k df, k = 1..K, df = 1 / (oversampling * span), up to
// f_max = nyquist_factor / (2 * median spacing), the Nyquist frequency of an even grid with
// the median spacing. K stays below max_grid_points by widening df. The sums come from
// trigonometric recurrences over the grid (one complex multiply per point and frequency),
// so the cost is O(n K) with no trigonometric calls in the inner loop.

#include <Eigen/Core>
#include <string>
#include <vector>

#include "heuristics/signal/signal_status.h"

namespace foothold {
namespace signal {

struct LombScargleOptions {
  // Grid points per resolution element 1 / span. >= 1; default 5.
  double oversampling = 5.0;
  // Highest frequency as a multiple of 1 / (2 * median spacing). > 0; default 1.
  double nyquist_factor = 1.0;
  // Cap on the grid size; df widens to respect it. >= 16; default 50000.
  int max_grid_points = 50000;
  // How many local maxima of the spectrum to report (refined). >= 1; default 5.
  int num_candidates = 5;
  // Keep the whole grid and spectrum in the result. Default false.
  bool keep_spectrum = false;

  bool Validate(std::string* error) const;
};

struct SpectralPeak {
  double frequency = 0.0;  // cycles per x unit, refined by parabolic interpolation
  double power = 0.0;      // normalised power at that frequency (recomputed exactly)
};

struct Periodogram {
  SignalStatus status = SignalStatus::kOk;
  std::string message;
  double best_frequency = 0.0;
  double best_power = 0.0;
  // Least-squares sinusoid at best_frequency, in the original x:
  // y ~ amplitude * sin(2 pi best_frequency x + phase) + offset, amplitude >= 0,
  // phase in (-pi, pi].
  double amplitude = 0.0;
  double phase = 0.0;
  double offset = 0.0;
  // Chance that pure Gaussian noise gives a peak this high somewhere on the grid:
  // 1 - (1 - exp(-P))^M with M = (f_max - df) * span independent frequencies (Scargle 1982,
  // eq. 14, with the usual estimate of M). Approximate; small means significant.
  double false_alarm_probability = 1.0;
  std::vector<SpectralPeak> candidates;  // strongest first; candidates[0] is the best
  double frequency_step = 0.0;           // df
  double max_frequency = 0.0;            // f_max
  int num_frequencies = 0;               // K
  Eigen::VectorXd frequencies;           // keep_spectrum only
  Eigen::VectorXd powers;                // keep_spectrum only

  bool IsOk() const { return status == SignalStatus::kOk; }
};

// x strictly increasing (SortAndMerge), at least 4 points, y not constant.
Periodogram ComputeLombScargle(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                               const LombScargleOptions& options = LombScargleOptions());

// The normalised power at one frequency, O(n). Same preconditions.
double LombScarglePower(const Eigen::VectorXd& x, const Eigen::VectorXd& y, double frequency);

}  // namespace signal
}  // namespace foothold
