// Gauss–Newton with the Armijo line search (engine/solve/gauss_newton.h).

#include "engine/solve/gauss_newton.h"

#include <catch2/catch.hpp>

#include "engine/model/families/families.h"

namespace foothold {
namespace {

Problem LineProblem(const LineModel& model) {
  Problem problem;
  problem.model = &model;
  problem.data.predictor_names = {"x"};
  problem.data.predictors.resize(4, 1);
  problem.data.predictors << 0, 1, 2, 3;
  problem.data.response.resize(4);
  problem.data.response << 1.1, 2.9, 5.2, 6.8;
  return problem;
}

TEST_CASE("GaussNewton: a linear model is solved by the first full step", "[engine]") {
  LineModel model;
  const Problem problem = LineProblem(model);
  const LocalFitSummary fit =
      MinimizeGaussNewton(problem, Eigen::Vector2d(0, 0), GaussNewtonOptions{});
  // Least-squares line through the four points by the normal equations (worked by hand):
  // sum xy = 0 + 2.9 + 10.4 + 20.4 = 33.7, xbar = 1.5, ybar = 16 / 4 = 4, sum x^2 = 14, so
  // slope = (sum xy - n xbar ybar) / (sum x^2 - n xbar^2) = (33.7 - 24) / (14 - 9) = 1.94 and
  // intercept = ybar - slope xbar = 4 - 2.91 = 1.09.
  CHECK(fit.parameters[0] == Approx(1.94).epsilon(1e-12));
  CHECK(fit.parameters[1] == Approx(1.09).epsilon(1e-12));
  CHECK(fit.IsConverged());
  CHECK(fit.message.rfind("gauss-newton: ", 0) == 0);
}

TEST_CASE("GaussNewton: bounds, fixed parameters and non-finite starts", "[engine]") {
  LineModel model;
  Problem problem = LineProblem(model);
  problem.lower = Eigen::Vector2d(-10, 1.5);
  problem.upper = Eigen::Vector2d(10, 10);
  const LocalFitSummary bounded =
      MinimizeGaussNewton(problem, Eigen::Vector2d(0, 2), GaussNewtonOptions{});
  CHECK(bounded.parameters[1] == 1.5);  // the intercept is held at its lower bound
  CHECK(bounded.parameters[0] > 1.7);
  problem.lower.resize(0);
  problem.upper.resize(0);
  problem.is_fixed = {true, true};
  CHECK(MinimizeGaussNewton(problem, Eigen::Vector2d(1, 1), GaussNewtonOptions{}).termination ==
        Termination::kNoFreeParameters);
  GaussianModel gaussian;
  Problem peak = problem;
  peak.model = &gaussian;
  peak.is_fixed.clear();
  CHECK(MinimizeGaussNewton(peak, Eigen::Vector4d(1, 0, 0, 0), GaussNewtonOptions{}).termination ==
        Termination::kNonFiniteModel);  // sigma = 0 gives NaN
  GaussNewtonOptions bad;
  bad.armijo_c1 = 1.5;
  std::string error;
  CHECK_FALSE(bad.Validate(&error));
  CHECK(error == "armijo_c1 = 1.5: must be in (0, 1)");
}

}  // namespace
}  // namespace foothold
