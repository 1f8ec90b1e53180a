// Every signal tool on awkward random inputs: a result is either a clear non-ok status or
// made only of finite numbers.

#include <catch2/catch.hpp>
#include <cmath>
#include <random>

#include "heuristics/signal/baseline.h"
#include "heuristics/signal/linearise.h"
#include "heuristics/signal/matrix_pencil.h"
#include "heuristics/signal/noise.h"
#include "heuristics/signal/peaks.h"
#include "heuristics/signal/periodogram.h"
#include "heuristics/signal/savitzky_golay.h"
#include "heuristics/signal/sort_merge.h"

namespace foothold {
namespace signal {
namespace {

constexpr int kNumTrials = 300;

// Small, clumped, repeated, wildly scaled data: few points, ties in x and in y, spikes.
void RandomCurve(std::mt19937* rng, Eigen::VectorXd* x, Eigen::VectorXd* y) {
  std::uniform_int_distribution<int> size(1, 40);
  std::uniform_int_distribution<int> level(-3, 3);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  const int n = size(*rng);
  const double scale = std::pow(10.0, 4 * level(*rng));
  x->resize(n);
  y->resize(n);
  for (int i = 0; i < n; ++i) {
    (*x)[i] = unit(*rng) < 0.3 ? std::floor(5 * unit(*rng)) : 100 * unit(*rng);
    (*y)[i] = unit(*rng) < 0.3 ? level(*rng) * scale : scale * (unit(*rng) - 0.2);
  }
}

bool AllFinite(const Eigen::VectorXd& v) { return v.allFinite(); }

TEST_CASE("Signal tools: random awkward inputs give a status or finite results", "[heuristics]") {
  std::mt19937 rng(20261202);
  int num_prepared = 0;
  for (int trial = 0; trial < kNumTrials; ++trial) {
    Eigen::VectorXd raw_x, raw_y;
    RandomCurve(&rng, &raw_x, &raw_y);
    INFO("trial " << trial << " n " << raw_x.size());
    const PreparedCurve curve = SortAndMerge(raw_x, raw_y);
    if (!curve.IsOk()) {
      CHECK_FALSE(curve.message.empty());
      continue;
    }
    ++num_prepared;
    const Eigen::VectorXd& x = curve.x;
    const Eigen::VectorXd& y = curve.y;

    const NoiseEstimate noise = EstimateNoise(x, y);
    CHECK((noise.IsOk() ? std::isfinite(noise.sigma) && noise.sigma >= 0 : !noise.message.empty()));
    for (BaselineMethod method : {BaselineMethod::kEnds, BaselineMethod::kLowQuantile,
                                  BaselineMethod::kLinearEnds, BaselineMethod::kLinearEnvelope}) {
      BaselineOptions options;
      options.method = method;
      const Baseline baseline = EstimateBaseline(x, y, options);
      CHECK((!baseline.IsOk() ||
             (std::isfinite(baseline.intercept) && std::isfinite(baseline.slope))));
    }
    const SmoothedCurve smooth = SmoothSavitzkyGolay(x, y);
    if (smooth.IsOk()) {
      CHECK(AllFinite(smooth.value));
      CHECK(AllFinite(smooth.first_derivative));
      CHECK(AllFinite(smooth.second_derivative));
    }
    for (bool negative : {false, true}) {
      PeakOptions options;
      options.negative = negative;
      options.find_shoulders = true;
      const PeakList peaks = FindPeaks(x, y, options);
      for (const Peak& p : peaks.peaks) {
        CHECK(std::isfinite(p.center));
        CHECK(std::isfinite(p.height));
        CHECK((std::isfinite(p.fwhm) && p.fwhm >= 0));
        CHECK((p.is_shoulder ? p.prominence == 0 : p.prominence > 0));
      }
    }
    const Periodogram spectrum = ComputeLombScargle(x, y);
    if (spectrum.IsOk()) {
      CHECK(std::isfinite(spectrum.best_frequency));
      CHECK(std::isfinite(spectrum.best_power));
      CHECK(std::isfinite(spectrum.amplitude));
      CHECK(std::isfinite(spectrum.phase));
    }
    for (int k : {1, 2}) {
      MatrixPencilOptions options;
      options.num_exponentials = k;
      options.fit_offset = k == 2;
      const ExponentialSum sum = FitExponentialSum(x, y, options);
      for (const ExponentialTerm& term : sum.terms) {
        CHECK((std::isfinite(term.rate) && term.rate > 0));
        CHECK(std::isfinite(term.amplitude));
      }
      CHECK((sum.IsOk() || !sum.message.empty()));
    }
    for (const LinearisedFit& fit : {FitLogLinear(x, y), FitLogLog(x, y), FitReciprocal(x, y)}) {
      if (fit.IsOk()) {
        CHECK(std::isfinite(fit.slope));
        CHECK(std::isfinite(fit.intercept));
        CHECK(std::isfinite(fit.slope_stderr));
      } else {
        CHECK_FALSE(fit.message.empty());
      }
    }
  }
  CHECK(num_prepared > kNumTrials / 3);  // the generator must exercise the tools
}

}  // namespace
}  // namespace signal
}  // namespace foothold
