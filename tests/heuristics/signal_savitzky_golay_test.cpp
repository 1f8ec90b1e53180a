// Savitzky-Golay smoothing and derivatives on even and uneven x.

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <string>

#include "heuristics/signal/savitzky_golay.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kCoefficientTolerance = 1e-12;
constexpr double kPolynomialTolerance = 1e-9;
// Two factorisations of the same small Gram matrix (|t| <= 1) agree to rounding.
constexpr double kAgreementTolerance = 1e-9;

TEST_CASE("SavitzkyGolayWeights: 5-point quadratic reproduces the published tables",
          "[heuristics]") {
  // Savitzky & Golay 1964, Anal. Chem. 36, 1627, tables for the 5-point quadratic (values
  // recalled from memory): smoothing (-3, 12, 17, 12, -3) / 35, first derivative
  // (-2, -1, 0, 1, 2) / 10 per unit spacing.
  const Eigen::VectorXd window = (Eigen::VectorXd(5) << 0, 1, 2, 3, 4).finished();
  Eigen::VectorXd weights;
  std::string error;
  REQUIRE(SavitzkyGolayWeights(window, 2.0, 2, 0, &weights, &error));
  const Eigen::VectorXd smooth = (Eigen::VectorXd(5) << -3, 12, 17, 12, -3).finished() / 35.0;
  CHECK((weights - smooth).cwiseAbs().maxCoeff() < kCoefficientTolerance);

  REQUIRE(SavitzkyGolayWeights(window, 2.0, 2, 1, &weights, &error));
  const Eigen::VectorXd slope = (Eigen::VectorXd(5) << -2, -1, 0, 1, 2).finished() / 10.0;
  CHECK((weights - slope).cwiseAbs().maxCoeff() < kCoefficientTolerance);

  // Spacing 0.5 scales the derivative weights by 1 / 0.5.
  REQUIRE(SavitzkyGolayWeights(window * 0.5, 1.0, 2, 1, &weights, &error));
  CHECK((weights - 2.0 * slope).cwiseAbs().maxCoeff() < kCoefficientTolerance);
}

TEST_CASE("SavitzkyGolayWeights: quadratic second derivative and cubic order agree",
          "[heuristics]") {
  // Second derivative of the 5-point quadratic: (2, -1, -2, -1, 2) / 7 (from the normal
  // equations: c2 = sum (t^2 - 2) y / 14, times 2).
  const Eigen::VectorXd window = (Eigen::VectorXd(5) << -2, -1, 0, 1, 2).finished();
  Eigen::VectorXd weights;
  std::string error;
  REQUIRE(SavitzkyGolayWeights(window, 0.0, 2, 2, &weights, &error));
  const Eigen::VectorXd curvature = (Eigen::VectorXd(5) << 2, -1, -2, -1, 2).finished() / 7.0;
  CHECK((weights - curvature).cwiseAbs().maxCoeff() < kCoefficientTolerance);
  // A cubic's extra odd term leaves the centred smoothing weights unchanged.
  Eigen::VectorXd cubic_weights;
  REQUIRE(SavitzkyGolayWeights(window, 0.0, 3, 0, &cubic_weights, &error));
  REQUIRE(SavitzkyGolayWeights(window, 0.0, 2, 0, &weights, &error));
  CHECK((weights - cubic_weights).cwiseAbs().maxCoeff() < kCoefficientTolerance);
}

TEST_CASE("SavitzkyGolayWeights: bad requests give messages", "[heuristics]") {
  Eigen::VectorXd weights;
  std::string error;
  const Eigen::VectorXd same = Eigen::VectorXd::Constant(5, 1.0);
  CHECK_FALSE(SavitzkyGolayWeights(same, 1.0, 2, 0, &weights, &error));
  CHECK(error.find("distinct") != std::string::npos);
  const Eigen::VectorXd two = (Eigen::VectorXd(2) << 0, 1).finished();
  CHECK_FALSE(SavitzkyGolayWeights(two, 0.5, 2, 0, &weights, &error));
  CHECK(error.find("at least 3") != std::string::npos);
  CHECK_FALSE(SavitzkyGolayWeights(two, 0.5, 1, 2, &weights, &error));
}

TEST_CASE("SmoothSavitzkyGolay: exact on a quadratic with uneven, jittered x", "[heuristics]") {
  std::mt19937 rng(11);
  std::uniform_real_distribution<double> jitter(-0.3, 0.3);
  const int n = 60;
  Eigen::VectorXd x(n), y(n);
  for (int i = 0; i < n; ++i) {
    x[i] = i + jitter(rng);
    y[i] = 3.0 - 0.5 * x[i] + 0.02 * x[i] * x[i];
  }
  SavitzkyGolayOptions options;
  options.half_window = 4;
  const SmoothedCurve smooth = SmoothSavitzkyGolay(x, y, options);
  REQUIRE(smooth.IsOk());
  for (int i = 0; i < n; ++i) {  // edges included: asymmetric windows are still exact
    CHECK(smooth.value[i] == Approx(y[i]).margin(kPolynomialTolerance));
    CHECK(smooth.first_derivative[i] == Approx(-0.5 + 0.04 * x[i]).margin(kPolynomialTolerance));
    CHECK(smooth.second_derivative[i] == Approx(0.04).margin(kPolynomialTolerance));
  }
}

