// Guesses for sine and damped_sine. The frequency comes from the Lomb-Scargle periodogram
// (its strongest peaks), refined by a golden-section search of the least-squares fit at
// that frequency; amplitude and phase then follow from the linear fit of
// a sin(w x) + c cos(w x) (+ b): A = hypot(a, c), phase = atan2(c, a), since
// A sin(w x + phase) = A cos(phase) sin(w x) + A sin(phase) cos(w x). For damped_sine the
// same fit carries the envelope exp(-x / tau); tau comes from the log-linear decay of the
// local extrema's distance from the baseline, and from a profile over tau.

#include <algorithm>
#include <cmath>
#include <vector>

#include "heuristics/families/guess_families.h"
#include "heuristics/signal/linear_fit.h"
#include "heuristics/signal/linearise.h"
#include "heuristics/signal/periodogram.h"

namespace foothold {
namespace guess {
namespace {

constexpr double kTwoPi = 6.283185307179586;
constexpr int kProfilePoints = 250;
// Golden-section steps of the frequency refinement: 14 shrink the bracket of +-df to
// 0.618^14 ~ 1e-3 of its width, a phase error of a few milliradians over the span, which
// the fit removes in its first steps (25 cost twice as much for nothing the fit needs).
constexpr int kGoldenSteps = 14;

struct Sinusoid {
  double amplitude = 0, phase = 0, baseline = 0, rss = 0;
};

// Least-squares a exp(-x/tau) sin(wx) + c exp(-x/tau) cos(wx) + b at frequency f (tau = inf
// for no envelope). rss = +inf when singular.
Sinusoid FitAt(const Curve& curve, double frequency, double tau) {
  const int n = curve.NumPoints();
  Eigen::MatrixXd design(n, 3);
  for (int i = 0; i < n; ++i) {
    const double envelope = std::isfinite(tau) ? std::exp(-curve.x[i] / tau) : 1.0;
    const double angle = kTwoPi * frequency * curve.x[i];
    design(i, 0) = envelope * std::sin(angle);
    design(i, 1) = envelope * std::cos(angle);
    design(i, 2) = 1.0;
  }
  Sinusoid out;
  out.rss = std::numeric_limits<double>::infinity();
  if (!design.allFinite()) return out;
  Eigen::VectorXd c;
  const double rss = SolveSmallLeastSquares(design, curve.y, curve.weight, &c);
  if (!std::isfinite(rss)) return out;
  out.amplitude = std::hypot(c[0], c[1]);
  out.phase = std::atan2(c[1], c[0]);
  out.baseline = c[2];
  out.rss = rss;
  return out;
}

// Golden-section search of the fit's rss over [f - step, f + step].
double RefineFrequency(const Curve& curve, double frequency, double step, double tau) {
  double a = std::max(frequency - step, 0.25 * frequency), b = frequency + step;
  double best = frequency, best_rss = FitAt(curve, frequency, tau).rss;
  const double ratio = 0.5 * (std::sqrt(5.0) - 1.0);
  for (int k = 0; k < kGoldenSteps; ++k) {
    const double c = b - ratio * (b - a), d = a + ratio * (b - a);
    const double fc = FitAt(curve, c, tau).rss, fd = FitAt(curve, d, tau).rss;
    if (fc < best_rss) best_rss = fc, best = c;
    if (fd < best_rss) best_rss = fd, best = d;
    if (fc < fd) {
      b = d;
    } else {
      a = c;
    }
  }
  return best;
}

// tau from the decay of the local extrema of |y - baseline| (log-linear); 0 if unusable.
double EnvelopeTau(const Curve& curve, double baseline) {
  std::vector<double> u, v;
  for (int i = 1; i + 1 < curve.NumPoints(); ++i) {
    const double a = std::abs(curve.y[i - 1] - baseline), b = std::abs(curve.y[i] - baseline),
                 c = std::abs(curve.y[i + 1] - baseline);
    if (b >= a && b >= c && b > 0) {
      u.push_back(curve.x[i]);
      v.push_back(b);
    }
  }
  if (u.size() < 3) return 0;
  const signal::LinearisedFit fit =
      signal::FitLogLinear(Eigen::Map<Eigen::VectorXd>(u.data(), u.size()),
                           Eigen::Map<Eigen::VectorXd>(v.data(), v.size()));
  return fit.IsOk() && fit.slope < 0 ? -1.0 / fit.slope : 0;
}

}  // namespace

bool GuessOscillationFamily(const GuessContext& context, std::string* error) {
  const Curve& full = *context.curve;
  CandidateSet& set = *context.set;
  const bool damped = context.request->name == "damped_sine";
  const double span = full.XSpan();
  if (full.NumPoints() < 4) {
    if (error != nullptr) {
      *error = context.request->name + " needs at least 4 points with distinct x: got " +
               std::to_string(full.NumPoints());
    }
    return false;
  }
  if (full.IsConstant()) {
    set.Warn("constant response: amplitude guessed as 0, frequency as one cycle over the x span");
    Eigen::VectorXd p = Eigen::VectorXd::Zero(set.NumParameters());
    if (damped) {
      p << 0, span, 1.0 / span, 0, full.y_min;
    } else {
      p << 0, 1.0 / span, 0, full.y_min;
    }
    set.Add("flat", p, false);
    return true;
  }
  const Curve curve = Subsample(full, kProfilePoints);
  signal::LombScargleOptions options;
  options.num_candidates = 3;
  const signal::Periodogram spectrum = signal::ComputeLombScargle(full.x, full.y, options);
  std::vector<double> frequencies;
  if (spectrum.IsOk()) {
    for (const signal::SpectralPeak& peak : spectrum.candidates)
      frequencies.push_back(peak.frequency);
  }
  if (frequencies.empty()) frequencies.push_back(1.0 / span);
  const double step =
      spectrum.IsOk() && spectrum.frequency_step > 0 ? spectrum.frequency_step : 0.2 / span;
  const std::vector<double> taus = Spaced(0.05 * span, 20 * span, 12, true);
  for (size_t k = 0; k < frequencies.size(); ++k) {
    const std::string name = k == 0 ? "periodogram" : "periodogram" + std::to_string(k + 1);
    const double inf = std::numeric_limits<double>::infinity();
    double f = RefineFrequency(curve, frequencies[k], step, inf);
    if (!damped) {
      const Sinusoid s = FitAt(curve, f, inf);
      if (std::isfinite(s.rss)) set.Add(name, Eigen::Vector4d(s.amplitude, f, s.phase, s.baseline));
      continue;
    }
    // Envelope from the extrema about the undamped fit's baseline, then a profile over tau.
    const double envelope_tau = EnvelopeTau(full, FitAt(curve, f, inf).baseline);
    double best_tau = envelope_tau > 0 ? envelope_tau : span;
    double best_rss = FitAt(curve, f, best_tau).rss;
    for (double tau : taus) {
      const double rss = FitAt(curve, f, tau).rss;
      if (rss < best_rss) best_rss = rss, best_tau = tau;
    }
    f = RefineFrequency(curve, f, step, best_tau);
    for (const double tau : {best_tau, envelope_tau}) {
      if (!(tau > 0)) continue;
      const Sinusoid s = FitAt(curve, f, tau);
      if (!std::isfinite(s.rss)) continue;
      Eigen::VectorXd p(5);
      p << s.amplitude, tau, f, s.phase, s.baseline;
      set.Add(tau == best_tau ? name : name + "_envelope", p);
    }
  }
  const double amplitude = 0.5 * full.YSpan();
  set.SetScale(0, amplitude, false);
  if (damped) {
    set.SetScale(1, span / 2, true);
    set.SetScale(2, frequencies[0], true);
    set.SetScale(3, 3.14159, false);
    set.SetScale(4, std::max(amplitude, std::abs(full.y.mean())), false);
  } else {
    set.SetScale(1, frequencies[0], true);
    set.SetScale(2, 3.14159, false);
    set.SetScale(3, std::max(amplitude, std::abs(full.y.mean())), false);
  }
  return true;
}

}  // namespace guess
}  // namespace foothold
