#include "heuristics/signal/periodogram.h"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "heuristics/signal/internal/curve_checks.h"
#include "heuristics/signal/internal/robust_stats.h"
#include "heuristics/signal/linear_fit.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kTwoPi = 6.283185307179586;
constexpr int kMinPoints = 4;
// Recurrences drift by about one rounding error per step; restart them from exact values
// this often.
constexpr int kRecurrenceRestart = 512;

// The four sums of Scargle 1982 at angular frequency w, from C = sum Y cos wt, S = sum Y sin
// wt, C2 = sum cos 2wt, S2 = sum sin 2wt, n points and variance var.
double PowerFromSums(double c, double s, double c2, double s2, double n, double variance) {
  const double two_w_tau = std::atan2(s2, c2);
  const double cos_tau = std::cos(0.5 * two_w_tau);
  const double sin_tau = std::sin(0.5 * two_w_tau);
  const double r = std::hypot(c2, s2);
  // sum cos^2 w(t - tau) = (n + R) / 2, sum sin^2 w(t - tau) = (n - R) / 2.
  const double cos_norm = 0.5 * (n + r);
  const double sin_norm = 0.5 * (n - r);
  const double yc = c * cos_tau + s * sin_tau;
  const double ys = s * cos_tau - c * sin_tau;
  double power = 0.0;
  if (cos_norm > 1e-12 * n) power += yc * yc / cos_norm;
  if (sin_norm > 1e-12 * n) power += ys * ys / sin_norm;
  return power / (2.0 * variance);
}

struct Centred {
  Eigen::VectorXd t;  // x - x[0]: the power does not depend on the origin
  Eigen::VectorXd residual;
  double variance = 0.0;
};

Centred Centre(const Eigen::VectorXd& x, const Eigen::VectorXd& y) {
  Centred c;
  c.t = x.array() - x[0];
  c.residual = y.array() - y.mean();
  c.variance = c.residual.squaredNorm() / static_cast<double>(y.size() - 1);
  return c;
}

double PowerAt(const Centred& c, double frequency) {
  double sc = 0.0, ss = 0.0, sc2 = 0.0, ss2 = 0.0;
  for (Eigen::Index i = 0; i < c.t.size(); ++i) {
    const double angle = kTwoPi * frequency * c.t[i];
    sc += c.residual[i] * std::cos(angle);
    ss += c.residual[i] * std::sin(angle);
    sc2 += std::cos(2.0 * angle);
    ss2 += std::sin(2.0 * angle);
  }
  return PowerFromSums(sc, ss, sc2, ss2, static_cast<double>(c.t.size()), c.variance);
}

// Adds the four sums for points [first, first + kLanes) at every grid frequency. The points
// rotate exp(i w t) one grid step at a time, side by side, so that the independent
// recurrences overlap in the pipeline instead of waiting on each other.
template <int kLanes>
void AccumulateLanes(const Centred& c, Eigen::Index first, double df, int num_frequencies,
                     Eigen::VectorXd* sum_c, Eigen::VectorXd* sum_s, Eigen::VectorXd* sum_c2,
                     Eigen::VectorXd* sum_s2) {
  double step[kLanes], step_cos[kLanes], step_sin[kLanes], y[kLanes], cw[kLanes], sw[kLanes];
  for (int l = 0; l < kLanes; ++l) {
    step[l] = kTwoPi * df * c.t[first + l];
    step_cos[l] = std::cos(step[l]);
    step_sin[l] = std::sin(step[l]);
    y[l] = c.residual[first + l];
    cw[l] = step_cos[l];
    sw[l] = step_sin[l];
  }
  for (int k = 0; k < num_frequencies; ++k) {
    if (k > 0 && k % kRecurrenceRestart == 0) {
      for (int l = 0; l < kLanes; ++l) {
        cw[l] = std::cos((k + 1) * step[l]);
        sw[l] = std::sin((k + 1) * step[l]);
      }
    }
    double add_c = 0.0, add_s = 0.0, add_c2 = 0.0, add_s2 = 0.0;
    for (int l = 0; l < kLanes; ++l) {
      add_c += y[l] * cw[l];
      add_s += y[l] * sw[l];
      add_c2 += (cw[l] - sw[l]) * (cw[l] + sw[l]);  // cos 2wt
      add_s2 += 2.0 * cw[l] * sw[l];                // sin 2wt
      const double next_cos = cw[l] * step_cos[l] - sw[l] * step_sin[l];
      sw[l] = sw[l] * step_cos[l] + cw[l] * step_sin[l];
      cw[l] = next_cos;
    }
    (*sum_c)[k] += add_c;
    (*sum_s)[k] += add_s;
    (*sum_c2)[k] += add_c2;
    (*sum_s2)[k] += add_s2;
  }
}

// Powers at f_k = (k + 1) df, k = 0..K-1.
Eigen::VectorXd PowersOnGrid(const Centred& c, double df, int num_frequencies) {
  constexpr int kLanes = 4;
  Eigen::VectorXd sum_c = Eigen::VectorXd::Zero(num_frequencies);
  Eigen::VectorXd sum_s = sum_c, sum_c2 = sum_c, sum_s2 = sum_c;
  const Eigen::Index n = c.t.size();
  Eigen::Index i = 0;
  for (; i + kLanes <= n; i += kLanes) {
    AccumulateLanes<kLanes>(c, i, df, num_frequencies, &sum_c, &sum_s, &sum_c2, &sum_s2);
  }
  for (; i < n; ++i) {
    AccumulateLanes<1>(c, i, df, num_frequencies, &sum_c, &sum_s, &sum_c2, &sum_s2);
  }
  Eigen::VectorXd powers(num_frequencies);
  const double count = static_cast<double>(n);
  for (int k = 0; k < num_frequencies; ++k) {
    powers[k] = PowerFromSums(sum_c[k], sum_s[k], sum_c2[k], sum_s2[k], count, c.variance);
  }
  return powers;
}

}  // namespace

