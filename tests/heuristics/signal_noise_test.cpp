// Robust noise estimates from differences.

#include <catch2/catch.hpp>
#include <cmath>
#include <random>

#include "heuristics/signal/noise.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kRelativeNoiseTolerance = 0.10;

// 2000 points of N(0, s^2) noise on top of `trend`, at jittered (uneven) x.
template <typename Trend>
void MakeNoisy(double noise_sigma, unsigned seed, Trend trend, Eigen::VectorXd* x,
               Eigen::VectorXd* y) {
  const int n = 2000;
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> jitter(-0.45, 0.45);
  std::normal_distribution<double> noise(0.0, noise_sigma);
  x->resize(n);
  y->resize(n);
  for (int i = 0; i < n; ++i) {
    (*x)[i] = 0.01 * (i + jitter(rng));
    (*y)[i] = trend((*x)[i]) + noise(rng);
  }
}

TEST_CASE("EstimateNoise: both methods within 10% on known Gaussian noise", "[heuristics]") {
  constexpr double kSigma = 0.25;
  Eigen::VectorXd x, y;
  MakeNoisy(
      kSigma, 42, [](double t) { return 3.0 + 2.0 * t; }, &x, &y);
  const NoiseEstimate first = EstimateNoise(x, y, NoiseMethod::kFirstDifference);
  const NoiseEstimate second = EstimateNoise(x, y, NoiseMethod::kSecondDifference);
  REQUIRE(first.IsOk());
  REQUIRE(second.IsOk());
  CHECK(first.sigma == Approx(kSigma).epsilon(kRelativeNoiseTolerance));
  CHECK(second.sigma == Approx(kSigma).epsilon(kRelativeNoiseTolerance));
  CHECK(first.num_differences == 1999);
  CHECK(second.num_differences == 1998);
}

TEST_CASE("EstimateNoise: second differences ignore a strong curve, first do not", "[heuristics]") {
  constexpr double kSigma = 0.02;
  Eigen::VectorXd x, y;
  // The slope of 40 sin(2 pi t / 5) changes across the data, so first differences (steps of
  // about 0.01 * slope) vary by much more than the noise.
  MakeNoisy(
      kSigma, 7, [](double t) { return 40.0 * std::sin(1.2566 * t); }, &x, &y);
  const NoiseEstimate second = EstimateNoise(x, y);
  CHECK(second.sigma == Approx(kSigma).epsilon(kRelativeNoiseTolerance));
  const NoiseEstimate first = EstimateNoise(x, y, NoiseMethod::kFirstDifference);
  CHECK(first.sigma > 2.0 * kSigma);
}

TEST_CASE("EstimateNoise: noise-free and degenerate inputs", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(50, 0.0, 1.0);
  const Eigen::VectorXd line = 2.0 * x.array() + 1.0;
  const NoiseEstimate clean = EstimateNoise(x, line);
  REQUIRE(clean.IsOk());
  CHECK(clean.sigma == Approx(0.0).margin(1e-12));

  const NoiseEstimate flat = EstimateNoise(x, Eigen::VectorXd::Constant(50, 3.0));
  CHECK(flat.status == SignalStatus::kConstantY);
  CHECK(flat.sigma == 0.0);
  const Eigen::VectorXd two = Eigen::VectorXd::LinSpaced(2, 0.0, 1.0);
  const NoiseEstimate few = EstimateNoise(two, two);
  CHECK(few.status == SignalStatus::kTooFewPoints);
  CHECK(few.message == "2 points: need at least 3");
  Eigen::VectorXd with_inf = line;
  with_inf[3] = std::numeric_limits<double>::infinity();
  CHECK(EstimateNoise(x, with_inf).status == SignalStatus::kNonFinite);
  CHECK(EstimateNoise(Eigen::VectorXd::Zero(50), line).status == SignalStatus::kAllXEqual);
  CHECK(std::string(ToString(NoiseMethod::kSecondDifference)) == "second_difference");
}

}  // namespace
}  // namespace signal
}  // namespace foothold
