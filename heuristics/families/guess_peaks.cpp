// Guesses for the peak families. Peaks come from the smoothed-derivative detector with
// their half-height widths; the k most prominent are kept and missing ones are made by
// splitting the widest peak or placed at the largest residual. Heights and the baseline are
// then solved by linear least squares for the chosen centers and widths. Widths convert as
// sigma = FWHM / (2 sqrt(2 ln 2)) = FWHM / 2.3548 and hwhm = FWHM / 2.

#include <algorithm>
#include <cmath>
#include <vector>

#include "heuristics/families/guess_families.h"
#include "heuristics/signal/linear_fit.h"
#include "heuristics/signal/peaks.h"

namespace foothold {
namespace guess {
namespace {

constexpr double kFwhmPerSigma = 2.3548200450309493;  // 2 sqrt(2 ln 2)
// Relative heights of unit peaks one FWHM from their center: Gaussian exp(-4 ln 2) and
// Lorentzian 1 / (1 + 4); the measured ratio places eta between them.
constexpr double kGaussianAtFwhm = 0.0625;
constexpr double kLorentzianAtFwhm = 0.2;

enum class Shape { kGaussian, kLorentzian, kPseudoVoigt };

struct Seed {
  double center = 0;
  double fwhm = 0;
  double height = 0;
};

struct PeakFamily {
  Shape shape = Shape::kGaussian;
  int num_peaks = 1;
  bool is_multi = false;
};

double UnitPeak(Shape shape, double x, double center, double fwhm) {
  const double d = (x - center) / fwhm;
  if (shape == Shape::kLorentzian) return 1.0 / (1.0 + 4.0 * d * d);
  return std::exp(-4.0 * std::log(2.0) * d * d);
}

// Heights and baseline by weighted least squares for fixed centers and widths; returns the
// rss on the curve (+inf when singular).
double SolveHeights(const Curve& curve, Shape shape, std::vector<Seed>* seeds, double* baseline) {
  const int n = curve.NumPoints();
  const int k = static_cast<int>(seeds->size());
  Eigen::MatrixXd design(n, k + 1);
  for (int i = 0; i < n; ++i) {
    for (int m = 0; m < k; ++m) {
      design(i, m) = UnitPeak(shape, curve.x[i], (*seeds)[m].center, (*seeds)[m].fwhm);
    }
    design(i, k) = 1.0;
  }
  Eigen::VectorXd coefficients;
  const double rss = SolveSmallLeastSquares(design, curve.y, curve.weight, &coefficients);
  if (!std::isfinite(rss)) return rss;
  for (int m = 0; m < k; ++m) (*seeds)[m].height = coefficients[m];
  *baseline = coefficients[k];
  return rss;
}

// The next seed at the largest residual of the current seeds (in the peaks' direction),
// its width from where that residual falls to half.
Seed ResidualSeed(const Curve& curve, Shape shape, const std::vector<Seed>& seeds, double baseline,
                  double sign, double default_fwhm) {
  const int n = curve.NumPoints();
  Eigen::VectorXd residual(n);
  for (int i = 0; i < n; ++i) {
    double value = baseline;
    for (const Seed& seed : seeds)
      value += seed.height * UnitPeak(shape, curve.x[i], seed.center, seed.fwhm);
    residual[i] = sign * (curve.y[i] - value);
  }
  // A short running mean keeps a single noisy point from winning.
  const int half = std::max(1, n / 100);
  Eigen::VectorXd smooth(n);
  for (int i = 0; i < n; ++i) {
    const int lo = std::max(0, i - half), hi = std::min(n - 1, i + half);
    smooth[i] = residual.segment(lo, hi - lo + 1).mean();
  }
  // The outermost points hold baseline misfit more often than a peak: skip them.
  const int margin = std::min(std::max(1, n / 50), (n - 1) / 2);
  Eigen::Index apex = 0;
  smooth.segment(margin, n - 2 * margin).maxCoeff(&apex);
  apex += margin;
  const double level = 0.5 * smooth[apex];
  Eigen::Index left = apex, right = apex;
  while (left > 0 && smooth[left] > level) --left;
  while (right < n - 1 && smooth[right] > level) ++right;
  double fwhm = curve.x[right] - curve.x[left];
  if (!(fwhm > 0) || fwhm > 2 * default_fwhm) fwhm = default_fwhm;
  return {curve.x[apex], fwhm, sign * smooth[apex]};
}

// Splits the widest seed in two, each half as wide, a quarter of its width either side.
void SplitWidest(std::vector<Seed>* seeds) {
  auto widest = std::max_element(seeds->begin(), seeds->end(),
                                 [](const Seed& a, const Seed& b) { return a.fwhm < b.fwhm; });
  const Seed old = *widest;
  *widest = {old.center - 0.25 * old.fwhm, 0.5 * old.fwhm, old.height};
  seeds->push_back({old.center + 0.25 * old.fwhm, 0.5 * old.fwhm, old.height});
}

// Apex and half-height width of the raw curve above a low-quantile baseline.
Seed HalfHeightSeed(const Curve& curve, double sign, double min_fwhm) {
  const Eigen::VectorXd y = sign * curve.y;
  const double base = Quantile(y, 0.1);
  Eigen::Index apex = 0;
  y.maxCoeff(&apex);
  const double level = base + 0.5 * (y[apex] - base);
  const int n = curve.NumPoints();
  double low = curve.x_min, high = curve.x_max;
  for (Eigen::Index j = apex; j > 0; --j) {
    if (y[j - 1] < level) {
      low = curve.x[j - 1] + (level - y[j - 1]) / (y[j] - y[j - 1]) * (curve.x[j] - curve.x[j - 1]);
      break;
    }
  }
  for (Eigen::Index j = apex; j < n - 1; ++j) {
    if (y[j + 1] < level) {
      high = curve.x[j] + (y[j] - level) / (y[j] - y[j + 1]) * (curve.x[j + 1] - curve.x[j]);
      break;
    }
  }
  return {curve.x[apex], std::max(high - low, min_fwhm), sign * (y[apex] - base)};
}

// Center and width from the first two moments of the signal above a low quantile.
Seed MomentSeed(const Curve& curve, double sign, double min_fwhm) {
  const Eigen::VectorXd y = sign * curve.y;
  const double base = Quantile(y, 0.1);
  double sum = 0, first = 0, second = 0;
  for (int i = 0; i < curve.NumPoints(); ++i) {
    const double w = std::max(y[i] - base, 0.0);
    sum += w;
    first += w * curve.x[i];
  }
  if (!(sum > 0)) return HalfHeightSeed(curve, sign, min_fwhm);
  const double center = first / sum;
  for (int i = 0; i < curve.NumPoints(); ++i) {
    const double d = curve.x[i] - center;
    second += std::max(y[i] - base, 0.0) * d * d;
  }
  const double fwhm = kFwhmPerSigma * std::sqrt(second / sum);
  return {center, std::max(fwhm, min_fwhm), sign * (y.maxCoeff() - base)};
}

// k seeds over the signal above a low quantile: the m-th center at the (m + 1/2) / k
// quantile of its area, each as wide as its share of the central 90% of the area.
std::vector<Seed> SpreadSeeds(const Curve& curve, double sign, int k, double min_fwhm) {
  const Eigen::VectorXd y = sign * curve.y;
  const double base = Quantile(y, 0.1);
  const int n = curve.NumPoints();
  Eigen::VectorXd cumulative(n);
  double sum = 0;
  for (int i = 0; i < n; ++i) {
    sum += std::max(y[i] - base, 0.0);
    cumulative[i] = sum;
  }
  std::vector<Seed> seeds;
  if (!(sum > 0)) return seeds;
  cumulative /= sum;
  const double lo = Interpolate(cumulative, curve.x, 0.05);
  const double hi = Interpolate(cumulative, curve.x, 0.95);
  const double fwhm = std::max((hi - lo) / k, min_fwhm);
  for (int m = 0; m < k; ++m) {
    seeds.push_back({Interpolate(cumulative, curve.x, (m + 0.5) / k), fwhm, 0});
  }
  return seeds;
}

// Lorentzian fraction from the relative height one FWHM either side of the center.
double TailEta(const Curve& curve, const Seed& seed, double baseline) {
  if (seed.height == 0) return 0.5;
  double ratio = 0;
  for (double side : {-1.0, 1.0}) {
    ratio += 0.5 * (Interpolate(curve.x, curve.y, seed.center + side * seed.fwhm) - baseline) /
             seed.height;
  }
  return std::clamp((ratio - kGaussianAtFwhm) / (kLorentzianAtFwhm - kGaussianAtFwhm), 0.0, 1.0);
}

Eigen::VectorXd ToParameters(const PeakFamily& family, const std::vector<Seed>& seeds,
                             double baseline, double eta) {
  std::vector<Seed> ordered = seeds;
  std::sort(ordered.begin(), ordered.end(),
            [](const Seed& a, const Seed& b) { return a.center < b.center; });
  if (family.shape == Shape::kPseudoVoigt) {
    Eigen::VectorXd p(5);
    p << ordered[0].height, ordered[0].center, ordered[0].fwhm, eta, baseline;
    return p;
  }
  const double per_fwhm = family.shape == Shape::kGaussian ? 1.0 / kFwhmPerSigma : 0.5;
  Eigen::VectorXd p(3 * ordered.size() + 1);
  for (size_t m = 0; m < ordered.size(); ++m) {
    p.segment<3>(3 * m) << ordered[m].height, ordered[m].center, ordered[m].fwhm * per_fwhm;
  }
  p[p.size() - 1] = baseline;
  return p;
}

// Proposes one candidate from seeds: heights and baseline re-solved for their positions.
void Propose(const Curve& curve, const PeakFamily& family, const std::string& name,
             std::vector<Seed> seeds, CandidateSet* set, double eta = -1) {
  if (seeds.empty()) return;
  double baseline = 0;
  const Shape solve_shape =
      family.shape == Shape::kLorentzian ? Shape::kLorentzian : Shape::kGaussian;
  if (!std::isfinite(SolveHeights(curve, solve_shape, &seeds, &baseline))) return;
  if (eta < 0) eta = family.shape == Shape::kPseudoVoigt ? TailEta(curve, seeds[0], baseline) : 0;
  set->Add(name, ToParameters(family, seeds, baseline, eta), true);
}

PeakFamily Classify(const FamilyRequest& request, int num_parameters) {
  PeakFamily family;
  const std::string& name = request.name;
  family.is_multi = name.rfind("multi_", 0) == 0;
  family.shape = name.find("lorentzian") != std::string::npos ? Shape::kLorentzian
                 : name == "pseudo_voigt"                     ? Shape::kPseudoVoigt
                                                              : Shape::kGaussian;
  family.num_peaks = family.is_multi ? (num_parameters - 1) / 3 : 1;
  return family;
}

// Windows beyond 2 x 15 + 1 points of the (at most kMaxCurvePoints) curve add cost, not
// information, for the widths the guess needs.
signal::PeakOptions PeakDetection() {
  signal::PeakOptions options;
  options.smoothing.max_auto_half_window = 15;
  return options;
}

}  // namespace

// Every candidate for peaks of one direction (sign +1 peaks, -1 dips); returns the seeds
// detected, strongest first (at least one).
std::vector<Seed> ProposeForSign(const Curve& curve, const PeakFamily& family, double sign,
                                 double min_fwhm, const signal::PeakSmoothing& smoothing,
                                 CandidateSet* set_pointer) {
  CandidateSet& set = *set_pointer;
  const int k = family.num_peaks;
  signal::PeakOptions options = PeakDetection();
  options.negative = sign < 0;
  const signal::PeakList found = signal::FindPeaks(curve.x, curve.y, smoothing, options);
  std::vector<Seed> detected;
  if (found.IsOk()) {
    for (const signal::Peak& peak : found.peaks) {
      detected.push_back({peak.center, std::max(peak.fwhm, min_fwhm), peak.height});
    }
  }
  const Seed apex = HalfHeightSeed(curve, sign, min_fwhm);
  if (apex.fwhm <= min_fwhm * 1.01) {
    set.Warn(
        "the highest point stands alone (a single-point spike?): its width is set from the "
        "sampling, " +
        std::to_string(min_fwhm));
  }
  if (detected.empty()) detected.push_back(apex);

  std::vector<Seed> top(detected.begin(), detected.begin() + std::min<size_t>(k, detected.size()));
  std::vector<Seed> split = top;
  while (static_cast<int>(split.size()) < k) SplitWidest(&split);
  Propose(curve, family, top.size() == static_cast<size_t>(k) ? "peaks" : "split", split, &set);

  // Greedy: the strongest peak, then each next one at the largest residual.
  std::vector<Seed> greedy = {detected[0]};
  const double default_fwhm = detected[0].fwhm;
  while (static_cast<int>(greedy.size()) < k) {
    double baseline = 0;
    if (!std::isfinite(SolveHeights(
            curve, family.shape == Shape::kLorentzian ? Shape::kLorentzian : Shape::kGaussian,
            &greedy, &baseline))) {
      break;
    }
    greedy.push_back(ResidualSeed(
        curve, family.shape == Shape::kLorentzian ? Shape::kLorentzian : Shape::kGaussian, greedy,
        baseline, sign, default_fwhm));
  }
  if (static_cast<int>(greedy.size()) == k) Propose(curve, family, "residual", greedy, &set);

  if (k == 1) {
    Propose(curve, family, "halfheight", {apex}, &set);
    Propose(curve, family, "moments", {MomentSeed(curve, sign, min_fwhm)}, &set);
    for (double factor : {0.5, 2.0}) {
      Seed seed = detected[0];
      seed.fwhm *= factor;
      Propose(curve, family, factor < 1 ? "peaks_narrow" : "peaks_wide", {seed}, &set);
    }
    if (family.shape == Shape::kPseudoVoigt) {
      Propose(curve, family, "gaussian_shape", {detected[0]}, &set, 0.0);
      Propose(curve, family, "mixed_shape", {detected[0]}, &set, 0.5);
      Propose(curve, family, "lorentzian_shape", {detected[0]}, &set, 1.0);
    }
  } else {
    Propose(curve, family, "spread", SpreadSeeds(curve, sign, k, min_fwhm), &set);
  }
  if (k > 1 && detected.size() > static_cast<size_t>(k)) {
    // The k most prominent may include a noise bump: also try the k widest-spread subset
    // made of the top k - 1 plus the widest split.
    std::vector<Seed> alternative(detected.begin(), detected.begin() + (k - 1));
    SplitWidest(&alternative);
    Propose(curve, family, "split", alternative, &set);
  }

  return detected;
}

bool GuessPeakFamily(const GuessContext& context, std::string* error) {
  const Curve& curve = *context.curve;
  CandidateSet& set = *context.set;
  const PeakFamily family = Classify(*context.request, set.NumParameters());
  const int k = family.num_peaks;
  const int n = curve.NumPoints();
  const double min_fwhm = 2.0 * curve.XSpan() / std::max(n - 1, 1);
  if (curve.IsConstant()) {
    set.Warn("constant response: peak heights guessed as 0, centers spread over the x range");
    std::vector<Seed> seeds;
    for (int m = 0; m < k; ++m) {
      seeds.push_back({curve.x_min + (m + 0.5) / k * curve.XSpan(), curve.XSpan() / (2.0 * k), 0});
    }
    set.Add("flat", ToParameters(family, seeds, curve.y_min, 0.5), false);
    return true;
  }
  // Direction: peaks or dips, whichever single apex explains more of the data.
  const Shape solve_shape =
      family.shape == Shape::kLorentzian ? Shape::kLorentzian : Shape::kGaussian;
  double sign = 1.0;
  {
    std::vector<Seed> up = {HalfHeightSeed(curve, 1.0, min_fwhm)};
    std::vector<Seed> down = {HalfHeightSeed(curve, -1.0, min_fwhm)};
    double baseline = 0;
    const double rss_up = SolveHeights(curve, solve_shape, &up, &baseline);
    const double rss_down = SolveHeights(curve, solve_shape, &down, &baseline);
    if (rss_down < rss_up && down[0].height < 0) sign = -1.0;
  }
  // Peaks filling much of the window fool both the skew (mean against median) and the
  // single-apex reading, so both directions are always proposed and rss decides; the
  // apex reading only orders them for the scales.
  const signal::PeakSmoothing smoothing = signal::SmoothForPeaks(curve.x, curve.y, PeakDetection());
  const std::vector<Seed> detected = ProposeForSign(curve, family, sign, min_fwhm, smoothing, &set);
  ProposeForSign(curve, family, -sign, min_fwhm, smoothing, &set);
  const double default_fwhm = detected[0].fwhm;

  // Scales: heights from the y range, centers and widths from the peak widths.
  const double y_scale = std::max(curve.YSpan(), std::abs(curve.y_max));
  const int widths_per_peak = family.shape == Shape::kPseudoVoigt ? 5 : 3;
  for (int m = 0; m < k; ++m) {
    const int first = widths_per_peak * m;
    const double fwhm = m < static_cast<int>(detected.size()) ? detected[m].fwhm : default_fwhm;
    set.SetScale(first, curve.YSpan(), false);
    set.SetScale(first + 1, std::max(fwhm, std::abs(detected[0].center)), false);
    set.SetScale(first + 2,
                 family.shape == Shape::kGaussian     ? fwhm / kFwhmPerSigma
                 : family.shape == Shape::kLorentzian ? fwhm / 2
                                                      : fwhm,
                 true);
  }
  if (family.shape == Shape::kPseudoVoigt) set.SetScale(3, 0.5, false);
  set.SetScale(set.NumParameters() - 1, y_scale, false);
  (void)error;
  return true;
}

}  // namespace guess
}  // namespace foothold
