// Levenberg–Marquardt: convergence, bounds, fixed parameters and every termination reason.
#include "engine/solve/levenberg_marquardt.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <limits>

#include "tests/engine/test_models.h"

namespace foothold {
namespace {

// The shared point-by-point test model (tests/engine/test_models.h) under this file's
// names; problems here sit on x = 0.1 i.
using LambdaModel = testing::PointwiseModel;
using testing::Vec;

LambdaModel ExpDecay() { return testing::ExpDecayModel(); }

Problem MakeProblem(const Model& model, const std::function<double(double)>& truth, int n,
                    double noise_amplitude) {
  return testing::MakeProblem(model, truth, n, 0.0, 0.1, noise_amplitude);
}

constexpr double kTight = 1e-8;

TEST_CASE("LevenbergMarquardt: recovers an exponential decay from a far start", "[engine]") {
  const LambdaModel model = ExpDecay();
  Problem problem = MakeProblem(model, [](double x) { return 5 * std::exp(-0.7 * x); }, 40, 0);
  const LocalFitSummary summary =
      MinimizeLevenbergMarquardt(problem, Vec({1, 3}), LevenbergMarquardtOptions{});
  INFO(summary.FullReport());
  REQUIRE(summary.IsConverged());
  CHECK(summary.parameters[0] == Approx(5).epsilon(kTight));
  CHECK(summary.parameters[1] == Approx(0.7).epsilon(kTight));
  CHECK(summary.final_cost < 1e-20);
}

TEST_CASE("LevenbergMarquardt: minimises Rosenbrock's function written as residuals",
          "[engine]") {
  // Residuals r0 = 10 (p1 - p0^2), r1 = 1 - p0 at "x" = 0 and 1; minimum at (1, 1), cost 0
  // (Moré, Garbow & Hillstrom 1981, problem 1, standard start (-1.2, 1)).
  LambdaModel model(
      {"a", "b"},
      [](double x, const double* p) { return x == 0 ? 10 * (p[1] - p[0] * p[0]) : 1 - p[0]; },
      [](double x, const double* p, double* g) {
        g[0] = x == 0 ? -20 * p[0] : -1;
        g[1] = x == 0 ? 10 : 0;
      });
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors = Eigen::MatrixXd(2, 1);
  problem.data.predictors << 0, 1;
  problem.data.response = Eigen::VectorXd::Zero(2);
  const LocalFitSummary summary =
      MinimizeLevenbergMarquardt(problem, Vec({-1.2, 1}), LevenbergMarquardtOptions{});
  INFO(summary.FullReport());
  CHECK(summary.termination == Termination::kCostConverged);
  CHECK(summary.parameters[0] == Approx(1).epsilon(kTight));
  CHECK(summary.parameters[1] == Approx(1).epsilon(kTight));
}

TEST_CASE("LevenbergMarquardt: bounds are honoured exactly at a constrained optimum",
          "[engine]") {
  const LambdaModel model = ExpDecay();
  Problem problem = MakeProblem(model, [](double x) { return 5 * std::exp(-0.7 * x); }, 40, 0.01);
  problem.lower = Vec({0, 1.0});
  problem.upper = Vec({4.0, 10});
  const LocalFitSummary summary =
      MinimizeLevenbergMarquardt(problem, Vec({2, 2}), LevenbergMarquardtOptions{});
  INFO(summary.FullReport());
  REQUIRE(summary.IsConverged());
  CHECK(summary.parameters[0] <= 4.0);
  CHECK(summary.parameters[1] >= 1.0);
  // The unconstrained optimum lies outside the box, so the rate stops on its bound.
  CHECK(summary.parameters[1] == 1.0);
  for (Eigen::Index j = 0; j < 2; ++j) {
    CHECK(summary.parameters[j] >= problem.lower[j]);
    CHECK(summary.parameters[j] <= problem.upper[j]);
  }
}

TEST_CASE("LevenbergMarquardt: a fixed parameter keeps its start value", "[engine]") {
  const LambdaModel model = ExpDecay();
  Problem problem = MakeProblem(model, [](double x) { return 5 * std::exp(-0.7 * x); }, 40, 0);
  problem.is_fixed = {false, true};
  const LocalFitSummary summary =
      MinimizeLevenbergMarquardt(problem, Vec({1, 0.7}), LevenbergMarquardtOptions{});
  REQUIRE(summary.IsConverged());
  CHECK(summary.parameters[1] == 0.7);
  CHECK(summary.parameters[0] == Approx(5).epsilon(kTight));
}

TEST_CASE("LevenbergMarquardt: edge cases give their exact termination reasons", "[engine]") {
  const LambdaModel model = ExpDecay();
  Problem problem = MakeProblem(model, [](double x) { return 5 * std::exp(-0.7 * x); }, 40, 0.05);
  LevenbergMarquardtOptions options;

  SECTION("a perfect fit with zero residual") {
    Problem exact = MakeProblem(model, [](double x) { return 5 * std::exp(-0.7 * x); }, 40, 0);
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(exact, Vec({5, 0.7}), options);
    CHECK(summary.termination == Termination::kCostConverged);
    CHECK(summary.final_cost == 0);
    CHECK(summary.message == "residual is exactly zero");
  }
  SECTION("all parameters fixed") {
    problem.is_fixed = {true, true};
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(problem, Vec({4, 0.5}), options);
    CHECK(summary.termination == Termination::kNoFreeParameters);
    CHECK(summary.num_iterations == 0);
    CHECK(summary.final_cost == summary.initial_cost);
  }
  SECTION("non-finite model at the start") {
    LambdaModel broken({"a", "b"}, [](double, const double* p) { return std::log(p[0]) + p[1]; },
                       [](double, const double* p, double* g) {
                         g[0] = 1 / p[0];
                         g[1] = 1;
                       });
    Problem bad = MakeProblem(broken, [](double) { return 1.0; }, 10, 0);
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(bad, Vec({-1, 0}), options);
    CHECK(summary.termination == Termination::kNonFiniteModel);
  }
  SECTION("iteration limit") {
    options.max_iterations = 2;
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(problem, Vec({1, 3}), options);
    CHECK(summary.termination == Termination::kIterationLimit);
    CHECK(summary.num_iterations == 2);
  }
  SECTION("evaluation limit") {
    options.max_evaluations = 3;
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(problem, Vec({1, 3}), options);
    CHECK(summary.termination == Termination::kEvaluationLimit);
    CHECK(summary.num_evaluations == 3);
  }
  SECTION("cancelled by the callback") {
    options.callback = [](int iteration, double) { return iteration < 1; };
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(problem, Vec({1, 3}), options);
    CHECK(summary.termination == Termination::kCancelled);
  }
  SECTION("deadline") {
    options.deadline_seconds = 1e-12;
    const LocalFitSummary summary = MinimizeLevenbergMarquardt(problem, Vec({1, 3}), options);
    CHECK(summary.termination == Termination::kDeadline);
  }
}

TEST_CASE("LevenbergMarquardt: steps into a region where the model is undefined are rejected",
          "[engine]") {
  // sqrt(p0) is NaN for p0 < 0; the optimum p0 = 0.04 is close to that edge.
  LambdaModel model(
      {"a", "b"}, [](double x, const double* p) { return std::sqrt(p[0]) * x + p[1]; },
      [](double x, const double* p, double* g) {
        g[0] = 0.5 * x / std::sqrt(p[0]);
        g[1] = 1;
      });
  Problem problem = MakeProblem(model, [](double x) { return 0.2 * x + 1; }, 30, 0);
  const LocalFitSummary summary =
      MinimizeLevenbergMarquardt(problem, Vec({9, 0}), LevenbergMarquardtOptions{});
  INFO(summary.FullReport());
  REQUIRE(summary.IsConverged());
  CHECK(summary.parameters[0] == Approx(0.04).epsilon(1e-6));
}

TEST_CASE("LevenbergMarquardt: geodesic acceleration reaches the same optimum", "[engine]") {
  const LambdaModel model = ExpDecay();
  Problem problem = MakeProblem(model, [](double x) { return 5 * std::exp(-0.7 * x); }, 40, 0.02);
  LevenbergMarquardtOptions plain;
  LevenbergMarquardtOptions accelerated;
  accelerated.use_geodesic_acceleration = true;
  const LocalFitSummary a = MinimizeLevenbergMarquardt(problem, Vec({1, 3}), plain);
  const LocalFitSummary b = MinimizeLevenbergMarquardt(problem, Vec({1, 3}), accelerated);
  REQUIRE(a.IsConverged());
  REQUIRE(b.IsConverged());
  CHECK(b.final_cost == Approx(a.final_cost).epsilon(1e-12));
  CHECK(b.parameters[1] == Approx(a.parameters[1]).epsilon(1e-8));
}

TEST_CASE("LevenbergMarquardtOptions: Validate names the field, the value and the rule",
          "[engine]") {
  LevenbergMarquardtOptions options;
  std::string error;
  CHECK(options.Validate(&error));
  options.max_iterations = -1;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "max_iterations = -1: must be >= 0");
  options = LevenbergMarquardtOptions{};
  options.deadline_seconds = 0;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "deadline_seconds = 0: must be > 0");
}

TEST_CASE("Termination: strings round-trip", "[engine]") {
  for (Termination t : {Termination::kCostConverged, Termination::kStepConverged,
                        Termination::kGradientConverged, Termination::kIterationLimit,
                        Termination::kEvaluationLimit, Termination::kNonFiniteModel,
                        Termination::kDeadline, Termination::kCancelled,
                        Termination::kNoFreeParameters}) {
    Termination parsed;
    REQUIRE(TerminationFromString(ToString(t), &parsed));
    CHECK(parsed == t);
  }
  Termination parsed;
  CHECK_FALSE(TerminationFromString("converged", &parsed));
}

}  // namespace
}  // namespace foothold
