// Sorting by x and merging duplicates.

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "heuristics/signal/sort_merge.h"

namespace foothold {
namespace signal {
namespace {

constexpr double kTolerance = 1e-12;

Eigen::VectorXd Vec(std::initializer_list<double> values) {
  Eigen::VectorXd v(static_cast<Eigen::Index>(values.size()));
  Eigen::Index i = 0;
  for (double value : values) v[i++] = value;
  return v;
}

TEST_CASE("SortAndMerge: sorts and averages duplicate x", "[heuristics]") {
  const PreparedCurve curve =
      SortAndMerge(Vec({3, 1, 2, 1, 4, 3, 3}), Vec({30, 10, 20, 14, 40, 33, 36}));
  REQUIRE(curve.IsOk());
  CHECK(curve.x == Vec({1, 2, 3, 4}));
  CHECK(curve.y.isApprox(Vec({12, 20, 33, 40}), kTolerance));
  CHECK(curve.multiplicity == (Eigen::VectorXi(4) << 2, 1, 3, 1).finished());
  CHECK(curve.num_merged == 3);
  CHECK(curve.sigma.size() == 0);
}

TEST_CASE("SortAndMerge: inverse-variance mean and combined sigma", "[heuristics]") {
  // y = 1 with sigma 1 and y = 4 with sigma 2 at the same x: weights 1 and 1/4, so the mean
  // is (1 + 4/4) / 1.25 = 1.6 and sigma = 1 / sqrt(1.25).
  const PreparedCurve curve = SortAndMerge(Vec({0, 5, 5, 9}), Vec({0, 1, 4, 2}), Vec({1, 1, 2, 1}));
  REQUIRE(curve.IsOk());
  CHECK(curve.y[1] == Approx(1.6).epsilon(kTolerance));
  CHECK(curve.sigma[1] == Approx(1.0 / std::sqrt(1.25)).epsilon(kTolerance));
  CHECK(curve.sigma[0] == 1.0);
}

TEST_CASE("SortAndMerge: x equal up to rounding merge", "[heuristics]") {
  const PreparedCurve curve = SortAndMerge(Vec({0.1 + 0.2, 0.3, 1.0, 2.0}), Vec({1, 3, 5, 7}));
  REQUIRE(curve.IsOk());
  CHECK(curve.NumPoints() == 3);
  CHECK(curve.y[0] == Approx(2.0));
}

TEST_CASE("SortAndMerge: sorted, distinct input comes back as it is", "[heuristics]") {
  const Eigen::VectorXd x = Vec({-2, 0.5, 0.75, 3, 10});
  const Eigen::VectorXd y = Vec({4, 1, 2, 8, 5});
  const Eigen::VectorXd sigma = Vec({1, 2, 1, 0.5, 1});
  const PreparedCurve curve = SortAndMerge(x, y, sigma);
  REQUIRE(curve.IsOk());
  CHECK(curve.x == x);
  CHECK(curve.y == y);
  CHECK(curve.sigma == sigma);
  CHECK(curve.multiplicity == Eigen::VectorXi::Ones(5));
  CHECK(curve.num_merged == 0);
  // Sorted with one repeated x: merged as before.
  const PreparedCurve repeated = SortAndMerge(Vec({0, 1, 1, 2}), Vec({1, 2, 4, 3}));
  REQUIRE(repeated.IsOk());
  CHECK(repeated.x == Vec({0, 1, 2}));
  CHECK(repeated.y == Vec({1, 3, 3}));
  // Too few points is still reported.
  const PreparedCurve short_curve = SortAndMerge(Vec({0, 1}), Vec({1, 2}));
  CHECK(short_curve.status == SignalStatus::kTooFewPoints);
  CHECK(short_curve.message == "2 distinct x values: need at least 3");
  CHECK(short_curve.x == Vec({0, 1}));
}

TEST_CASE("SortAndMerge: degenerate inputs give clear statuses", "[heuristics]") {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const double inf = std::numeric_limits<double>::infinity();

  PreparedCurve curve = SortAndMerge(Vec({0, 1, 2}), Vec({1, nan, 3}));
  CHECK(curve.status == SignalStatus::kNonFinite);
  CHECK(curve.message == "point 1 is (x = 1, y = nan): expected finite numbers");

  SortMergeOptions options;
  options.drop_non_finite = true;
  curve = SortAndMerge(Vec({0, inf, 2, 3, 4}), Vec({1, 2, 3, 4, 5}), Eigen::VectorXd(), options);
  REQUIRE(curve.IsOk());
  CHECK(curve.num_dropped == 1);
  CHECK(curve.NumPoints() == 4);

  curve = SortAndMerge(Vec({2, 2, 2, 2}), Vec({1, 2, 3, 4}));
  CHECK(curve.status == SignalStatus::kAllXEqual);
  CHECK(curve.message == "all 4 points have x = 2: the curve has no extent");
  CHECK(curve.y[0] == Approx(2.5));  // still filled for inspection

  curve = SortAndMerge(Vec({1, 2, 2}), Vec({1, 2, 3}));
  CHECK(curve.status == SignalStatus::kTooFewPoints);
  CHECK(curve.message == "2 distinct x values: need at least 3");

  curve = SortAndMerge(Vec({1, 2, 3}), Vec({1, 2}));
  CHECK(curve.status == SignalStatus::kSizeMismatch);

  curve = SortAndMerge(Vec({1, 2, 3}), Vec({1, 2, 3}), Vec({1, 0, 1}));
  CHECK(curve.status == SignalStatus::kInvalidSigma);
  CHECK(curve.message == "sigma[1] = 0: must be > 0");

  options = SortMergeOptions();
  options.relative_x_tolerance = -1;
  curve = SortAndMerge(Vec({1, 2, 3}), Vec({1, 2, 3}), Eigen::VectorXd(), options);
  CHECK(curve.status == SignalStatus::kInvalidOptions);
  CHECK(curve.message == "relative_x_tolerance = -1: must be >= 0 and < 0.01");

  SignalStatus parsed = SignalStatus::kOk;
  CHECK(SignalStatusFromString(ToString(SignalStatus::kAllXEqual), &parsed));
  CHECK(parsed == SignalStatus::kAllXEqual);
  CHECK_FALSE(SignalStatusFromString("no_such_status", &parsed));
}

}  // namespace
}  // namespace signal
}  // namespace foothold
