// Peak detection on smoothed, noisy, unevenly spaced data.

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <vector>

#include "heuristics/signal/peaks.h"
#include "heuristics/signal/sort_merge.h"

namespace foothold {
namespace signal {
namespace {

// FWHM = 2 sqrt(2 ln 2) sigma for a Gaussian (standard result).
const double kFwhmPerSigma = 2.0 * std::sqrt(2.0 * std::log(2.0));
constexpr double kRelativeFwhmTolerance = 0.05;
constexpr double kCenterToleranceInSteps = 0.5;
constexpr double kRelativeHeightTolerance = 0.05;
// Noise standard deviation: about 1% of the peak heights (signal-to-noise 100 to 270).
constexpr double kNoise = 0.03;

struct GaussianPeak {
  double height, center, sigma;
};

double Evaluate(const std::vector<GaussianPeak>& peaks, double baseline, double slope, double x) {
  double y = baseline + slope * x;
  for (const GaussianPeak& p : peaks) {
    const double z = (x - p.center) / p.sigma;
    y += p.height * std::exp(-0.5 * z * z);
  }
  return y;
}

// Unevenly spaced, shuffled samples with Gaussian noise, prepared with SortAndMerge.
PreparedCurve MakeCurve(const std::vector<GaussianPeak>& peaks, double sign, double noise_sigma,
                        unsigned seed) {
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> jitter(-0.4, 0.4);
  std::normal_distribution<double> noise(0.0, noise_sigma);
  const int n = 1000;
  const double step = 0.1;
  Eigen::VectorXd x(n), y(n);
  for (int i = 0; i < n; ++i) {
    x[i] = step * (i + jitter(rng));
    y[i] = sign * Evaluate(peaks, 0.0, 0.0, x[i]) + 2.0 + 0.01 * x[i] + noise(rng);
  }
  std::vector<int> order(n);
  for (int i = 0; i < n; ++i) order[i] = i;
  std::shuffle(order.begin(), order.end(), rng);
  Eigen::VectorXd xs(n), ys(n);
  for (int i = 0; i < n; ++i) {
    xs[i] = x[order[i]];
    ys[i] = y[order[i]];
  }
  return SortAndMerge(xs, ys);
}

void CheckRecovered(const std::vector<GaussianPeak>& truth, const PeakList& found, double sign) {
  REQUIRE(found.IsOk());
  REQUIRE(found.peaks.size() == truth.size());
  for (const GaussianPeak& p : truth) {
    const auto match = std::min_element(
        found.peaks.begin(), found.peaks.end(), [&p](const Peak& a, const Peak& b) {
          return std::abs(a.center - p.center) < std::abs(b.center - p.center);
        });
    INFO("true center " << p.center << " found " << match->center << " fwhm " << match->fwhm
                        << " height " << match->height);
    CHECK(std::abs(match->center - p.center) < kCenterToleranceInSteps * 0.1);
    CHECK(match->fwhm == Approx(kFwhmPerSigma * p.sigma).epsilon(kRelativeFwhmTolerance));
    CHECK(match->height == Approx(sign * p.height).epsilon(kRelativeHeightTolerance));
    CHECK(match->left_index < match->apex_index);
    CHECK(match->apex_index < match->right_index);
  }
  for (size_t k = 1; k < found.peaks.size(); ++k) {
    CHECK(found.peaks[k - 1].prominence >= found.peaks[k].prominence);
  }
}

const std::vector<GaussianPeak> kThreePeaks = {
    {5.0, 20.0, 2.0}, {3.0, 50.0, 1.2}, {8.0, 75.0, 3.0}};

TEST_CASE("FindPeaks: three separated gaussians on noisy uneven data", "[heuristics]") {
  const PreparedCurve curve = MakeCurve(kThreePeaks, 1.0, kNoise, 2024);
  REQUIRE(curve.IsOk());
  const PeakList found = FindPeaks(curve.x, curve.y);
  CheckRecovered(kThreePeaks, found, 1.0);
  CHECK(found.peaks[0].center == Approx(75.0).margin(0.05));  // the most prominent
  CHECK(found.noise_sigma == Approx(kNoise).epsilon(0.15));
}

TEST_CASE("FindPeaks: negative-going peaks when asked", "[heuristics]") {
  const PreparedCurve curve = MakeCurve(kThreePeaks, -1.0, kNoise, 7);
  REQUIRE(curve.IsOk());
  PeakOptions options;
  // Searching maxima finds the baseline between the dips, never a dip itself.
  for (const Peak& maximum : FindPeaks(curve.x, curve.y, options).peaks) {
    for (const GaussianPeak& dip : kThreePeaks) {
      CHECK(std::abs(maximum.center - dip.center) > 3.0 * dip.sigma);
    }
  }
  options.negative = true;
  const PeakList found = FindPeaks(curve.x, curve.y, options);
  CheckRecovered(kThreePeaks, found, -1.0);
  CHECK(found.baseline.At(50.0) == Approx(2.5).margin(0.1));
}

TEST_CASE("FindPeaks: one shared smoothing gives the same peaks and dips as separate runs",
          "[heuristics]") {
  // A curve with both peaks and dips, so that both directions find something.
  PreparedCurve curve = MakeCurve({{5.0, 20.0, 2.0}, {3.0, 75.0, 3.0}}, 1.0, kNoise, 99);
  REQUIRE(curve.IsOk());
  for (Eigen::Index i = 0; i < curve.x.size(); ++i) {
    const double z = (curve.x[i] - 50.0) / 2.5;
    curve.y[i] -= 4.0 * std::exp(-0.5 * z * z);
  }
  PeakOptions options;
  const PeakSmoothing smoothing = SmoothForPeaks(curve.x, curve.y, options);
  REQUIRE(smoothing.IsOk());
  for (bool negative : {false, true}) {
    INFO("negative " << negative);
    options.negative = negative;
    const PeakList separate = FindPeaks(curve.x, curve.y, options);
    const PeakList shared = FindPeaks(curve.x, curve.y, smoothing, options);
    REQUIRE(separate.IsOk());
    REQUIRE(shared.IsOk());
    REQUIRE(!shared.peaks.empty());
    REQUIRE(shared.peaks.size() == separate.peaks.size());
    for (size_t k = 0; k < shared.peaks.size(); ++k) {
      CHECK(shared.peaks[k].center == separate.peaks[k].center);
      CHECK(shared.peaks[k].height == separate.peaks[k].height);
      CHECK(shared.peaks[k].fwhm == separate.peaks[k].fwhm);
      CHECK(shared.peaks[k].prominence == separate.peaks[k].prominence);
    }
    CHECK(shared.noise_sigma == separate.noise_sigma);
    CHECK(shared.smoothed.half_window == separate.smoothed.half_window);
    CHECK(shared.smoothed.value == separate.smoothed.value);
  }
  // A smoothing that failed is passed on with its status and message.
  const Eigen::VectorXd two = Eigen::VectorXd::LinSpaced(2, 0.0, 1.0);
  const PeakSmoothing failed = SmoothForPeaks(two, two, options);
  CHECK(failed.status == SignalStatus::kTooFewPoints);
  const PeakList none = FindPeaks(two, two, failed, options);
  CHECK(none.status == failed.status);
  CHECK(none.message == failed.message);
}

TEST_CASE("FindPeaks: dense random sampling with flat, jittery tops", "[heuristics]") {
  // 5000 uniformly random x: about 75 samples per sigma, so the smoothed top holds many
  // sample-level local maxima; each peak must still come out once, with its full prominence.
  std::mt19937 rng(8);
  std::uniform_real_distribution<double> when(0.0, 100.0);
  std::normal_distribution<double> noise(0.0, 0.05);
  const std::vector<GaussianPeak> truth = {{3.0, 30.0, 1.5}, {2.0, 60.0, 0.8}};
  const int n = 5000;
  Eigen::VectorXd x(n), y(n);
  for (int i = 0; i < n; ++i) {
    x[i] = when(rng);
    y[i] = Evaluate(truth, 0.0, 0.0, x[i]) + noise(rng);
  }
  const PreparedCurve curve = SortAndMerge(x, y);
  const PeakList found = FindPeaks(curve.x, curve.y);
  REQUIRE(found.IsOk());
  REQUIRE(found.peaks.size() == 2);
  CHECK(found.peaks[0].center == Approx(30.0).margin(0.05));
  CHECK(found.peaks[0].fwhm == Approx(kFwhmPerSigma * 1.5).epsilon(kRelativeFwhmTolerance));
  CHECK(found.peaks[1].center == Approx(60.0).margin(0.05));
  CHECK(found.peaks[1].fwhm == Approx(kFwhmPerSigma * 0.8).epsilon(kRelativeFwhmTolerance));
}

TEST_CASE("FindPeaks: overlapped peaks report prominence below height", "[heuristics]") {
  // Two sigma-2 Gaussians 3 sigma apart: the smaller one's valley towards the larger stays
  // above its half height, so its width falls back to the half-prominence level.
  const std::vector<GaussianPeak> truth = {{5.0, 40.0, 2.0}, {3.0, 46.0, 2.0}};
  std::mt19937 rng(3);
  std::normal_distribution<double> noise(0.0, kNoise);
  const int n = 1000;
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(n, 0.0, 100.0);
  Eigen::VectorXd y(n);
  for (int i = 0; i < n; ++i) y[i] = Evaluate(truth, 1.0, 0.0, x[i]) + noise(rng);
  const PeakList found = FindPeaks(x, y);
  REQUIRE(found.IsOk());
  REQUIRE(found.peaks.size() == 2);
  const Peak& shoulder = found.peaks[1];
  CHECK(shoulder.center == Approx(46.0).margin(0.5));  // pulled towards the larger peak
  CHECK(shoulder.prominence < 0.5 * shoulder.height);
  CHECK(shoulder.is_width_from_prominence);
  CHECK(shoulder.fwhm > 0.0);
  CHECK(shoulder.left_index > found.peaks[0].apex_index);  // its base is the valley
  CHECK_FALSE(found.peaks[0].is_width_from_prominence);
}

TEST_CASE("FindPeaks: shoulders without a maximum of their own when asked", "[heuristics]") {
  // 2.5 sigma apart, heights 5 and 3: the sum has a single maximum.
  const std::vector<GaussianPeak> truth = {{5.0, 40.0, 2.0}, {3.0, 45.0, 2.0}};
  std::mt19937 rng(3);
  std::normal_distribution<double> noise(0.0, kNoise);
  const int n = 1000;
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(n, 0.0, 100.0);
  Eigen::VectorXd y(n);
  for (int i = 0; i < n; ++i) y[i] = Evaluate(truth, 1.0, 0.01, x[i]) + noise(rng);
  PeakOptions options;
  REQUIRE(FindPeaks(x, y, options).peaks.size() == 1);
  options.find_shoulders = true;
  const PeakList found = FindPeaks(x, y, options);
  REQUIRE(found.IsOk());
  REQUIRE(found.peaks.size() == 2);
  CHECK_FALSE(found.peaks[0].is_shoulder);
  const Peak& shoulder = found.peaks[1];
  CHECK(shoulder.is_shoulder);
  CHECK(shoulder.prominence == 0.0);
  // Guesses, not fits: the larger neighbour tilts the curvature and narrows the span.
  CHECK(shoulder.center == Approx(45.0).margin(1.0));
  CHECK(shoulder.height == Approx(3.0).epsilon(0.2));
  CHECK(shoulder.fwhm == Approx(kFwhmPerSigma * 2.0).epsilon(0.4));
  CHECK(shoulder.left_index < shoulder.apex_index);
  CHECK(shoulder.apex_index < shoulder.right_index);

  // Well separated peaks give no shoulders.
  const PreparedCurve separated = MakeCurve(kThreePeaks, 1.0, kNoise, 2024);
  const PeakList three = FindPeaks(separated.x, separated.y, options);
  CHECK(three.peaks.size() == 3);
}

TEST_CASE("FindPeaks: max_peaks keeps the most prominent", "[heuristics]") {
  const PreparedCurve curve = MakeCurve(kThreePeaks, 1.0, 0.05, 99);
  PeakOptions options;
  options.max_peaks = 1;
  const PeakList found = FindPeaks(curve.x, curve.y, options);
  REQUIRE(found.peaks.size() == 1);
  CHECK(found.peaks[0].center == Approx(75.0).margin(0.05));
}

TEST_CASE("FindPeaks: pure noise gives no peaks and degenerate data a status", "[heuristics]") {
  std::mt19937 rng(3);
  std::normal_distribution<double> noise(0.0, 1.0);
  const int n = 500;
  Eigen::VectorXd x(n), y(n);
  for (int i = 0; i < n; ++i) {
    x[i] = i;
    y[i] = noise(rng);
  }
  const PeakList found = FindPeaks(x, y);
  REQUIRE(found.IsOk());
  CHECK(found.peaks.empty());

  const Eigen::VectorXd flat = Eigen::VectorXd::Constant(n, 4.0);
  const PeakList constant = FindPeaks(x, flat);
  CHECK(constant.status == SignalStatus::kConstantY);
  CHECK(constant.message == "all 500 y values equal 4: there is no signal to analyse");
  const Eigen::VectorXd two = Eigen::VectorXd::LinSpaced(2, 0.0, 1.0);
  CHECK(FindPeaks(two, two).status == SignalStatus::kTooFewPoints);
  PeakOptions options;
  options.min_prominence_sigmas = -1.0;
  const PeakList invalid = FindPeaks(x, y, options);
  CHECK(invalid.status == SignalStatus::kInvalidOptions);
  CHECK(invalid.message == "min_prominence_sigmas = -1: must be finite and >= 0");
}

}  // namespace
}  // namespace signal
}  // namespace foothold
