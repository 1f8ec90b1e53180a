// Matrix-pencil estimates of sums of exponentials.

#include <catch2/catch.hpp>
#include <cmath>
#include <random>

#include "heuristics/signal/matrix_pencil.h"
#include "heuristics/signal/sort_merge.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kExactRelativeTolerance = 1e-6;
constexpr double kNoisyRelativeTolerance = 0.10;

// Two decays with rates 0.5 and 3 (tau = 2 and 1/3) and amplitudes 4 and 6.
constexpr double kSlowRate = 0.5, kFastRate = 3.0, kSlowAmplitude = 4.0, kFastAmplitude = 6.0;

double Biexponential(double x, double offset) {
  return kSlowAmplitude * std::exp(-kSlowRate * x) + kFastAmplitude * std::exp(-kFastRate * x) +
         offset;
}

void CheckTerms(const ExponentialSum& fit, double tolerance) {
  REQUIRE(fit.IsOk());
  REQUIRE(fit.terms.size() == 2);
  CHECK(fit.terms[0].rate == Approx(kSlowRate).epsilon(tolerance));
  CHECK(fit.terms[1].rate == Approx(kFastRate).epsilon(tolerance));
  CHECK(fit.terms[0].amplitude == Approx(kSlowAmplitude).epsilon(tolerance));
  CHECK(fit.terms[1].amplitude == Approx(kFastAmplitude).epsilon(tolerance));
}

TEST_CASE("FitExponentialSum: noise-free biexponential on an even grid", "[heuristics]") {
  const int n = 200;
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(n, 0.0, 8.0);
  Eigen::VectorXd y(n);
  for (int i = 0; i < n; ++i) y[i] = Biexponential(x[i], 0.0);
  MatrixPencilOptions options;
  options.num_exponentials = 2;
  const ExponentialSum fit = FitExponentialSum(x, y, options);
  CheckTerms(fit, kExactRelativeTolerance);
  CHECK_FALSE(fit.was_resampled);
  // Two terms: the third singular value is at rounding level.
  REQUIRE(fit.singular_values.size() >= 3);
  CHECK(fit.singular_values[2] < 1e-10 * fit.singular_values[0]);
}

TEST_CASE("FitExponentialSum: noise-free biexponential with an offset, x not at zero",
          "[heuristics]") {
  const int n = 300;
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(n, 0.5, 12.0);
  Eigen::VectorXd y(n);
  for (int i = 0; i < n; ++i) y[i] = Biexponential(x[i], 1.5);
  MatrixPencilOptions options;
  options.num_exponentials = 2;
  options.fit_offset = true;
  const ExponentialSum fit = FitExponentialSum(x, y, options);
  CheckTerms(fit, kExactRelativeTolerance);
  CHECK(fit.offset == Approx(1.5).epsilon(kExactRelativeTolerance));
}

TEST_CASE("FitExponentialSum: bin averages keep the poles when downsampling", "[heuristics]") {
  // 3000 even points into 1000 bins of 3: every bin mean is the exponential at the bin
  // centre times the same factor, so the rates stay exact.
  const int n = 3000;
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(n, 0.0, 8.0);
  Eigen::VectorXd y(n);
  for (int i = 0; i < n; ++i) y[i] = Biexponential(x[i], 0.0);
  MatrixPencilOptions options;
  options.num_exponentials = 2;
  options.max_samples = 1000;
  const ExponentialSum fit = FitExponentialSum(x, y, options);
  CHECK(fit.was_resampled);
  CHECK(fit.num_samples == 1000);
  CheckTerms(fit, kExactRelativeTolerance);
}

TEST_CASE("FitExponentialSum: 1% noise on uneven, resampled x", "[heuristics]") {
  std::mt19937 rng(31);
  std::uniform_real_distribution<double> when(0.0, 8.0);
  std::normal_distribution<double> unit(0.0, 1.0);
  const int n = 400;
  Eigen::VectorXd x(n), y(n);
  for (int i = 0; i < n; ++i) {
    x[i] = when(rng);
    const double clean = Biexponential(x[i], 0.0);
    y[i] = clean * (1.0 + 0.01 * unit(rng));  // 1% relative noise
  }
  const PreparedCurve curve = SortAndMerge(x, y);
  REQUIRE(curve.IsOk());
  MatrixPencilOptions options;
  options.num_exponentials = 2;
  const ExponentialSum fit = FitExponentialSum(curve.x, curve.y, options);
  CHECK(fit.was_resampled);
  CheckTerms(fit, kNoisyRelativeTolerance);
}

TEST_CASE("FitExponentialSum: oscillation and growth are rejected with a status", "[heuristics]") {
  const int n = 100;
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(n, 0.0, 10.0);
  Eigen::VectorXd ring(n), growth(n);
  for (int i = 0; i < n; ++i) {
    ring[i] = std::exp(-0.3 * x[i]) * std::cos(2.0 * x[i]);
    growth[i] = std::exp(0.2 * x[i]);
  }
  MatrixPencilOptions options;
  options.num_exponentials = 2;
  const ExponentialSum oscillating = FitExponentialSum(x, ring, options);
  CHECK(oscillating.status == SignalStatus::kComplexPoles);
  CHECK(oscillating.message.find("oscillate") != std::string::npos);
  CHECK(oscillating.terms.empty());
  options.num_exponentials = 1;
  const ExponentialSum growing = FitExponentialSum(x, growth, options);
  CHECK(growing.status == SignalStatus::kNonDecaying);
  CHECK(growing.message.find("growing") != std::string::npos);
}

TEST_CASE("FitExponentialSum: degenerate inputs give clear statuses", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(5, 0.0, 4.0);
  MatrixPencilOptions options;
  options.num_exponentials = 2;
  const ExponentialSum few = FitExponentialSum(x, (-x).array().exp().matrix(), options);
  CHECK(few.status == SignalStatus::kTooFewPoints);
  CHECK(few.message == "5 points: need at least 6 (2 poles)");
  CHECK(FitExponentialSum(x, Eigen::VectorXd::Ones(5)).status == SignalStatus::kConstantY);
  options.num_exponentials = 0;
  const ExponentialSum invalid = FitExponentialSum(x, x, options);
  CHECK(invalid.status == SignalStatus::kInvalidOptions);
  CHECK(invalid.message == "num_exponentials = 0: must be between 1 and 8");
}

}  // namespace
}  // namespace signal
}  // namespace foothold
