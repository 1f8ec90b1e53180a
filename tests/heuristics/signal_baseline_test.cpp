// Baseline estimates under peaks.

#include <catch2/catch.hpp>
#include <cmath>
#include <random>

#include "heuristics/signal/baseline.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kExactTolerance = 1e-12;
constexpr double kNoisyTolerance = 0.05;  // y units, with noise sigma 0.05 and 500 points

// A sloped baseline 1 + 0.2 x with one Gaussian peak of height 5 at x = 5, x in [0, 10].
void MakePeakOnSlope(double noise_sigma, Eigen::VectorXd* x, Eigen::VectorXd* y) {
  const int n = 500;
  std::mt19937 rng(12);
  std::normal_distribution<double> noise(0.0, noise_sigma);
  *x = Eigen::VectorXd::LinSpaced(n, 0.0, 10.0);
  y->resize(n);
  for (int i = 0; i < n; ++i) {
    const double z = ((*x)[i] - 5.0) / 0.6;
    (*y)[i] = 1.0 + 0.2 * (*x)[i] + 5.0 * std::exp(-0.5 * z * z) + noise(rng);
  }
}

TEST_CASE("EstimateBaseline: linear methods recover a sloped baseline under a peak",
          "[heuristics]") {
  Eigen::VectorXd x, y;
  MakePeakOnSlope(0.0, &x, &y);
  BaselineOptions options;
  const Baseline ends = EstimateBaseline(x, y, options);
  REQUIRE(ends.IsOk());
  // Medians of symmetric end windows of an exact line lie on the line.
  CHECK(ends.slope == Approx(0.2).epsilon(1e-6));
  CHECK(ends.At(5.0) == Approx(2.0).epsilon(1e-6));

  MakePeakOnSlope(0.05, &x, &y);
  options.method = BaselineMethod::kLinearEnvelope;
  options.quantile = 0.5;  // the bin median: unbiased for symmetric noise
  const Baseline envelope = EstimateBaseline(x, y, options);
  REQUIRE(envelope.IsOk());
  CHECK(envelope.At(1.0) == Approx(1.2).margin(kNoisyTolerance));
  CHECK(envelope.At(9.0) == Approx(2.8).margin(kNoisyTolerance));
}

TEST_CASE("EstimateBaseline: constant methods", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(100, 0.0, 99.0);
  Eigen::VectorXd y = Eigen::VectorXd::Constant(100, 2.0);
  y.segment(40, 20).array() += 10.0;  // a block peak in the middle
  BaselineOptions options;
  options.method = BaselineMethod::kEnds;
  const Baseline ends = EstimateBaseline(x, y, options);
  REQUIRE(ends.IsOk());
  CHECK(ends.At(50.0) == Approx(2.0).epsilon(kExactTolerance));
  CHECK(ends.slope == 0.0);
  options.method = BaselineMethod::kLowQuantile;
  CHECK(EstimateBaseline(x, y, options).intercept == Approx(2.0).epsilon(kExactTolerance));

  // Ends mean: first and last 5 of 100 points, 2 on the left and 4 on the right.
  y.tail(50).setConstant(4.0);
  options.method = BaselineMethod::kEnds;
  CHECK(EstimateBaseline(x, y, options).intercept == Approx(3.0).epsilon(kExactTolerance));
}

TEST_CASE("EstimateBaseline: options and degenerate inputs", "[heuristics]") {
  BaselineOptions options;
  options.end_fraction = 0.7;
  std::string error;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "end_fraction = 0.7: must be in (0, 0.5]");
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(10, 0.0, 9.0);
  CHECK(EstimateBaseline(x, x, options).status == SignalStatus::kInvalidOptions);
  const Baseline flat = EstimateBaseline(x, Eigen::VectorXd::Constant(10, 7.0));
  REQUIRE(flat.IsOk());  // constant y has a well-defined baseline
  CHECK(flat.At(3.0) == Approx(7.0));
  const Eigen::VectorXd reversed = x.reverse();
  CHECK(EstimateBaseline(reversed, x).status == SignalStatus::kNotSorted);
  BaselineMethod method = BaselineMethod::kEnds;
  CHECK(BaselineMethodFromString("linear_envelope", &method));
  CHECK(method == BaselineMethod::kLinearEnvelope);
}

}  // namespace
}  // namespace signal
}  // namespace foothold