TEST_CASE("SmoothSavitzkyGolay: agrees with the explicit weights on uneven x, ends included",
          "[heuristics]") {
  // The smoother solves each window with its Gram matrix; SavitzkyGolayWeights forms the
  // weight rows. Both are the same least-squares polynomial, so they must agree.
  std::mt19937 rng(23);
  std::uniform_real_distribution<double> jitter(-0.45, 0.45);
  std::normal_distribution<double> noise(0.0, 0.1);
  const int n = 40;
  Eigen::VectorXd x(n), y(n);
  for (int i = 0; i < n; ++i) {
    x[i] = 1e-3 * (i + jitter(rng));
    y[i] = std::sin(300.0 * x[i]) + noise(rng);
  }
  for (int order : {2, 3, 4}) {
    SavitzkyGolayOptions options;
    options.polynomial_order = order;
    options.half_window = 3;
    const SmoothedCurve smooth = SmoothSavitzkyGolay(x, y, options);
    REQUIRE(smooth.IsOk());
    for (int i : {0, 1, 2, 3, 19, n - 2, n - 1}) {
      INFO("order " << order << " point " << i);
      const int lo = std::clamp(i - 3, 0, n - 7);
      const Eigen::VectorXd window_x = x.segment(lo, 7);
      const Eigen::VectorXd window_y = y.segment(lo, 7);
      Eigen::VectorXd weights;
      std::string error;
      REQUIRE(SavitzkyGolayWeights(window_x, x[i], order, 0, &weights, &error));
      CHECK(smooth.value[i] == Approx(weights.dot(window_y)).epsilon(kAgreementTolerance));
      REQUIRE(SavitzkyGolayWeights(window_x, x[i], order, 1, &weights, &error));
      CHECK(smooth.first_derivative[i] ==
            Approx(weights.dot(window_y)).epsilon(kAgreementTolerance));
      REQUIRE(SavitzkyGolayWeights(window_x, x[i], order, 2, &weights, &error));
      CHECK(smooth.second_derivative[i] ==
            Approx(weights.dot(window_y)).epsilon(kAgreementTolerance));
    }
  }
}

TEST_CASE("SmoothSavitzkyGolay: automatic window reduces noise on a smooth curve", "[heuristics]") {
  std::mt19937 rng(5);
  std::normal_distribution<double> noise(0.0, 0.05);
  const int n = 400;
  Eigen::VectorXd x(n), y(n), truth(n);
  for (int i = 0; i < n; ++i) {
    x[i] = 0.025 * i;
    truth[i] = std::sin(x[i]);
    y[i] = truth[i] + noise(rng);
  }
  const SmoothedCurve smooth = SmoothSavitzkyGolay(x, y);
  REQUIRE(smooth.IsOk());
  CHECK(smooth.is_auto_window);
  CHECK(smooth.half_window > 5);
  const double raw_rms = std::sqrt((y - truth).squaredNorm() / n);
  const double smooth_rms = std::sqrt((smooth.value - truth).squaredNorm() / n);
  // A window of ~2h + 1 points should cut the error well below half the raw noise.
  CHECK(smooth_rms < 0.5 * raw_rms);
  CHECK(smooth.first_derivative[n / 2] == Approx(std::cos(x[n / 2])).margin(0.1));
}

TEST_CASE("SmoothSavitzkyGolay: degenerate inputs give clear statuses", "[heuristics]") {
  SavitzkyGolayOptions options;
  options.polynomial_order = 5;
  std::string error;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "polynomial_order = 5: must be between 2 and 4");

  const Eigen::VectorXd x = (Eigen::VectorXd(4) << 0, 1, 2, 3).finished();
  const Eigen::VectorXd y = (Eigen::VectorXd(4) << 1, 2, 1, 2).finished();
  CHECK(SmoothSavitzkyGolay(x, y, options).status == SignalStatus::kInvalidOptions);
  SmoothedCurve smooth = SmoothSavitzkyGolay(x, y);
  CHECK(smooth.status == SignalStatus::kTooFewPoints);
  CHECK(smooth.message == "4 points: half_window 2 needs at least 5");
  const Eigen::VectorXd unsorted = (Eigen::VectorXd(4) << 0, 2, 1, 3).finished();
  CHECK(SmoothSavitzkyGolay(unsorted, y).status == SignalStatus::kNotSorted);
  Eigen::VectorXd with_nan = y;
  with_nan[2] = std::nan("");
  CHECK(SmoothSavitzkyGolay(x, with_nan).status == SignalStatus::kNonFinite);
}

}  // namespace
}  // namespace signal
}  // namespace foothold
