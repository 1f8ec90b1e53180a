// The row-block factorisation of a tall Jacobian (engine/solve/internal/lm_state.h) against
// the plain pivoted Householder QR of the whole Jacobian: the same pivots, and R and Q^T f
// equal up to the sign of each row (a Householder QR fixes R only up to those signs), for
// row counts that are and are not multiples of the block, weighted and not. Then whole fits
// on both paths reach the same optimum.
#include <catch2/catch.hpp>
#include <cmath>

#include "engine/solve/internal/lm_state.h"
#include "engine/solve/levenberg_marquardt.h"
#include "tests/engine/multistart_test_models.h"

namespace foothold {
namespace {

using testing::MakeProblem;
using testing::Vec;

constexpr double kFactorTolerance = 1e-10;  // relative to the largest entry of R

double Truth(double x) {
  return 3 * std::exp(-(x - 4) * (x - 4) / 2) + 1.5 * std::exp(-(x - 6) * (x - 6) / 0.5);
}

internal::DampedSystem FactorAt(const Problem& problem, const Eigen::VectorXd& at, bool full_q) {
  internal::LmState state(problem, at);
  if (full_q) state.KeepFullQ();
  REQUIRE(state.EvaluateStart());
  REQUIRE(state.EvaluateJacobian());
  REQUIRE(state.SelectWorkingSet());
  state.Factorize();
  return state.Factor();
}

void CheckSameFactor(const Problem& problem, const Eigen::VectorXd& at) {
  const internal::DampedSystem blocks = FactorAt(problem, at, false);
  const internal::DampedSystem full = FactorAt(problem, at, true);
  REQUIRE(blocks.Size() == full.Size());
  CHECK(blocks.pivot == full.pivot);
  const double scale = full.r.cwiseAbs().maxCoeff();
  for (int i = 0; i < full.Size(); ++i) {
    const double sign = (blocks.r(i, i) < 0) == (full.r(i, i) < 0) ? 1.0 : -1.0;
    INFO("row " << i);
    CHECK((sign * blocks.r.row(i) - full.r.row(i)).cwiseAbs().maxCoeff() <=
          kFactorTolerance * scale);
    CHECK(std::abs(sign * blocks.qtf[i] - full.qtf[i]) <=
          kFactorTolerance * std::max(1.0, std::abs(full.qtf[i])));
  }
}

TEST_CASE("LmState: row blocks give the pivoted QR of a tall Jacobian", "[engine]") {
  const testing::PointwiseModel model = testing::GaussianPeaksModel(2, false);
  const Eigen::VectorXd at = Vec({2.5, 4.2, 1.1, 1.8, 5.8, 0.4});
  for (int n : {1024, 4099, 20000}) {
    INFO(n << " points");
    Problem problem = MakeProblem(model, Truth, n, 0.0, 10.0 / n, 0.05);
    CheckSameFactor(problem, at);
    // Weighted: sigma growing along x.
    problem.data.sigma = Eigen::VectorXd::LinSpaced(n, 0.5, 2.0);
    CheckSameFactor(problem, at);
  }
}

TEST_CASE("LevenbergMarquardt: a tall fit reaches the same optimum on both factorisations",
          "[engine]") {
  const testing::PointwiseModel model = testing::GaussianPeaksModel(2, false);
  const Problem problem = MakeProblem(model, Truth, 6000, 0.0, 10.0 / 6000, 0.05);
  const Eigen::VectorXd start = Vec({2.5, 4.2, 1.1, 1.8, 5.8, 0.4});
  LevenbergMarquardtOptions options;
  const LocalFitSummary blocks = MinimizeLevenbergMarquardt(problem, start, options);
  // Geodesic acceleration keeps the full Q; with a ratio of 1e-300 it never changes a step.
  options.use_geodesic_acceleration = true;
  options.geodesic_max_ratio = 1e-300;
  const LocalFitSummary full = MinimizeLevenbergMarquardt(problem, start, options);
  REQUIRE(blocks.IsConverged());
  REQUIRE(full.IsConverged());
  CHECK(blocks.final_cost == Approx(full.final_cost).epsilon(1e-12));
  for (Eigen::Index j = 0; j < start.size(); ++j) {
    CHECK(blocks.parameters[j] == Approx(full.parameters[j]).epsilon(1e-8));
  }
}

}  // namespace
}  // namespace foothold
