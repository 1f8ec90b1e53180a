// ProjectedModel: the split rules, the linear solve, Kaufman's Jacobian and the recovery of
// the full parameter vector.

#include "engine/solve/variable_projection.h"

#include <catch2/catch.hpp>
#include <cmath>
#include <memory>

#include "engine/model/expression_model.h"
#include "engine/model/families/families.h"
#include "engine/solve/levenberg_marquardt.h"

namespace foothold {
namespace {

// Central differences of a smooth function of order-1 parameters: error ~ h^2.
constexpr double kDifferenceStep = 1e-6;
constexpr double kJacobianTolerance = 1e-6;
// Linear algebra on well-conditioned order-1 data.
constexpr double kSolveTolerance = 1e-10;

Problem BiexpProblem(const Model& model, const Eigen::VectorXd& truth, double noise) {
  Problem problem;
  problem.model = &model;
  const int n = 60;
  problem.data.predictor_names = {"x"};
  problem.data.predictors.resize(n, 1);
  for (int i = 0; i < n; ++i) problem.data.predictors(i, 0) = 0.25 * i;
  problem.data.response.resize(n);
  model.Evaluate(problem.data.predictors, truth.data(), problem.data.response.data());
  for (int i = 0; i < n; ++i) problem.data.response[i] += noise * std::sin(7.3 * i);
  return problem;
}

Eigen::VectorXd Biexp(double a1, double t1, double a2, double t2, double b) {
  Eigen::VectorXd v(5);
  v << a1, t1, a2, t2, b;
  return v;
}

TEST_CASE("SplitForProjection: free unbounded linear parameters are projected", "[engine]") {
  BiexpDecayModel model;
  Problem problem = BiexpProblem(model, Biexp(3, 0.5, 1.5, 4, 0.2), 0);
  ProjectionSplit split = SplitForProjection(problem);
  CHECK(split.Applies());
  CHECK(split.linear == std::vector<int>{0, 2, 4});
  CHECK(split.nonlinear == std::vector<int>{1, 3});

  problem.lower = Eigen::VectorXd::Constant(5, -INFINITY);
  problem.upper = Eigen::VectorXd::Constant(5, INFINITY);
  problem.upper[0] = 10;  // a finite bound makes amplitude1 nonlinear for the projection
  problem.is_fixed = {false, false, false, false, true};
  split = SplitForProjection(problem);
  CHECK(split.linear == std::vector<int>{2});
  CHECK(split.nonlinear == std::vector<int>{0, 1, 3, 4});

  problem.is_fixed = {false, true, false, true, false};
  problem.upper[0] = INFINITY;
  CHECK(SplitForProjection(problem).not_applicable ==
        "no free nonlinear parameter: the problem is linear");
}

TEST_CASE("ProjectedModel: the linear solve makes the residual orthogonal to the basis",
          "[engine]") {
  BiexpDecayModel model;
  const Problem problem = BiexpProblem(model, Biexp(3, 0.5, 1.5, 4, 0.2), 0.01);
  const ProjectionSplit split = SplitForProjection(problem);
  ProjectedModel projected(problem, split, Eigen::VectorXd::Zero(5));
  const Problem reduced = MakeProjectedProblem(problem, projected);
  const Eigen::Vector2d theta(0.7, 3.0);
  Eigen::VectorXd values(problem.data.NumPoints());
  projected.Evaluate(reduced.data.predictors, theta.data(), values.data());
  const Eigen::VectorXd residual = values - reduced.data.response;

  Eigen::VectorXd full;
  REQUIRE(projected.Expand(theta.data(), &full));
  CHECK(full[1] == 0.7);
  CHECK(full[3] == 3.0);
  Eigen::VectorXd f(problem.data.NumPoints());
  Eigen::MatrixXd jacobian(problem.data.NumPoints(), 5);
  model.EvaluateWithJacobian(problem.data.predictors, full.data(), f.data(), jacobian.data());
  CHECK((f - values).cwiseAbs().maxCoeff() <= kSolveTolerance);
  for (int j : split.linear) {
    CHECK(std::abs(jacobian.col(j).dot(residual)) <= kSolveTolerance * residual.norm());
  }
}

TEST_CASE("ProjectedModel: Kaufman's Jacobian is exact where the residual vanishes", "[engine]") {
  // With noise-free data the residual at the truth is zero and the term Kaufman drops
  // vanishes (Kaufman 1975, section 2), so central differences must agree.
  BiexpDecayModel model;
  const Eigen::VectorXd truth = Biexp(3, 0.5, 1.5, 4, 0.2);
  const Problem problem = BiexpProblem(model, truth, 0);
  ProjectedModel projected(problem, SplitForProjection(problem), truth);
  const int n = problem.data.NumPoints();
  const Eigen::Vector2d theta(0.5, 4.0);
  Eigen::VectorXd values(n);
  Eigen::MatrixXd jacobian(n, 2);
  projected.EvaluateWithJacobian(problem.data.predictors, theta.data(), values.data(),
                                 jacobian.data());
  for (int k = 0; k < 2; ++k) {
    Eigen::Vector2d up = theta, down = theta;
    up[k] += kDifferenceStep;
    down[k] -= kDifferenceStep;
    Eigen::VectorXd f_up(n), f_down(n);
    projected.Evaluate(problem.data.predictors, up.data(), f_up.data());
    projected.Evaluate(problem.data.predictors, down.data(), f_down.data());
    const Eigen::VectorXd numeric = (f_up - f_down) / (2 * kDifferenceStep);
    CHECK((jacobian.col(k) - numeric).cwiseAbs().maxCoeff() <=
          kJacobianTolerance * std::max(1.0, numeric.cwiseAbs().maxCoeff()));
  }
}

TEST_CASE("ProjectedModel: a rank-deficient basis gives a finite basic solution", "[engine]") {
  // tau1 == tau2 makes the two exponentials identical: rank 2 of 3.
  BiexpDecayModel model;
  const Problem problem = BiexpProblem(model, Biexp(3, 0.5, 1.5, 4, 0.2), 0.01);
  ProjectedModel projected(problem, SplitForProjection(problem), Eigen::VectorXd::Zero(5));
  const Eigen::Vector2d theta(2.0, 2.0);
  Eigen::VectorXd values(problem.data.NumPoints());
  Eigen::MatrixXd jacobian(problem.data.NumPoints(), 2);
  projected.EvaluateWithJacobian(problem.data.predictors, theta.data(), values.data(),
                                 jacobian.data());
  CHECK(projected.LastRank() == 2);
  CHECK(values.allFinite());
  CHECK(jacobian.allFinite());
  Eigen::VectorXd full;
  REQUIRE(projected.Expand(theta.data(), &full));
  CHECK(full.allFinite());
}

TEST_CASE("ProjectedModel: a non-finite model gives NaN values, not a crash", "[engine]") {
  BiexpDecayModel model;
  const Problem problem = BiexpProblem(model, Biexp(3, 0.5, 1.5, 4, 0.2), 0);
  ProjectedModel projected(problem, SplitForProjection(problem), Eigen::VectorXd::Zero(5));
  const Eigen::Vector2d theta(0.0, 4.0);  // tau1 = 0: NaN
  Eigen::VectorXd values(problem.data.NumPoints());
  projected.Evaluate(problem.data.predictors, theta.data(), values.data());
  CHECK_FALSE(values.allFinite());
  Eigen::VectorXd full;
  CHECK_FALSE(projected.Expand(theta.data(), &full));
}

TEST_CASE("ProjectedModel: sigma weights whiten the data and the basis", "[engine]") {
  ExpDecayModel model;
  Eigen::Vector3d truth(2, 1.5, 0.3);
  Problem problem;
  problem.model = &model;
  const int n = 40;
  problem.data.predictor_names = {"x"};
  problem.data.predictors.resize(n, 1);
  problem.data.response.resize(n);
  problem.data.sigma.resize(n);
  for (int i = 0; i < n; ++i) problem.data.predictors(i, 0) = 0.2 * i;
  model.Evaluate(problem.data.predictors, truth.data(), problem.data.response.data());
  for (int i = 0; i < n; ++i) {
    problem.data.sigma[i] = 0.05 + 0.01 * i;
    problem.data.response[i] += problem.data.sigma[i] * std::cos(3.1 * i);
  }
  ProjectedModel projected(problem, SplitForProjection(problem), Eigen::VectorXd::Zero(3));
  const Problem reduced = MakeProjectedProblem(problem, projected);
  CHECK_FALSE(reduced.data.HasSigma());
  const LocalFitSummary fit =
      MinimizeLevenbergMarquardt(reduced, Eigen::VectorXd::Constant(1, 1.0), {});
  REQUIRE(fit.IsConverged());
  Eigen::VectorXd full;
  REQUIRE(projected.Expand(fit.parameters.data(), &full));
  // The weighted full problem from the recovered point is already stationary.
  const LocalFitSummary check = MinimizeLevenbergMarquardt(problem, full, {});
  CHECK(std::abs(check.final_cost - fit.final_cost) <= kSolveTolerance * fit.final_cost);
  CHECK(std::abs(check.parameters[1] - full[1]) <= 1e-6 * full[1]);
}

TEST_CASE("ProjectedModel: a clone evaluates the same values independently", "[engine]") {
  std::unique_ptr<Model> expression(
      ParseExpressionModel("a*exp(-k*x) + b", {"x"}, {}, ExpressionOptions(), nullptr));
  REQUIRE(expression);
  Problem problem;
  problem.model = expression.get();
  problem.data.predictor_names = {"x"};
  problem.data.predictors = Eigen::VectorXd::LinSpaced(20, 0, 5);
  problem.data.response = (-0.8 * problem.data.predictors.array()).exp().matrix();
  ProjectedModel projected(problem, SplitForProjection(problem), Eigen::VectorXd::Zero(3));
  CHECK(projected.ParameterNames() == std::vector<std::string>{"k"});
  std::unique_ptr<Model> clone = projected.Clone();
  const double theta = 0.8;
  Eigen::VectorXd a(20), b(20);
  projected.Evaluate(problem.data.predictors, &theta, a.data());
  clone->Evaluate(problem.data.predictors, &theta, b.data());
  CHECK(a == b);
  CHECK((a - problem.data.response).cwiseAbs().maxCoeff() <= kSolveTolerance);
}

}  // namespace
}  // namespace foothold
