// Weighted linear least squares and the log, log-log and reciprocal linearisations.

#include <catch2/catch.hpp>
#include <cmath>

#include "heuristics/signal/linear_fit.h"
#include "heuristics/signal/linearise.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kExactTolerance = 1e-10;

TEST_CASE("SolveWeightedLeastSquares: weights and covariance", "[heuristics]") {
  // Weighted mean as a one-column fit: y = (1, 3), w = (3, 1) -> c = 1.5, Var = 1 / 4.
  const Eigen::MatrixXd ones = Eigen::MatrixXd::Ones(2, 1);
  const LinearFit mean =
      SolveWeightedLeastSquares(ones, Eigen::Vector2d(1, 3), Eigen::Vector2d(3, 1));
  REQUIRE(mean.IsOk());
  CHECK(mean.coefficients[0] == Approx(1.5).epsilon(kExactTolerance));
  CHECK(mean.covariance(0, 0) == Approx(0.25).epsilon(kExactTolerance));
  CHECK(mean.rss == Approx(3 * 0.25 + 2.25).epsilon(kExactTolerance));
  CHECK(mean.dof == 1);

  Eigen::MatrixXd collinear(3, 2);
  collinear << 1, 2, 2, 4, 3, 6;
  const LinearFit singular = SolveWeightedLeastSquares(collinear, Eigen::Vector3d(1, 2, 3));
  CHECK(singular.status == SignalStatus::kRankDeficient);
  CHECK(singular.rank == 1);
  const LinearFit negative =
      SolveWeightedLeastSquares(ones, Eigen::Vector2d(1, 3), Eigen::Vector2d(1, -1));
  CHECK(negative.status == SignalStatus::kNonFinite);
}

TEST_CASE("FitLine: exact line far from the origin", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(20, 1e6, 1e6 + 19);
  const Eigen::VectorXd y = 3.0 - 0.25 * x.array();
  const LineFit line = FitLine(x, y);
  REQUIRE(line.IsOk());
  CHECK(line.slope == Approx(-0.25).epsilon(kExactTolerance));
  CHECK(line.intercept == Approx(3.0).epsilon(1e-6));
  CHECK(FitLine(Eigen::VectorXd::Ones(4), x.head(4)).status == SignalStatus::kAllXEqual);
}

TEST_CASE("FitLogLinear: exact exponential, non-positive points skipped", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(12, 0.0, 5.5);
  Eigen::VectorXd y = 2.5 * (-0.7 * x.array()).exp();
  y[3] = 0.0;
  y[7] = -1.0;
  const LinearisedFit fit = FitLogLinear(x, y);
  REQUIRE(fit.IsOk());
  CHECK(fit.kind == Linearisation::kLog);
  CHECK(fit.slope == Approx(-0.7).epsilon(kExactTolerance));
  CHECK(fit.Prefactor() == Approx(2.5).epsilon(kExactTolerance));
  CHECK(fit.num_skipped == 2);
  CHECK(fit.num_used == 10);
}

TEST_CASE("FitLogLog: exact power law with sigma", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(15, 0.5, 20.0);
  const Eigen::VectorXd y = 0.8 * x.array().pow(1.7);
  const Eigen::VectorXd sigma = 0.01 * y.array() + 0.1;
  const LinearisedFit fit = FitLogLog(x, y, sigma);
  REQUIRE(fit.IsOk());
  CHECK(fit.slope == Approx(1.7).epsilon(kExactTolerance));
  CHECK(fit.Prefactor() == Approx(0.8).epsilon(kExactTolerance));
}

TEST_CASE("FitReciprocal: exact Michaelis-Menten", "[heuristics]") {
  // v = vmax x / (km + x): 1/v = 1/vmax + (km / vmax) / x (Lineweaver-Burk).
  constexpr double kVmax = 12.0, kKm = 3.5;
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(10, 0.5, 30.0);
  const Eigen::VectorXd y = kVmax * x.array() / (kKm + x.array());
  const LinearisedFit fit = FitReciprocal(x, y);
  REQUIRE(fit.IsOk());
  CHECK(1.0 / fit.intercept == Approx(kVmax).epsilon(kExactTolerance));
  CHECK(fit.slope / fit.intercept == Approx(kKm).epsilon(kExactTolerance));
}

TEST_CASE("Linearisations: invalid transforms and inputs give clear statuses", "[heuristics]") {
  const Eigen::VectorXd x = Eigen::VectorXd::LinSpaced(5, -2.0, 2.0);
  const Eigen::VectorXd y = (Eigen::VectorXd(5) << -1, -2, 0, 3, -4).finished();
  const LinearisedFit log_fit = FitLogLinear(x, y);
  CHECK(log_fit.status == SignalStatus::kTooFewValidPoints);
  CHECK(log_fit.message == "1 of 5 points satisfy y > 0 (4 skipped): need at least 3");
  const LinearisedFit power = FitLogLog(x, Eigen::VectorXd::Ones(5));
  CHECK(power.status == SignalStatus::kTooFewValidPoints);
  CHECK(power.num_skipped == 3);
  CHECK(FitReciprocal(x, Eigen::VectorXd::Ones(4)).status == SignalStatus::kSizeMismatch);
  CHECK(FitLogLinear(x, Eigen::VectorXd::Ones(5), Eigen::VectorXd::Zero(5)).status ==
        SignalStatus::kInvalidSigma);
  LinearisationOptions options;
  options.min_points = 1;
  const LinearisedFit invalid = FitLogLinear(x, y, Eigen::VectorXd(), options);
  CHECK(invalid.status == SignalStatus::kInvalidOptions);
  CHECK(invalid.message == "min_points = 1: must be >= 2");
  // Usable points that share one x cannot fix a slope.
  const Eigen::VectorXd same_x = Eigen::VectorXd::Constant(4, 2.0);
  const Eigen::VectorXd positive = Eigen::VectorXd::LinSpaced(4, 1.0, 4.0);
  CHECK(FitLogLinear(same_x, positive).status == SignalStatus::kAllXEqual);
}

}  // namespace
}  // namespace signal
}  // namespace foothold