bool LombScargleOptions::Validate(std::string* error) const {
  std::ostringstream text;
  if (!(oversampling >= 1.0) || !std::isfinite(oversampling)) {
    text << "oversampling = " << oversampling << ": must be finite and >= 1";
  } else if (!(nyquist_factor > 0.0) || !std::isfinite(nyquist_factor)) {
    text << "nyquist_factor = " << nyquist_factor << ": must be finite and > 0";
  } else if (max_grid_points < 16) {
    text << "max_grid_points = " << max_grid_points << ": must be >= 16";
  } else if (num_candidates < 1) {
    text << "num_candidates = " << num_candidates << ": must be >= 1";
  }
  if (text.tellp() == 0) return true;
  if (error) *error = text.str();
  return false;
}

double LombScarglePower(const Eigen::VectorXd& x, const Eigen::VectorXd& y, double frequency) {
  internal::CurveRequirements requirements;
  requirements.min_points = kMinPoints;
  if (internal::CheckCurve(x, y, requirements, nullptr) != SignalStatus::kOk) return 0.0;
  return PowerAt(Centre(x, y), frequency);
}

Periodogram ComputeLombScargle(const Eigen::VectorXd& x, const Eigen::VectorXd& y,
                               const LombScargleOptions& options) {
  Periodogram out;
  if (!options.Validate(&out.message)) {
    out.status = SignalStatus::kInvalidOptions;
    return out;
  }
  internal::CurveRequirements requirements;
  requirements.min_points = kMinPoints;
  out.status = internal::CheckCurve(x, y, requirements, &out.message);
  if (!out.IsOk()) return out;

  const Eigen::Index n = x.size();
  const double span = x[n - 1] - x[0];
  std::vector<double> spacings(static_cast<size_t>(n - 1));
  for (Eigen::Index i = 0; i + 1 < n; ++i) spacings[i] = x[i + 1] - x[i];
  out.max_frequency = options.nyquist_factor / (2.0 * internal::Median(spacings));
  out.frequency_step = 1.0 / (options.oversampling * span);
  double grid = std::floor(out.max_frequency / out.frequency_step);
  if (grid > options.max_grid_points) {
    out.frequency_step = out.max_frequency / options.max_grid_points;
    grid = options.max_grid_points;
  }
  out.num_frequencies = std::max(1, static_cast<int>(grid));

  const Centred centred = Centre(x, y);
  const Eigen::VectorXd powers = PowersOnGrid(centred, out.frequency_step, out.num_frequencies);
  const int num_frequencies = out.num_frequencies;
  std::vector<int> maxima;
  for (int k = 0; k < num_frequencies; ++k) {
    const bool above_left = k == 0 || powers[k] > powers[k - 1];
    const bool above_right = k + 1 == num_frequencies || powers[k] >= powers[k + 1];
    if (above_left && above_right) maxima.push_back(k);
  }
  std::sort(maxima.begin(), maxima.end(),
            [&powers](int a, int b) { return powers[a] > powers[b]; });
  if (maxima.size() > static_cast<size_t>(options.num_candidates)) {
    maxima.resize(static_cast<size_t>(options.num_candidates));
  }
  for (int k : maxima) {
    SpectralPeak peak;
    double offset = 0.0;
    if (k > 0 && k + 1 < num_frequencies) {
      // Vertex of the parabola through the three grid powers around the maximum.
      const double left = powers[k - 1], mid = powers[k], right = powers[k + 1];
      const double curvature = left - 2.0 * mid + right;
      if (curvature < 0.0) offset = std::clamp(0.5 * (left - right) / curvature, -0.5, 0.5);
    }
    peak.frequency = (k + 1 + offset) * out.frequency_step;
    peak.power = std::max(PowerAt(centred, peak.frequency), powers[k]);
    if (peak.power == powers[k]) peak.frequency = (k + 1) * out.frequency_step;
    out.candidates.push_back(peak);
  }
  std::stable_sort(out.candidates.begin(), out.candidates.end(),
                   [](const SpectralPeak& a, const SpectralPeak& b) { return a.power > b.power; });
  out.best_frequency = out.candidates.front().frequency;
  out.best_power = out.candidates.front().power;
  const double independent = std::max(1.0, (out.max_frequency - out.frequency_step) * span);
  out.false_alarm_probability = 1.0 - std::pow(1.0 - std::exp(-out.best_power), independent);

  // Least-squares sinusoid a sin(wx) + b cos(wx) + c = A sin(wx + phase) + c.
  Eigen::MatrixXd design(n, 3);
  const double w = kTwoPi * out.best_frequency;
  for (Eigen::Index i = 0; i < n; ++i) {
    design(i, 0) = std::sin(w * x[i]);
    design(i, 1) = std::cos(w * x[i]);
    design(i, 2) = 1.0;
  }
  const LinearFit sinusoid = SolveWeightedLeastSquares(design, y);
  if (sinusoid.IsOk()) {
    out.amplitude = std::hypot(sinusoid.coefficients[0], sinusoid.coefficients[1]);
    out.phase = std::atan2(sinusoid.coefficients[1], sinusoid.coefficients[0]);
    out.offset = sinusoid.coefficients[2];
  } else {
    out.status = sinusoid.status;
    out.message = "sinusoid at the best frequency: " + sinusoid.message;
  }
  if (options.keep_spectrum) {
    out.frequencies = Eigen::VectorXd::LinSpaced(num_frequencies, out.frequency_step,
                                                 num_frequencies * out.frequency_step);
    out.powers = powers;
  }
  return out;
}

}  // namespace signal
}  // namespace foothold
