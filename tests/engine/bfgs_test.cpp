// BFGS with the Wolfe line search and bounds by projection (engine/solve/bfgs.h).

#include "engine/solve/bfgs.h"

#include <catch2/catch.hpp>
#include <cmath>

namespace foothold {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

// Rosenbrock's function 100 (x2 - x1^2)^2 + (1 - x1)^2, minimum 0 at (1, 1), standard start
// (-1.2, 1) (Moré, Garbow & Hillstrom 1981, problem 1).
bool Rosenbrock(const Eigen::VectorXd& x, double* f, Eigen::VectorXd* g) {
  const double a = x[1] - x[0] * x[0];
  const double b = 1 - x[0];
  *f = 100 * a * a + b * b;
  g->resize(2);
  (*g)[0] = -400 * a * x[0] - 2 * b;
  (*g)[1] = 200 * a;
  return true;
}

TEST_CASE("Bfgs: reaches the Rosenbrock minimum from the standard start", "[engine]") {
  const BfgsSummary result =
      MinimizeBfgs(Rosenbrock, Eigen::Vector2d(-1.2, 1), Eigen::Vector2d(-kInf, -kInf),
                   Eigen::Vector2d(kInf, kInf), Eigen::MatrixXd(), {});
  INFO(result.message);
  CHECK(std::abs(result.x[0] - 1) < 1e-6);
  CHECK(std::abs(result.x[1] - 1) < 1e-6);
  CHECK(result.final_value < 1e-12);
  CHECK(result.message.rfind("bfgs: ", 0) == 0);
}

TEST_CASE("Bfgs: a bound that cuts off the minimum holds the variable on it", "[engine]") {
  // With x1 <= 0.5 the constrained minimum of Rosenbrock lies on x1 = 0.5, x2 = 0.25 (the
  // valley floor x2 = x1^2, where the x1-gradient -2(1 - x1) pushes outwards).
  const BfgsSummary result =
      MinimizeBfgs(Rosenbrock, Eigen::Vector2d(-1.2, 1), Eigen::Vector2d(-kInf, -kInf),
                   Eigen::Vector2d(0.5, kInf), Eigen::MatrixXd(), {});
  INFO(result.message);
  CHECK(result.x[0] == 0.5);
  CHECK(std::abs(result.x[1] - 0.25) < 1e-7);
  CHECK(IsConverged(result.termination));
}

TEST_CASE("Bfgs: a non-finite start and bad options", "[engine]") {
  auto nan_objective = [](const Eigen::VectorXd&, double* f, Eigen::VectorXd* g) {
    *f = std::nan("");
    *g = Eigen::VectorXd::Zero(1);
    return true;
  };
  const BfgsSummary result =
      MinimizeBfgs(nan_objective, Eigen::VectorXd::Zero(1), Eigen::VectorXd::Constant(1, -kInf),
                   Eigen::VectorXd::Constant(1, kInf), Eigen::MatrixXd(), {});
  CHECK(result.termination == Termination::kNonFiniteModel);
  BfgsOptions options;
  options.wolfe_c2 = 1e-5;
  std::string error;
  CHECK_FALSE(options.Validate(&error));
  CHECK(error == "wolfe_c1 = 0.0001, wolfe_c2 = 1e-05: must satisfy 0 < wolfe_c1 < wolfe_c2 < 1");
}

}  // namespace
}  // namespace foothold
